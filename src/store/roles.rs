//! The three roles of a shop on a database server, enforced by the server itself: their
//! creation and rights (`GRANT`s on the shop's tables) and which of them the signed-in user
//! holds.
//!
//! * technician: reads everything; adds checks, samples, events and acknowledgements of flags.
//! * engineer: the technician's rights, and also keeps the register (machines, units, fluids),
//!   baselines, limits and settings, and corrects or withdraws stored readings.
//! * supervisor: reads everything, for reports; adds acknowledgements (the sign-off of a flag).
//!
//! Users are ordinary server logins, each granted one of the roles. The edit history is
//! written by the schema's triggers with the schema owner's rights, so no role can write or
//! change it directly. A shop file has no roles: whoever can write the file can do everything.

use super::db::params;
use super::{Store, StoreError};

/// One of the shop's roles on a server.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ShopRole {
    Technician,
    Engineer,
    Supervisor,
}

impl ShopRole {
    pub const ALL: [ShopRole; 3] = [
        ShopRole::Technician,
        ShopRole::Engineer,
        ShopRole::Supervisor,
    ];

    /// The server role's name.
    pub fn role_name(self) -> &'static str {
        match self {
            ShopRole::Technician => "sumpbook_technician",
            ShopRole::Engineer => "sumpbook_engineer",
            ShopRole::Supervisor => "sumpbook_supervisor",
        }
    }

    pub fn as_str(self) -> &'static str {
        match self {
            ShopRole::Technician => "technician",
            ShopRole::Engineer => "engineer",
            ShopRole::Supervisor => "supervisor",
        }
    }

    /// What the role may do, in the user's words.
    pub fn may(self) -> &'static str {
        match self {
            ShopRole::Technician => {
                "read everything; log checks, samples and events; acknowledge flags"
            }
            ShopRole::Engineer => {
                "what a technician may, and keep machines, units, fluids, baselines, limits and \
                 settings; correct or withdraw stored readings"
            }
            ShopRole::Supervisor => {
                "read everything and write reports; acknowledge (sign off) flags"
            }
        }
    }

    /// The table rights beyond reading everything.
    fn grants(self) -> &'static [(&'static str, &'static str)] {
        // Whoever imports files keeps the column mappings they need; whoever evaluates a unit
        // first keeps its evaluation for the others (`kept`).
        const LOG: [(&str, &str); 6] = [
            ("INSERT, UPDATE, DELETE", "kept_evaluations"),
            ("INSERT", "checks"),
            ("INSERT", "samples"),
            ("INSERT", "events"),
            ("INSERT", "acknowledgements"),
            ("INSERT, UPDATE", "import_profiles"),
        ];
        const ENGINEER: [(&str, &str); 15] = [
            ("INSERT, UPDATE, DELETE", "kept_evaluations"),
            ("INSERT", "checks"),
            ("INSERT", "samples"),
            ("INSERT", "events"),
            ("INSERT", "acknowledgements"),
            ("UPDATE, DELETE", "checks"),
            ("UPDATE, DELETE", "samples"),
            ("UPDATE, DELETE", "events"),
            ("INSERT, UPDATE", "machines"),
            ("INSERT, UPDATE", "units"),
            ("INSERT, UPDATE", "fluids"),
            ("INSERT, DELETE", "manual_baselines"),
            ("INSERT, UPDATE, DELETE", "limits"),
            ("UPDATE", "settings"),
            ("INSERT, UPDATE", "import_profiles"),
        ];
        const SUPERVISOR: [(&str, &str); 2] = [
            ("INSERT", "acknowledgements"),
            ("INSERT, UPDATE, DELETE", "kept_evaluations"),
        ];
        match self {
            ShopRole::Technician => &LOG,
            ShopRole::Engineer => &ENGINEER,
            ShopRole::Supervisor => &SUPERVISOR,
        }
    }
}

impl std::str::FromStr for ShopRole {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        ShopRole::ALL
            .into_iter()
            .find(|r| r.as_str() == s.trim())
            .ok_or_else(|| format!("`{s}` is not a role: technician, engineer or supervisor"))
    }
}

fn server_only() -> StoreError {
    StoreError::Refused(
        "roles exist on a database server only; a shop file has none (whoever can write the file can do everything)"
            .into(),
    )
}

/// A role or login name as an SQL name: letters, digits and `_` only.
fn sql_name(name: &str) -> Result<&str, StoreError> {
    let ok = !name.is_empty()
        && name.len() <= 63
        && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
        && !name.starts_with(|c: char| c.is_ascii_digit());
    if ok {
        Ok(name)
    } else {
        Err(StoreError::Invalid {
            field: "login".into(),
            reason: "use letters, digits and _ only, not starting with a digit".into(),
        })
    }
}

impl Store {
    /// Creates the three roles where missing and gives each its rights on this shop's tables
    /// (run by the owner of the shop's database; running it again changes nothing).
    pub fn create_roles(&self) -> Result<(), StoreError> {
        if !self.is_server() {
            return Err(server_only());
        }
        // The server only warns when someone without the right grants nothing: ask first.
        let owner: i64 = self.query_one(
            "SELECT count(*) FROM pg_tables WHERE schemaname = current_schema() AND tablename = 'checks' \
             AND (tableowner = current_user OR (SELECT rolsuper FROM pg_roles WHERE rolname = current_user))",
            params![],
            |r| r.get(0),
        )?;
        if owner == 0 {
            return Err(StoreError::NotAllowed(
                "only the owner of the shop's tables creates the roles".into(),
            ));
        }
        let tx = self.begin_as(true)?;
        for role in ShopRole::ALL {
            let name = role.role_name();
            let exists: i64 = self.query_one(
                "SELECT count(*) FROM pg_roles WHERE rolname = ?1",
                params![name],
                |r| r.get(0),
            )?;
            if exists == 0 {
                self.db.batch(&format!("CREATE ROLE {name} NOLOGIN"))?;
            }
            self.db.batch(&format!(
                "GRANT USAGE ON SCHEMA public TO {name}; \
                 GRANT SELECT ON ALL TABLES IN SCHEMA public TO {name}; \
                 GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO {name}"
            ))?;
            for (rights, table) in role.grants() {
                self.db
                    .batch(&format!("GRANT {rights} ON {table} TO {name}"))?;
            }
        }
        tx.commit()
    }

    /// Gives the server login `login` one shop role (and takes away the other two).
    pub fn grant_role(&self, login: &str, role: ShopRole) -> Result<(), StoreError> {
        if !self.is_server() {
            return Err(server_only());
        }
        let login = sql_name(login.trim())?;
        let tx = self.begin()?;
        for other in ShopRole::ALL.into_iter().filter(|r| *r != role) {
            self.db
                .batch(&format!("REVOKE {} FROM {login}", other.role_name()))?;
        }
        self.db
            .batch(&format!("GRANT {} TO {login}", role.role_name()))?;
        tx.commit()
    }

    /// The shop roles the signed-in user holds on the server (directly or through another
    /// role); `None` on a shop file, where there are no roles.
    pub fn signed_in_roles(&self) -> Result<Option<(String, Vec<ShopRole>)>, StoreError> {
        if !self.is_server() {
            return Ok(None);
        }
        let user: String = self.query_one("SELECT current_user::text", params![], |r| r.get(0))?;
        let mut held = Vec::new();
        for role in ShopRole::ALL {
            let has: i64 = self.query_one(
                "SELECT count(*) FROM pg_roles WHERE rolname = ?1 AND pg_has_role(current_user, oid, 'MEMBER')",
                params![role.role_name()],
                |r| r.get(0),
            )?;
            if has > 0 {
                held.push(role);
            }
        }
        Ok(Some((user, held)))
    }
}
