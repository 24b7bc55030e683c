//! ambit: exact geodesic proximity inside SQLite.
//!
//! The data path, one module per step: [`blob`] (GeoPackage, WKB, WKT,
//! GeoJSON codecs) -> [`geometry`] (the shared model and its validation)
//! -> geodesy -> proximity -> [`sql`] (the SQL surface, the only module that
//! knows SQLite). See DEVELOPERS.md.

pub mod blob;
pub mod error;
pub mod geodesy;
pub mod geometry;
pub mod interrupt;
pub mod memory;
pub mod proximity;
pub mod read;
pub mod render;
pub mod reproject;
pub mod sql;
pub mod stats;
pub mod units;

#[doc(hidden)]
pub mod testing;

/// The SQLite entry point, `sqlite3_ambit_init`: the name SQLite derives
/// from the library file `libambit.so`.
///
/// # Safety
/// Called by SQLite's extension loader with a valid connection handle, error
/// message slot and API routine table.
#[no_mangle]
pub unsafe extern "C" fn sqlite3_ambit_init(
    db: *mut rusqlite::ffi::sqlite3,
    pz_err_msg: *mut *mut std::os::raw::c_char,
    p_api: *mut rusqlite::ffi::sqlite3_api_routines,
) -> std::os::raw::c_int {
    sql::entry::init(db, pz_err_msg, p_api)
}
