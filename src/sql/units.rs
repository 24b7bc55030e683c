//! ambit_miles, ambit_feet, ambit_km: lengths in those units to metres, so
//! thresholds in a script read as the analyst states them
//! (`ambit_miles(0.5)` is 804.672 m).

use rusqlite::types::Value;

use crate::sql::{Args, SqlFunction, SqlResult};
use crate::units::{METRES_PER_FOOT, METRES_PER_KILOMETRE, METRES_PER_MILE};

pub const FUNCTIONS: &[SqlFunction] = &[
    SqlFunction {
        name: "ambit_miles",
        params: &["miles"],
        optional: 0,
        deterministic: true,
        body: miles,
    },
    SqlFunction {
        name: "ambit_feet",
        params: &["feet"],
        optional: 0,
        deterministic: true,
        body: feet,
    },
    SqlFunction {
        name: "ambit_km",
        params: &["km"],
        optional: 0,
        deterministic: true,
        body: km,
    },
];

fn to_metres(args: &Args, factor: f64) -> SqlResult {
    Ok(match args.number(0)? {
        None => Value::Null,
        Some(v) => Value::Real(v * factor),
    })
}

fn miles(args: &Args) -> SqlResult {
    to_metres(args, METRES_PER_MILE)
}

fn feet(args: &Args) -> SqlResult {
    to_metres(args, METRES_PER_FOOT)
}

fn km(args: &Args) -> SqlResult {
    to_metres(args, METRES_PER_KILOMETRE)
}
