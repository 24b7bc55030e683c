//! Geodesic measures on WGS84: ambit_distance, ambit_within, ambit_area,
//! ambit_length. The computations are in crate::proximity and
//! crate::geodesy; this file converts values and reports errors.

use rusqlite::types::Value;

use crate::error::GeomError;
use crate::interrupt::{Interrupt, Pacer};

use crate::geodesy::area;
use crate::proximity::{self, Prepared};
use crate::sql::{Args, SqlFunction, SqlResult};

pub const FUNCTIONS: &[SqlFunction] = &[
    SqlFunction {
        name: "ambit_distance",
        params: &["a", "b"],
        optional: 0,
        deterministic: true,
        body: distance,
    },
    SqlFunction {
        name: "ambit_within",
        params: &["a", "b", "metres"],
        optional: 0,
        deterministic: true,
        body: within,
    },
    SqlFunction {
        name: "ambit_area",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: area_m2,
    },
    SqlFunction {
        name: "ambit_length",
        params: &["geom"],
        optional: 0,
        deterministic: true,
        body: length_m,
    },
];

/// A core error as this call's SQL error: an interrupt with SQLite's code,
/// anything else about argument `i`.
fn core_error(args: &Args, i: usize, e: GeomError) -> rusqlite::Error {
    match e {
        GeomError::Interrupted => crate::sql::interrupted(args.name()),
        e => args.fail_arg(i, e),
    }
}

/// Both geometries prepared (interruptibly, with their memory reserved
/// fallibly), or `None` if either is NULL.
fn pair(args: &Args, stop: &dyn Interrupt) -> rusqlite::Result<Option<(Prepared, Prepared)>> {
    let (Some(a), Some(b)) = (args.geometry(0)?, args.geometry(1)?) else {
        return Ok(None);
    };
    Ok(Some((
        Prepared::build(&a.geometry, stop).map_err(|e| core_error(args, 0, e))?,
        Prepared::build(&b.geometry, stop).map_err(|e| core_error(args, 1, e))?,
    )))
}

fn distance(args: &Args) -> SqlResult {
    let stop = args.interrupt();
    Ok(match pair(args, &stop)? {
        Some((a, b)) => proximity::distance_interruptible(&a, &b, &stop)
            .map_err(|e| core_error(args, 1, e))?
            .map_or(Value::Null, Value::Real),
        None => Value::Null,
    })
}

fn within(args: &Args) -> SqlResult {
    let metres = args.distance(2)?;
    let Some(metres) = metres else {
        return Ok(Value::Null);
    };
    let stop = args.interrupt();
    Ok(match pair(args, &stop)? {
        Some((a, b)) => Value::Integer(
            proximity::within_interruptible(&a, &b, metres, &stop)
                .map_err(|e| core_error(args, 1, e))?
                .into(),
        ),
        None => Value::Null,
    })
}

fn area_m2(args: &Args) -> SqlResult {
    Ok(match args.geometry(0)? {
        Some(d) => Value::Real(
            crate::proximity::validity::area_until(&d.geometry, &args.interrupt())
                .map_err(|e| core_error(args, 0, e))?,
        ),
        None => Value::Null,
    })
}

fn length_m(args: &Args) -> SqlResult {
    Ok(match args.geometry(0)? {
        Some(d) => Value::Real(
            area::geometry_length_until(&d.geometry, &mut Pacer::new(&args.interrupt()))
                .map_err(|e| core_error(args, 0, e))?,
        ),
        None => Value::Null,
    })
}
