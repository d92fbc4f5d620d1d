//! The backend-neutral layer under the store: one connection to either an SQLite file or a
//! PostgreSQL server, with execute / query / transaction over one parameter type ([`ToDb`]) and
//! one row type ([`Row`]).
//!
//! The store's functions are written once against this layer, in SQL both engines accept; the
//! few places where the two dialects differ are here, one function each: placeholders (`?N` is
//! rewritten to `$N` for the server), the id of a new row (`last_insert_rowid` or `RETURNING`),
//! taking the write lock, undoing one failed statement inside a transaction (the server aborts
//! the whole transaction on any error), who-and-why of an edit (a row of `edit_context` or
//! transaction-local server settings) and the change stamp. Error codes are mapped to
//! [`StoreError`] in `errors`. It knows no table of the shop and holds no rule of it.

use std::cell::{RefCell, RefMut};
use std::collections::HashMap;

use postgres::fallible_iterator::FallibleIterator;
use postgres::types::{IsNull, ToSql as PgToSql, Type};

use super::StoreError;

/// One bound value, borrowed from the caller.
#[derive(Clone, Copy, Debug)]
pub(crate) enum Value<'a> {
    Null,
    Int(i64),
    Real(f64),
    Text(&'a str),
}

/// A value that can be bound to a placeholder of either backend.
pub(crate) trait ToDb {
    fn to_db(&self) -> Value<'_>;
}

impl ToDb for i64 {
    fn to_db(&self) -> Value<'_> {
        Value::Int(*self)
    }
}
impl ToDb for i32 {
    fn to_db(&self) -> Value<'_> {
        Value::Int(i64::from(*self))
    }
}
impl ToDb for u32 {
    fn to_db(&self) -> Value<'_> {
        Value::Int(i64::from(*self))
    }
}
impl ToDb for f64 {
    fn to_db(&self) -> Value<'_> {
        Value::Real(*self)
    }
}
impl ToDb for str {
    fn to_db(&self) -> Value<'_> {
        Value::Text(self)
    }
}
impl ToDb for String {
    fn to_db(&self) -> Value<'_> {
        Value::Text(self)
    }
}
impl<T: ToDb + ?Sized> ToDb for &T {
    fn to_db(&self) -> Value<'_> {
        (**self).to_db()
    }
}
impl<T: ToDb> ToDb for Option<T> {
    fn to_db(&self) -> Value<'_> {
        match self {
            Some(v) => v.to_db(),
            None => Value::Null,
        }
    }
}

/// `params![a, b]`: a slice of values to bind, in placeholder order.
macro_rules! params {
    () => { &[] as &[&dyn $crate::store::db::ToDb] };
    ($($x:expr),+ $(,)?) => { &[$(&$x as &dyn $crate::store::db::ToDb),+] as &[&dyn $crate::store::db::ToDb] };
}
pub(crate) use params;

impl rusqlite::ToSql for Value<'_> {
    fn to_sql(&self) -> rusqlite::Result<rusqlite::types::ToSqlOutput<'_>> {
        use rusqlite::types::{ToSqlOutput, ValueRef};
        Ok(ToSqlOutput::Borrowed(match *self {
            Value::Null => ValueRef::Null,
            Value::Int(i) => ValueRef::Integer(i),
            Value::Real(f) => ValueRef::Real(f),
            Value::Text(s) => ValueRef::Text(s.as_bytes()),
        }))
    }
}

impl PgToSql for Value<'_> {
    fn to_sql(
        &self,
        ty: &Type,
        out: &mut postgres::types::private::BytesMut,
    ) -> Result<IsNull, Box<dyn std::error::Error + Sync + Send>> {
        // The server infers each placeholder's type from the column it meets; a whole number
        // bound to a REAL column (or the other way round) is converted here, as SQLite would.
        match (*self, ty) {
            (Value::Null, _) => Ok(IsNull::Yes),
            (Value::Int(i), &Type::INT8) => i.to_sql(ty, out),
            (Value::Int(i), &Type::INT4) => i32::try_from(i)?.to_sql(ty, out),
            (Value::Int(i), &Type::INT2) => i16::try_from(i)?.to_sql(ty, out),
            (Value::Int(i), &Type::FLOAT8) => (i as f64).to_sql(ty, out),
            (Value::Int(i), &Type::BOOL) => (i != 0).to_sql(ty, out),
            (Value::Real(f), &Type::FLOAT8) => f.to_sql(ty, out),
            (Value::Real(f), &Type::FLOAT4) => (f as f32).to_sql(ty, out),
            (Value::Text(s), _) => s.to_sql(ty, out),
            (Value::Int(i), _) => i.to_string().as_str().to_sql(ty, out),
            (Value::Real(f), _) => f.to_string().as_str().to_sql(ty, out),
        }
    }

    fn accepts(_ty: &Type) -> bool {
        true
    }

    postgres::types::to_sql_checked!();
}

/// One result row of either backend.
pub(crate) enum Row<'a> {
    Lite(&'a rusqlite::Row<'a>),
    Pg(&'a postgres::Row),
}

/// A column type that can be read from a row of either backend.
pub(crate) trait FromDb: Sized {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError>;
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError>;
}

fn pg_col_err(e: postgres::Error) -> StoreError {
    StoreError::Corrupt(e.to_string())
}

fn pg_int(r: &postgres::Row, i: usize) -> Result<Option<i64>, StoreError> {
    let ty = r.columns().get(i).map(|c| c.type_().clone());
    match ty {
        Some(Type::INT4) => Ok(r
            .try_get::<_, Option<i32>>(i)
            .map_err(pg_col_err)?
            .map(i64::from)),
        Some(Type::INT2) => Ok(r
            .try_get::<_, Option<i16>>(i)
            .map_err(pg_col_err)?
            .map(i64::from)),
        Some(Type::BOOL) => Ok(r
            .try_get::<_, Option<bool>>(i)
            .map_err(pg_col_err)?
            .map(i64::from)),
        _ => r.try_get::<_, Option<i64>>(i).map_err(pg_col_err),
    }
}

fn pg_real(r: &postgres::Row, i: usize) -> Result<Option<f64>, StoreError> {
    let ty = r.columns().get(i).map(|c| c.type_().clone());
    match ty {
        Some(Type::FLOAT8) => r.try_get::<_, Option<f64>>(i).map_err(pg_col_err),
        Some(Type::FLOAT4) => Ok(r
            .try_get::<_, Option<f32>>(i)
            .map_err(pg_col_err)?
            .map(f64::from)),
        _ => Ok(pg_int(r, i)?.map(|v| v as f64)),
    }
}

fn null_in(i: usize) -> StoreError {
    StoreError::Corrupt(format!("column {i} holds no value where one is required"))
}

impl FromDb for Option<i64> {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError> {
        r.get(i).map_err(StoreError::from)
    }
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError> {
        pg_int(r, i)
    }
}
impl FromDb for i64 {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError> {
        r.get(i).map_err(StoreError::from)
    }
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError> {
        pg_int(r, i)?.ok_or_else(|| null_in(i))
    }
}
impl FromDb for Option<u32> {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError> {
        r.get(i).map_err(StoreError::from)
    }
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError> {
        pg_int(r, i)?
            .map(|v| u32::try_from(v).map_err(|_| StoreError::Corrupt(format!("{v} out of range"))))
            .transpose()
    }
}
impl FromDb for Option<f64> {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError> {
        r.get(i).map_err(StoreError::from)
    }
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError> {
        pg_real(r, i)
    }
}
impl FromDb for f64 {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError> {
        r.get(i).map_err(StoreError::from)
    }
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError> {
        pg_real(r, i)?.ok_or_else(|| null_in(i))
    }
}
impl FromDb for bool {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError> {
        r.get(i).map_err(StoreError::from)
    }
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError> {
        Ok(pg_int(r, i)?.ok_or_else(|| null_in(i))? != 0)
    }
}
impl FromDb for Option<String> {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError> {
        r.get(i).map_err(StoreError::from)
    }
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError> {
        r.try_get(i).map_err(pg_col_err)
    }
}
impl FromDb for String {
    fn lite(r: &rusqlite::Row<'_>, i: usize) -> Result<Self, StoreError> {
        r.get(i).map_err(StoreError::from)
    }
    fn pg(r: &postgres::Row, i: usize) -> Result<Self, StoreError> {
        Option::<String>::pg(r, i)?.ok_or_else(|| null_in(i))
    }
}

impl Row<'_> {
    pub(crate) fn get<T: FromDb>(&self, i: usize) -> Result<T, StoreError> {
        match self {
            Row::Lite(r) => T::lite(r, i),
            Row::Pg(r) => T::pg(r, i),
        }
    }

    /// A text column read in place, without copying it: `None` for NULL.
    pub(crate) fn text(&self, i: usize) -> Result<Option<&str>, StoreError> {
        match self {
            Row::Lite(r) => {
                use rusqlite::types::ValueRef;
                match r.get_ref(i)? {
                    ValueRef::Null => Ok(None),
                    v @ ValueRef::Text(_) => v
                        .as_str()
                        .map(Some)
                        .map_err(|e| StoreError::Corrupt(e.to_string())),
                    other => Err(StoreError::Corrupt(format!(
                        "column {i} holds {} where text is expected",
                        other.data_type()
                    ))),
                }
            }
            Row::Pg(r) => r.try_get::<_, Option<&str>>(i).map_err(pg_col_err),
        }
    }

    /// Column `i` as an owned value of the common type.
    pub(crate) fn owned(&self, i: usize) -> Result<Owned, StoreError> {
        match self {
            Row::Lite(r) => {
                use rusqlite::types::ValueRef;
                Ok(match r.get_ref(i)? {
                    ValueRef::Null => Owned::Null,
                    ValueRef::Integer(v) => Owned::Int(v),
                    ValueRef::Real(v) => Owned::Real(v),
                    ValueRef::Text(t) => Owned::Text(String::from_utf8_lossy(t).into_owned()),
                    ValueRef::Blob(_) => {
                        return Err(StoreError::Corrupt(format!("column {i} holds a blob")))
                    }
                })
            }
            Row::Pg(r) => {
                let ty = r.columns()[i].type_().clone();
                Ok(match ty {
                    Type::INT8 | Type::INT4 | Type::INT2 | Type::BOOL => {
                        pg_int(r, i)?.map_or(Owned::Null, Owned::Int)
                    }
                    Type::FLOAT8 | Type::FLOAT4 => pg_real(r, i)?.map_or(Owned::Null, Owned::Real),
                    _ => Option::<String>::pg(r, i)?.map_or(Owned::Null, Owned::Text),
                })
            }
        }
    }
}

/// An owned column value (copies between shops, digests).
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Owned {
    Null,
    Int(i64),
    Real(f64),
    Text(String),
}

impl ToDb for Owned {
    fn to_db(&self) -> Value<'_> {
        match self {
            Owned::Null => Value::Null,
            Owned::Int(i) => Value::Int(*i),
            Owned::Real(f) => Value::Real(*f),
            Owned::Text(s) => Value::Text(s),
        }
    }
}

/// A connection to a PostgreSQL server, with its prepared statements kept by SQL text.
///
/// Round trips are what a command on a server mostly waits for (each one waits for the server
/// process to be given a core), so a statement without parameters is sent whole with its one
/// execution (parse, bind, execute: one round trip), and only a statement with parameters is
/// prepared first (a second round trip, once per connection), since its parameters' types are
/// the server's to infer from the columns they meet.
pub(crate) struct PgConn {
    client: RefCell<postgres::Client>,
    cache: RefCell<HashMap<String, postgres::Statement>>,
    /// A call met the loss of the connection: the next one connects again.
    lost: std::cell::Cell<bool>,
    /// Where to connect again when the server went away.
    url: String,
}

/// The channel every write of the shop notifies (the schema's change trigger).
pub(crate) const CHANGED_CHANNEL: &str = "sumpbook_changed";

/// The connection of a store.
pub(crate) enum Db {
    Lite(rusqlite::Connection),
    // Boxed: the server's client is three times the size of an SQLite connection.
    Pg(Box<PgConn>),
}

/// `?N` placeholders (SQLite) as `$N` (PostgreSQL), outside quoted text and names.
pub(crate) fn dollar_placeholders(sql: &str) -> String {
    let mut out = String::with_capacity(sql.len());
    let mut quote: Option<char> = None;
    let mut chars = sql.chars().peekable();
    while let Some(c) = chars.next() {
        match quote {
            Some(q) => {
                if c == q {
                    quote = None;
                }
                out.push(c);
            }
            None => {
                if c == '\'' || c == '"' {
                    quote = Some(c);
                    out.push(c);
                } else if c == '?' && chars.peek().is_some_and(|d| d.is_ascii_digit()) {
                    out.push('$');
                } else {
                    out.push(c);
                }
            }
        }
    }
    out
}

impl PgConn {
    pub(crate) fn new(client: postgres::Client, url: &str) -> PgConn {
        PgConn {
            client: RefCell::new(client),
            cache: RefCell::new(HashMap::new()),
            lost: std::cell::Cell::new(false),
            url: url.to_string(),
        }
    }

    /// After the server went away (a restart, a network drop), the next call connects again:
    /// the call that met the loss was told so ([`StoreError::ServerGone`]), and what it did in
    /// an open transaction was lost with it. Prepared statements belong to the old connection.
    fn reconnect_if_lost(&self) -> Result<(), StoreError> {
        if !self.lost.get() && !self.client()?.is_closed() {
            return Ok(());
        }
        let client =
            super::server::connect(&self.url).map_err(|e| StoreError::ServerGone(e.to_string()))?;
        *self.client()? = client;
        self.cache.borrow_mut().clear();
        self.lost.set(false);
        self.listen()
    }

    /// The client, unless a streamed read ([`PgConn::stream`]) still holds it: a statement
    /// sent from inside one is an error of the caller, told as such rather than a panic.
    fn client(&self) -> Result<RefMut<'_, postgres::Client>, StoreError> {
        self.client.try_borrow_mut().map_err(|_| {
            StoreError::Server("a statement was sent while a read was still streaming".into())
        })
    }

    /// A server error as a [`StoreError`], noting a lost connection for the next call.
    fn failed(&self, e: postgres::Error) -> StoreError {
        let e = super::errors::from_pg(e);
        if matches!(e, StoreError::ServerGone(_)) {
            self.lost.set(true);
        }
        e
    }

    /// Asks the server for the change notifications of every other connection's writes.
    pub(crate) fn listen(&self) -> Result<(), StoreError> {
        self.client()?
            .batch_execute(&format!("LISTEN {CHANGED_CHANNEL}"))
            .map_err(|e| self.failed(e))
    }

    /// Runs `sql`, statements without parameters in the simple protocol (one round trip for
    /// all of them), and gives back the text of each row's columns. For the opening of a
    /// shop, which asks several things at once before it knows the schema.
    pub(crate) fn simple_rows(&self, sql: &str) -> Result<Vec<Vec<Option<String>>>, StoreError> {
        self.reconnect_if_lost()?;
        let messages = self
            .client()?
            .simple_query(sql)
            .map_err(|e| self.failed(e))?;
        let mut out = Vec::new();
        for m in messages {
            if let postgres::SimpleQueryMessage::Row(r) = m {
                out.push(
                    (0..r.len())
                        .map(|i| r.try_get(i).map(|v| v.map(str::to_string)))
                        .collect::<Result<_, _>>()
                        .map_err(pg_col_err)?,
                );
            }
        }
        Ok(out)
    }

    /// Whether a change notification has arrived since the last call (without waiting for
    /// one).
    pub(crate) fn take_notifications(&self) -> Result<bool, StoreError> {
        self.reconnect_if_lost()?;
        let mut client = self.client()?;
        // Notifications are read off the connection while it answers something: an empty
        // statement is one round trip that reads no table.
        client.batch_execute("").map_err(|e| self.failed(e))?;
        let mut seen = false;
        // What is buffered now; never waits.
        let mut notes = client.notifications();
        let mut pending = notes.iter();
        while let Some(n) = pending.next().map_err(|e| self.failed(e))? {
            seen |= n.channel() == CHANGED_CHANNEL;
        }
        Ok(seen)
    }

    fn statement(&self, sql: &str) -> Result<postgres::Statement, StoreError> {
        self.reconnect_if_lost()?;
        if let Some(st) = self.cache.borrow().get(sql) {
            return Ok(st.clone());
        }
        let st = self
            .client()?
            .prepare(&dollar_placeholders(sql))
            .map_err(|e| self.failed(e))?;
        self.cache.borrow_mut().insert(sql.to_string(), st.clone());
        Ok(st)
    }

    fn values<'p>(params: &'p [&dyn ToDb]) -> Vec<Value<'p>> {
        params.iter().map(|p| p.to_db()).collect()
    }

    pub(crate) fn execute(&self, sql: &str, params: &[&dyn ToDb]) -> Result<usize, StoreError> {
        let st = self.statement(sql)?;
        let vals = Self::values(params);
        let refs: Vec<&(dyn PgToSql + Sync)> =
            vals.iter().map(|v| v as &(dyn PgToSql + Sync)).collect();
        let n = self
            .client()?
            .execute(&st, &refs)
            .map_err(|e| self.failed(e))?;
        Ok(usize::try_from(n).unwrap_or(usize::MAX))
    }

    pub(crate) fn rows(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
    ) -> Result<Vec<postgres::Row>, StoreError> {
        if params.is_empty() {
            // Parsed, bound and run in one round trip (see the type's comment).
            self.reconnect_if_lost()?;
            return self
                .client()?
                .query_typed(&dollar_placeholders(sql), &[])
                .map_err(|e| self.failed(e));
        }
        let st = self.statement(sql)?;
        let vals = Self::values(params);
        let refs: Vec<&(dyn PgToSql + Sync)> =
            vals.iter().map(|v| v as &(dyn PgToSql + Sync)).collect();
        self.client()?.query(&st, &refs).map_err(|e| self.failed(e))
    }

    /// Runs a query and hands each row to `f` as it arrives, so that `f` works while the server
    /// sends the rest. `f` must not use the connection (it is busy with the read): a statement
    /// sent from `f` fails.
    pub(crate) fn stream<E: From<StoreError>>(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
        mut f: impl FnMut(&postgres::Row) -> Result<(), E>,
    ) -> Result<(), E> {
        let st = self.statement(sql)?;
        let vals = Self::values(params);
        let mut client = self.client()?;
        let mut rows = client
            .query_raw(&st, vals.iter())
            .map_err(|e| self.failed(e))?;
        while let Some(r) = rows.next().map_err(|e| self.failed(e))? {
            f(&r)?;
        }
        Ok(())
    }

    pub(crate) fn batch(&self, sql: &str) -> Result<(), StoreError> {
        self.reconnect_if_lost()?;
        self.client()?
            .batch_execute(sql)
            .map_err(|e| self.failed(e))
    }
}

/// The key of the server-side lock that one bulk writer or schema change holds at a time.
pub(crate) const PG_WRITE_LOCK: i64 = 0x5355_4D50;

impl Db {
    pub(crate) fn is_pg(&self) -> bool {
        matches!(self, Db::Pg(_))
    }

    pub(crate) fn execute(&self, sql: &str, params: &[&dyn ToDb]) -> Result<usize, StoreError> {
        match self {
            Db::Lite(c) => {
                let vals: Vec<Value<'_>> = params.iter().map(|p| p.to_db()).collect();
                Ok(c.prepare_cached(sql)?
                    .execute(rusqlite::params_from_iter(vals.iter()))?)
            }
            Db::Pg(p) => p.execute(sql, params),
        }
    }

    /// Runs an INSERT and returns the new row's id, or `None` when it wrote no row (an
    /// `ON CONFLICT ... DO NOTHING` that met a stored row).
    pub(crate) fn insert(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
    ) -> Result<Option<i64>, StoreError> {
        match self {
            Db::Lite(c) => {
                let n = self.execute(sql, params)?;
                Ok((n == 1).then(|| c.last_insert_rowid()))
            }
            Db::Pg(p) => {
                let sql = format!("{sql} RETURNING id");
                let rows = p.rows(&sql, params)?;
                rows.first()
                    .map(|r| r.try_get::<_, i64>(0).map_err(pg_col_err))
                    .transpose()
            }
        }
    }

    /// Runs a query and hands each row to `f`.
    pub(crate) fn each<E: From<StoreError>>(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
        mut f: impl FnMut(&Row<'_>) -> Result<(), E>,
    ) -> Result<(), E> {
        match self {
            Db::Lite(c) => {
                let vals: Vec<Value<'_>> = params.iter().map(|p| p.to_db()).collect();
                let mut st = c.prepare_cached(sql).map_err(StoreError::from)?;
                let mut rows = st
                    .query(rusqlite::params_from_iter(vals.iter()))
                    .map_err(StoreError::from)?;
                while let Some(r) = rows.next().map_err(StoreError::from)? {
                    f(&Row::Lite(r))?;
                }
                Ok(())
            }
            Db::Pg(p) => {
                // The rows are fetched whole before `f` sees them, so that `f` may use the
                // connection itself.
                for r in p.rows(sql, params)? {
                    f(&Row::Pg(&r))?;
                }
                Ok(())
            }
        }
    }

    /// Runs a query and hands each row to `f` as it arrives (on a file as [`Db::each`]; on a
    /// server while the server sends the rest, where `f` must not use the store).
    pub(crate) fn stream<E: From<StoreError>>(
        &self,
        sql: &str,
        params: &[&dyn ToDb],
        mut f: impl FnMut(&Row<'_>) -> Result<(), E>,
    ) -> Result<(), E> {
        match self {
            Db::Lite(_) => self.each(sql, params, f),
            Db::Pg(p) => p.stream(sql, params, |r| f(&Row::Pg(r))),
        }
    }

    /// Runs a statement that is not a query, several at once (schema scripts, BEGIN, ...).
    pub(crate) fn batch(&self, sql: &str) -> Result<(), StoreError> {
        match self {
            Db::Lite(c) => Ok(c.execute_batch(sql)?),
            Db::Pg(p) => p.batch(sql),
        }
    }

    /// Starts a write transaction. `exclusive`: one such writer at a time (bulk imports, which
    /// read the register once and must see it as the previous writer left it). SQLite takes
    /// its one write lock at once in any case.
    pub(crate) fn begin(&self, exclusive: bool) -> Result<(), StoreError> {
        match self {
            Db::Lite(c) => Ok(c.execute_batch("BEGIN IMMEDIATE")?),
            Db::Pg(p) => {
                p.batch("BEGIN")?;
                if exclusive {
                    p.batch(&format!("SELECT pg_advisory_xact_lock({PG_WRITE_LOCK})"))?;
                }
                Ok(())
            }
        }
    }

    /// Starts a read-only transaction that sees one moment of the data throughout (a copy's
    /// source, read in many steps while others may write).
    pub(crate) fn begin_snapshot(&self) -> Result<(), StoreError> {
        match self {
            Db::Lite(c) => Ok(c.execute_batch("BEGIN DEFERRED")?),
            Db::Pg(p) => p.batch("BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY"),
        }
    }

    /// Locks one row of `table` until the transaction ends. SQLite's write transaction holds
    /// the whole file already; the server locks the row (`FOR UPDATE`).
    pub(crate) fn lock_row(&self, table: &str, id: i64) -> Result<(), StoreError> {
        match self {
            Db::Lite(_) => Ok(()),
            Db::Pg(_) => self.each::<StoreError>(
                &format!("SELECT id FROM {table} WHERE id = ?1 FOR UPDATE"),
                params![id],
                |_| Ok(()),
            ),
        }
    }

    pub(crate) fn in_transaction(&self) -> bool {
        match self {
            Db::Lite(c) => !c.is_autocommit(),
            Db::Pg(_) => true,
        }
    }

    /// Runs one statement inside an open transaction so that its failure undoes only it: SQLite
    /// does so by itself, the server needs a savepoint (it would abort the transaction).
    pub(crate) fn statement_alone<T>(
        &self,
        f: impl FnOnce() -> Result<T, StoreError>,
    ) -> Result<T, StoreError> {
        match self {
            Db::Lite(_) => f(),
            Db::Pg(p) => {
                p.batch("SAVEPOINT one_row")?;
                match f() {
                    Ok(v) => {
                        p.batch("RELEASE SAVEPOINT one_row")?;
                        Ok(v)
                    }
                    Err(e) => {
                        p.batch("ROLLBACK TO SAVEPOINT one_row; RELEASE SAVEPOINT one_row")?;
                        Err(e)
                    }
                }
            }
        }
    }

    /// States who makes an edit and why, inside the edit's transaction, where the schema's
    /// history triggers read it.
    pub(crate) fn set_edit_context(
        &self,
        by: &str,
        reason: &str,
        at: &str,
    ) -> Result<(), StoreError> {
        match self {
            Db::Lite(_) => {
                self.execute(
                    "INSERT OR REPLACE INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, ?1, ?2, ?3)",
                    params![by, reason, at],
                )?;
            }
            Db::Pg(_) => {
                // Transaction-local settings: concurrent editors each see their own.
                self.each::<StoreError>(
                    "SELECT set_config('sumpbook.edited_by', ?1, true), set_config('sumpbook.reason', ?2, true), \
                     set_config('sumpbook.edited_at', ?3, true)",
                    params![by, reason, at],
                    |_| Ok(()),
                )?;
            }
        }
        Ok(())
    }

    pub(crate) fn clear_edit_context(&self) -> Result<(), StoreError> {
        match self {
            Db::Lite(_) => {
                self.execute("DELETE FROM edit_context", params![])?;
            }
            // The settings end with the transaction.
            Db::Pg(_) => {}
        }
        Ok(())
    }
}
