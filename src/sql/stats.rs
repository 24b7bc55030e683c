//! The SQL-standard aggregates SQLite lacks: var_samp(x), var_pop(x),
//! stddev_samp(x) and stddev_pop(x), for standardising measures after a
//! join. Each reads one number per row into a crate::stats::Moments
//! (Welford's one-pass update) and returns the statistic as a real.
//!
//! As the SQL standard asks, NULL values are skipped; with no values left
//! (no rows, or only NULLs) every aggregate is NULL, and the sample forms
//! are NULL for a single value. Integers and reals are accepted (integers
//! beyond 2^53 are rounded to the nearest double); text, blobs and
//! infinities are errors naming the function and the argument.

use rusqlite::functions::{Aggregate, Context, FunctionFlags};
use rusqlite::types::ValueRef;
use rusqlite::Connection;

use crate::sql::{error, guard};
use crate::stats::Moments;

/// How a statistic is read from the accumulated moments.
type Reading = fn(&Moments) -> Option<f64>;

/// One of the four aggregates: its SQL name and the statistic it returns.
#[derive(Clone, Copy)]
struct Statistic {
    name: &'static str,
    result: Reading,
}

/// The aggregates, by SQL name.
const STATISTICS: &[Statistic] = &[
    Statistic {
        name: "var_samp",
        result: Moments::var_samp,
    },
    Statistic {
        name: "var_pop",
        result: Moments::var_pop,
    },
    Statistic {
        name: "stddev_samp",
        result: Moments::stddev_samp,
    },
    Statistic {
        name: "stddev_pop",
        result: Moments::stddev_pop,
    },
];

/// The value of argument 1 (x) of `function` as a number; NULL gives
/// `None`. Text, blobs and infinities are errors in the words of the other
/// ambit functions (src/sql/args.rs):
/// `stddev_samp: argument 1 (x): must be a number, got text 'abc'`.
fn number(function: &str, value: ValueRef<'_>) -> rusqlite::Result<Option<f64>> {
    let fail = |message: String| error(function, format!("argument 1 (x): {message}"));
    let x = match value {
        ValueRef::Null => return Ok(None),
        ValueRef::Integer(i) => i as f64,
        ValueRef::Real(r) => r,
        ValueRef::Text(t) => {
            let text = String::from_utf8_lossy(t);
            let mut shown: String = text.chars().take(40).collect();
            if shown.len() < text.len() {
                shown.push_str("...");
            }
            return Err(fail(format!("must be a number, got text '{shown}'")));
        }
        ValueRef::Blob(b) => {
            return Err(fail(format!(
                "must be a number, got a blob of {} bytes",
                b.len()
            )))
        }
    };
    if x.is_finite() {
        Ok(Some(x))
    } else {
        Err(fail(format!("must be a finite number, got {x}")))
    }
}

impl Aggregate<Moments, Option<f64>> for Statistic {
    fn init(&self, _ctx: &mut Context<'_>) -> rusqlite::Result<Moments> {
        Ok(Moments::new())
    }

    fn step(&self, ctx: &mut Context<'_>, acc: &mut Moments) -> rusqlite::Result<()> {
        guard(self.name, || {
            if let Some(x) = number(self.name, ctx.get_raw(0))? {
                acc.push(x);
            }
            Ok(())
        })
    }

    fn finalize(
        &self,
        _ctx: &mut Context<'_>,
        acc: Option<Moments>,
    ) -> rusqlite::Result<Option<f64>> {
        guard(self.name, || Ok(acc.as_ref().and_then(self.result)))
    }
}

/// Registers var_samp, var_pop, stddev_samp and stddev_pop, one argument
/// each.
pub fn register(conn: &Connection) -> rusqlite::Result<()> {
    for &statistic in STATISTICS {
        conn.create_aggregate_function(
            statistic.name,
            1,
            FunctionFlags::SQLITE_UTF8
                | FunctionFlags::SQLITE_DETERMINISTIC
                | FunctionFlags::SQLITE_INNOCUOUS,
            statistic,
        )?;
    }
    Ok(())
}
