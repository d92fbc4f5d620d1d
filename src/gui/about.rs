//! About adapter: version, the database file and its schema version.

use std::rc::Rc;

use slint::ComponentHandle;

use super::s;
use super::ui::AboutAdapter;
use super::Ctx;

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<AboutAdapter>();
    a.set_version(s(env!("CARGO_PKG_VERSION")));
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<AboutAdapter>();
    a.set_db_path(s(ctx.db_path.display().to_string()));
    a.set_schema(s(match ctx.shop.schema_version() {
        Ok(v) => format!("{v}"),
        Err(e) => e.to_string(),
    }));
}
