//! The feature tables and `load.sql`, the script that builds the GeoPackage
//! in the stock sqlite3 shell.

use crate::args::Args;
use crate::{
    layout::{LAT_NORTH, LAT_SOUTH, LON_EAST, LON_WEST},
    output::Extent,
};
use ambit::blob::gpkg_tables;
use std::collections::HashMap;
use std::fmt::Write as _;
use std::path::Path;

/// One feature table: its columns as created (the geometry column declared
/// with its `geometry_type_name`, as OGC 12-128 asks of feature tables, from
/// memory; SQLite stores the blobs unchanged whatever the declared type), the columns of its staging
/// table and CSV file, and the SELECT list that fills it from the staging
/// table.
pub struct Table {
    pub name: &'static str,
    pub identifier: &'static str,
    pub about: &'static str,
    pub geometry_type: &'static str,
    pub columns: &'static str,
    pub csv: &'static [&'static str],
    pub staging: &'static str,
    pub select: &'static str,
}

pub const TABLES: [Table; 10] = [
    Table {
        name: "counties",
        identifier: "Invented counties",
        about: "counties, each exactly the union of its blocks",
        geometry_type: "MULTIPOLYGON",
        columns: "fid INTEGER PRIMARY KEY, geoid TEXT NOT NULL, name TEXT NOT NULL, geom MULTIPOLYGON",
        csv: &["fid", "geoid", "name", "wkt"],
        staging: "fid INTEGER, geoid TEXT, name TEXT, wkt TEXT",
        select: "fid, geoid, name, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "blocks",
        identifier: "Invented census blocks",
        about: "census-style blocks tiling the land exactly, with population",
        geometry_type: "POLYGON",
        columns: "fid INTEGER PRIMARY KEY, geoid TEXT NOT NULL UNIQUE, population INTEGER NOT NULL, water INTEGER NOT NULL, geom POLYGON",
        csv: &["fid", "geoid", "population", "water", "wkt"],
        staging: "fid INTEGER, geoid TEXT, population INTEGER, water INTEGER, wkt TEXT",
        select: "fid, geoid, population, water, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "parks",
        identifier: "Invented parks",
        about: "parks (polygons and multipolygons, some with ponds)",
        geometry_type: "GEOMETRY",
        columns: "fid INTEGER PRIMARY KEY, park_id TEXT NOT NULL, name TEXT NOT NULL, geom GEOMETRY",
        csv: &["fid", "park_id", "name", "wkt"],
        staging: "fid INTEGER, park_id TEXT, name TEXT, wkt TEXT",
        select: "fid, park_id, name, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "rec_sites",
        identifier: "Invented recreation site registry",
        about: "recreation sites from a registry",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, site_code TEXT NOT NULL, site_name TEXT, activity TEXT, geom POINT",
        csv: &["fid", "site_code", "site_name", "activity", "wkt"],
        staging: "fid INTEGER, site_code TEXT, site_name TEXT, activity TEXT, wkt TEXT",
        select: "fid, site_code, NULLIF(site_name, ''), NULLIF(activity, ''), ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "fitness_list",
        identifier: "Invented fitness licensing list",
        about: "fitness businesses from a licensing list; about 5% repeat a rec_sites \
                location within 20 m, about 1% have no coordinates",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, license_no TEXT NOT NULL, business TEXT, category TEXT, lon REAL, lat REAL, geom POINT",
        csv: &["fid", "license_no", "business", "category", "lon", "lat", "wkt"],
        staging: "fid INTEGER, license_no TEXT, business TEXT, category TEXT, lon TEXT, lat TEXT, wkt TEXT",
        // lon and lat are read back from the parsed geometry, so they equal
        // its coordinates exactly.
        select: "fid, license_no, NULLIF(business, ''), NULLIF(category, ''), \
                 ST_X(ST_GeomFromText(NULLIF(wkt, ''), 4326)), ST_Y(ST_GeomFromText(NULLIF(wkt, ''), 4326)), \
                 ST_GeomFromText(NULLIF(wkt, ''), 4326)",
    },
    Table {
        name: "urban_areas",
        identifier: "Invented urban areas",
        about: "urban areas, each exactly a union of blocks",
        geometry_type: "MULTIPOLYGON",
        columns: "fid INTEGER PRIMARY KEY, name TEXT NOT NULL, geom MULTIPOLYGON",
        csv: &["fid", "name", "wkt"],
        staging: "fid INTEGER, name TEXT, wkt TEXT",
        select: "fid, name, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "groceries",
        identifier: "Invented food stores",
        about: "food stores: supermarkets, supercenters, large grocery stores, and convenience \
                stores (which food-access definitions leave out), denser where people live",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, store_id TEXT NOT NULL, name TEXT NOT NULL, kind TEXT NOT NULL, geom POINT",
        csv: &["fid", "store_id", "name", "kind", "wkt"],
        staging: "fid INTEGER, store_id TEXT, name TEXT, kind TEXT, wkt TEXT",
        select: "fid, store_id, name, kind, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "clinics",
        identifier: "Invented primary-care clinics",
        about: "primary-care clinics with their capacity in full-time-equivalent providers \
                (NULL: unknown)",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, clinic_id TEXT NOT NULL, name TEXT NOT NULL, providers REAL, geom POINT",
        csv: &["fid", "clinic_id", "name", "providers", "wkt"],
        staging: "fid INTEGER, clinic_id TEXT, name TEXT, providers TEXT, wkt TEXT",
        select: "fid, clinic_id, name, CAST(NULLIF(providers, '') AS REAL), ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "hazard_sites",
        identifier: "Invented pollution sources",
        about: "pollution sources (chemical storage, fuel terminals, wastewater plants, \
                landfills, rail yards): points, and footprints (polygons) for most landfills \
                and rail yards",
        geometry_type: "GEOMETRY",
        columns: "fid INTEGER PRIMARY KEY, site_id TEXT NOT NULL, name TEXT NOT NULL, kind TEXT NOT NULL, geom GEOMETRY",
        csv: &["fid", "site_id", "name", "kind", "wkt"],
        staging: "fid INTEGER, site_id TEXT, name TEXT, kind TEXT, wkt TEXT",
        select: "fid, site_id, name, kind, ST_GeomFromText(wkt, 4326)",
    },
    Table {
        name: "libraries",
        identifier: "Invented public libraries",
        about: "public libraries: a central library per county, branches, and bookmobile stops",
        geometry_type: "POINT",
        columns: "fid INTEGER PRIMARY KEY, library_id TEXT NOT NULL, name TEXT NOT NULL, branch_type TEXT NOT NULL, geom POINT",
        csv: &["fid", "library_id", "name", "branch_type", "wkt"],
        staging: "fid INTEGER, library_id TEXT, name TEXT, branch_type TEXT, wkt TEXT",
        select: "fid, library_id, name, branch_type, ST_GeomFromText(wkt, 4326)",
    },
];

/// A path as a double-quoted argument of a shell dot-command.
pub fn dot_quote(path: &Path) -> String {
    let s = path.to_string_lossy();
    format!("\"{}\"", s.replace('\\', "\\\\").replace('"', "\\\""))
}

pub fn sql_text(s: &str) -> String {
    format!("'{}'", s.replace('\'', "''"))
}

/// Degrees rounded outward to the micro-degree, one step beyond, so the
/// extent contains the data however the shell reads the literal.
pub fn outward(v: f64, down: bool) -> String {
    let s = if down {
        (v * 1e6).floor() - 1.0
    } else {
        (v * 1e6).ceil() + 1.0
    };
    format!("{}", s / 1e6)
}

pub fn load_sql(
    dir: &Path,
    args: &Args,
    extents: &HashMap<&'static str, Extent>,
) -> Result<String, String> {
    let dir_text = dir.to_string_lossy();
    if dir_text.contains(['\n', '\r']) {
        return Err("the output directory's path contains a line break".into());
    }
    let mut s = String::new();
    let w = &mut s;
    let _ = writeln!(
        w,
        "-- Builds a GeoPackage (OGC 12-128) of the invented region made by ambit-region\n\
         -- ({}--blocks {} --seed {}). Run in the sqlite3 shell with ambit loaded:\n\
         --   sqlite3 OUT.gpkg '.load target/release/libambit' '.read {}'\n\
         -- All data are invented; no real place is described.\n",
        if args.national { "--national " } else { "" },
        args.blocks,
        args.seed,
        dir.join("load.sql").display()
    );
    let _ = writeln!(w, ".bail on");
    let _ = writeln!(
        w,
        "PRAGMA application_id = {}; -- 'GPKG'",
        gpkg_tables::APPLICATION_ID
    );
    let _ = writeln!(
        w,
        "PRAGMA user_version = {}; -- GeoPackage 1.3.0",
        gpkg_tables::USER_VERSION
    );
    let _ = writeln!(w, "PRAGMA synchronous = OFF;");
    // The container tables and the three spatial reference rows every
    // GeoPackage must hold, as ambit writes them (crate::blob::gpkg_tables).
    let _ = writeln!(w, "{}", gpkg_tables::CREATE_TABLES.trim());
    for r in gpkg_tables::SPATIAL_REFS
        .iter()
        .filter(|r| [-1, 0, 4326].contains(&r.srs_id))
    {
        let _ = writeln!(
            w,
            "INSERT INTO gpkg_spatial_ref_sys VALUES ({}, {}, {}, {}, {}, {});",
            sql_text(r.srs_name),
            r.srs_id,
            sql_text(r.organization),
            r.organization_coordsys_id,
            sql_text(r.definition),
            sql_text(r.description)
        );
    }
    let _ = writeln!(w);
    for t in &TABLES {
        let _ = writeln!(w, "CREATE TABLE {} ({});", t.name, t.columns);
        let _ = writeln!(w, "CREATE TABLE staging_{} ({});", t.name, t.staging);
        let _ = writeln!(
            w,
            ".import --csv --skip 1 {} staging_{}",
            dot_quote(&dir.join(format!("{}.csv", t.name))),
            t.name
        );
    }
    let _ = writeln!(w, "\nBEGIN;");
    for t in &TABLES {
        let _ = writeln!(
            w,
            "INSERT INTO {} SELECT {} FROM staging_{} ORDER BY fid;",
            t.name, t.select, t.name
        );
    }
    // last_change is fixed, so the same seed gives the same file.
    for t in &TABLES {
        let e = extents.get(t.name).copied().unwrap_or(Extent {
            min_x: LON_WEST,
            min_y: LAT_SOUTH,
            max_x: LON_EAST,
            max_y: LAT_NORTH,
        });
        let description = if args.national {
            format!(
                "Invented data, not a real place: {}. An imaginary country of 54 states (codes \
                 01 to 54, our own numbering) over the open North Pacific, made by ambit-region \
                 --national --blocks {} --seed {}.",
                t.about, args.blocks, args.seed
            )
        } else {
            format!(
                "Invented data, not a real place: {}. An imaginary state (code 99) over the \
                 open Pacific, made by ambit-region --blocks {} --seed {}.",
                t.about, args.blocks, args.seed
            )
        };
        let _ = writeln!(
            w,
            "INSERT INTO gpkg_contents VALUES ({}, 'features', {}, {}, '2000-01-01T00:00:00.000Z', {}, {}, {}, {}, 4326);",
            sql_text(t.name),
            sql_text(t.identifier),
            sql_text(&description),
            outward(e.min_x, true),
            outward(e.min_y, true),
            outward(e.max_x, false),
            outward(e.max_y, false)
        );
        let _ = writeln!(
            w,
            "INSERT INTO gpkg_geometry_columns VALUES ({}, 'geom', '{}', 4326, 0, 0);",
            sql_text(t.name),
            t.geometry_type
        );
    }
    let _ = writeln!(w, "COMMIT;\n");
    for t in &TABLES {
        let _ = writeln!(w, "DROP TABLE staging_{};", t.name);
    }
    let _ = writeln!(w, "VACUUM;");
    Ok(s)
}
