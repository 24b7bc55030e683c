//! Reading SQL arguments into the core's types. Every error names the
//! function, the argument (position and name) and what it got, e.g.
//! `ST_X: argument 1 (geom) must be a geometry blob, got text 'POINT (1 2)';
//! build one with ST_GeomFromText`.

use rusqlite::types::ValueRef;

use crate::blob::{self, Decoded};
use crate::error::GeomError;
use crate::sql::error;
use crate::sql::interrupt::HostInterrupt;
use crate::sql::state::ConnState;

/// The arguments of one call of an SQL function or table-valued function,
/// with the connection's state.
pub struct Args<'a> {
    name: &'static str,
    params: &'static [&'static str],
    values: [ValueRef<'a>; MAX_ARGS],
    len: usize,
    state: &'a ConnState,
    host: Option<HostInterrupt<'a>>,
    /// Values after the first are the columns of a query's row (see
    /// [`Args::from_query_row`]): messages name them as columns.
    query_row: Option<i64>,
}

/// The most arguments any ambit function takes (held inline: no allocation
/// per call).
pub const MAX_ARGS: usize = 8;

/// How an SQL value is described in an error message.
pub fn describe(value: ValueRef<'_>) -> String {
    match value {
        ValueRef::Null => "NULL".to_string(),
        ValueRef::Integer(i) => format!("integer {i}"),
        ValueRef::Real(r) => format!("real {r}"),
        ValueRef::Text(t) => {
            // NUL shown as \0: a message holding NUL cannot reach SQLite,
            // which would then report a bare "SQL logic error".
            let text = String::from_utf8_lossy(t).replace('\0', "\\0");
            let mut shown: String = text.chars().take(40).collect();
            if shown.len() < text.len() {
                shown.push_str("...");
            }
            format!("text '{shown}'")
        }
        ValueRef::Blob(b) => format!("a blob of {} bytes", b.len()),
    }
}

/// For a number passed as text (as CSV imports leave them): how to make it
/// a number.
fn cast_hint(value: ValueRef<'_>) -> String {
    match value {
        ValueRef::Text(t)
            if std::str::from_utf8(t).is_ok_and(|s| s.trim().parse::<f64>().is_ok()) =>
        {
            "; it is a number stored as text (as a CSV import leaves it): CAST(column AS REAL) makes it a number".to_string()
        }
        _ => String::new(),
    }
}

impl<'a> Args<'a> {
    /// The arguments `values` of a call of `name`, whose parameters are
    /// called `params`.
    /// Arguments past [`MAX_ARGS`] are ignored (no function takes them).
    pub fn new(
        name: &'static str,
        params: &'static [&'static str],
        values: impl IntoIterator<Item = ValueRef<'a>>,
        state: &'a ConnState,
    ) -> Self {
        let mut inline = [ValueRef::Null; MAX_ARGS];
        let mut len = 0;
        for (slot, v) in inline.iter_mut().zip(values) {
            *slot = v;
            len += 1;
        }
        Args {
            name,
            params,
            values: inline,
            len,
            state,
            host: None,
            query_row: None,
        }
    }

    /// The same values, where all but the first are the columns of row
    /// `row` (1-based) of a query the function runs itself: errors say
    /// "row 3 of the query, column 2 (reach_m)" instead of "argument 3".
    pub fn from_query_row(mut self, row: i64) -> Self {
        self.query_row = Some(row);
        self
    }

    /// The same arguments, knowing the function call they belong to (so a
    /// long computation can see the statement's interrupt flag).
    pub fn in_call(self, ctx: &'a rusqlite::functions::Context<'a>) -> Self {
        self.watching(HostInterrupt::of_call(ctx))
    }

    /// The same arguments, watching `host` for the statement's interrupt
    /// (a virtual table's call, which has no function context).
    pub fn watching(mut self, host: HostInterrupt<'a>) -> Self {
        self.host = Some(host);
        self
    }

    /// The interrupt flag of the statement this call runs in (never set
    /// when the arguments were given neither their call
    /// ([`Args::in_call`]) nor a flag to watch ([`Args::watching`])).
    pub fn interrupt(&self) -> HostInterrupt<'a> {
        match &self.host {
            Some(host) => host.again(),
            None => HostInterrupt::detached(),
        }
    }

    /// The SQL name of the function being called.
    pub fn name(&self) -> &'static str {
        self.name
    }

    /// The state of the connection the call runs on (its layers).
    pub fn state(&self) -> &ConnState {
        self.state
    }

    /// How many arguments were passed.
    pub fn len(&self) -> usize {
        self.len
    }

    /// True when no argument was passed.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    fn raw(&self, i: usize) -> ValueRef<'a> {
        if i < self.len {
            self.values[i]
        } else {
            ValueRef::Null
        }
    }

    /// An error about the whole call.
    pub fn fail(&self, message: impl std::fmt::Display) -> rusqlite::Error {
        error(self.name, message)
    }

    /// An error about argument `i` (0-based): `argument 2 (y): ...`.
    pub fn fail_arg(&self, i: usize, message: impl std::fmt::Display) -> rusqlite::Error {
        let param = self.params.get(i).copied().unwrap_or("?");
        match self.query_row {
            Some(row) if i >= 1 => self.fail(format!(
                "row {row} of the query, column {i} ({param}): {message}"
            )),
            _ => self.fail(format!("argument {} ({param}): {message}", i + 1)),
        }
    }

    /// The blob of argument `i`; NULL (or an omitted argument) gives `None`.
    pub fn blob(&self, i: usize) -> rusqlite::Result<Option<&'a [u8]>> {
        match self.raw(i) {
            ValueRef::Null => Ok(None),
            ValueRef::Blob(b) => Ok(Some(b)),
            ValueRef::Text(_) => Err(self.fail_arg(
                i,
                format!(
                    "must be a geometry blob, got {}; build one with ST_GeomFromText or ambit_from_geojson",
                    describe(self.raw(i))
                ),
            )),
            other => Err(self.fail_arg(
                i,
                format!("must be a geometry blob, got {}", describe(other)),
            )),
        }
    }

    /// The geometry of argument `i`, decoded and checked for use (see
    /// [`blob::decode_valid`]; the checks of a big polygon stop on the
    /// statement's interrupt: [`crate::sql::interrupted`]); NULL gives
    /// `None`.
    pub fn geometry(&self, i: usize) -> rusqlite::Result<Option<Decoded>> {
        match self.blob(i)? {
            None => Ok(None),
            Some(b) => blob::decode_valid(b, &self.interrupt())
                .map(Some)
                .map_err(|e| match e {
                    GeomError::Interrupted => crate::sql::interrupted(self.name),
                    e => self.fail_arg(i, e),
                }),
        }
    }

    /// The geometry of argument `i`, decoded but not checked: for functions
    /// that only describe a blob.
    pub fn geometry_unchecked(&self, i: usize) -> rusqlite::Result<Option<Decoded>> {
        match self.blob(i)? {
            None => Ok(None),
            Some(b) => blob::decode(b).map(Some).map_err(|e| self.fail_arg(i, e)),
        }
    }

    /// [`Args::text`] for an argument that must be given: NULL is an error
    /// naming it.
    pub fn required_text(&self, i: usize) -> rusqlite::Result<&'a str> {
        self.text(i)?
            .ok_or_else(|| self.fail_arg(i, "must not be NULL"))
    }

    /// The text of argument `i`; NULL gives `None`. Text holding a NUL byte
    /// (e.g. `'POINT (1 2)' || char(0)`) is refused: no ambit argument
    /// means one, and it usually marks a truncated or binary value.
    pub fn text(&self, i: usize) -> rusqlite::Result<Option<&'a str>> {
        match self.raw(i) {
            ValueRef::Null => Ok(None),
            ValueRef::Text(t) => {
                if let Some(at) = t.iter().position(|&b| b == 0) {
                    return Err(self.fail_arg(
                        i,
                        format!("contains a NUL byte at offset {at}; remove it (text ends there in most programs)"),
                    ));
                }
                std::str::from_utf8(t)
                    .map(Some)
                    .map_err(|_| self.fail_arg(i, "is not valid UTF-8 text"))
            }
            other => Err(self.fail_arg(i, format!("must be text, got {}", describe(other)))),
        }
    }

    /// The number of argument `i` (integer or real); NULL gives `None`.
    /// NaN and infinities are refused.
    pub fn number(&self, i: usize) -> rusqlite::Result<Option<f64>> {
        let value = match self.raw(i) {
            ValueRef::Null => return Ok(None),
            ValueRef::Integer(v) => v as f64,
            ValueRef::Real(v) => v,
            other => {
                return Err(self.fail_arg(
                    i,
                    format!("must be a number, got {}", describe(other)) + &cast_hint(other),
                ))
            }
        };
        if value.is_finite() {
            Ok(Some(value))
        } else {
            Err(self.fail_arg(i, format!("must be a finite number, got {value}")))
        }
    }

    /// A distance argument, in metres: a number of metres, or text with
    /// its unit (`'0.5 mi'`, `'800 m'`, `'3 km'`, `'2640 ft'`; see
    /// [`crate::units::parse_length`]); NULL gives `None`. Refused, with a
    /// message saying what to write: negative or non-finite distances and
    /// text without a unit.
    pub fn distance(&self, i: usize) -> rusqlite::Result<Option<f64>> {
        let metres = match self.raw(i) {
            ValueRef::Text(t) => {
                let text = String::from_utf8_lossy(t);
                crate::units::parse_length(&text)
                    .map_err(|e| self.fail_arg(i, format!("'{text}' {e}")))?
            }
            _ => match self.number(i)? {
                None => return Ok(None),
                Some(m) => m,
            },
        };
        if metres < 0.0 || !metres.is_finite() {
            return Err(self.fail_arg(
                i,
                format!("must be a distance of 0 or more metres, got {metres}"),
            ));
        }
        Ok(Some(metres))
    }

    /// A feature's reach, as [`Args::distance`], and also refusing a bare
    /// number strictly between 0 and 1: a reach of `0.5` is almost always
    /// half a mile or kilometre passed where metres are taken, and a layer
    /// built with it would reach (nearly) nothing without a word. Write
    /// `'0.5 m'` to mean half a metre.
    pub fn reach(&self, i: usize) -> rusqlite::Result<Option<f64>> {
        if let Some(m) = match self.raw(i) {
            ValueRef::Integer(v) => Some(v as f64),
            ValueRef::Real(v) => Some(v),
            _ => None,
        } {
            if m > 0.0 && m < 1.0 {
                return Err(self.fail_arg(
                    i,
                    format!(
                        "a reach of {m} metres is almost certainly a unit slip (bare numbers are metres): write '{m} mi' for {m} miles, '{m} km' for kilometres, or '{m} m' if you do mean metres"
                    ),
                ));
            }
        }
        self.distance(i)
    }

    /// The integer of argument `i`; NULL gives `None`. A real with a
    /// fractional part is refused.
    pub fn integer(&self, i: usize) -> rusqlite::Result<Option<i64>> {
        match self.raw(i) {
            ValueRef::Null => Ok(None),
            ValueRef::Integer(v) => Ok(Some(v)),
            ValueRef::Real(v) if v.fract() == 0.0 && v.abs() < 9.0e15 => Ok(Some(v as i64)),
            other => Err(self.fail_arg(i, format!("must be an integer, got {}", describe(other)))),
        }
    }
}
