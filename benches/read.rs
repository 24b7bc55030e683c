//! Reading speed of ambit_read: the blocks of a state-size invented region
//! (400,000 blocks of about 40 vertices, demo-db/build-region) written to
//! shapefiles, one per county as the census publishes them per state, then
//! read into a GeoPackage table with ambit_read (every geometry checked and
//! encoded, attributes as JSON), beside a plain `INSERT ... SELECT` copy of
//! the same table from the region's GeoPackage, in the same shell.
//!
//! Run: `cargo bench --bench read` (default 400000 blocks; give another
//! size as an argument, e.g. `cargo bench --bench read -- 50000`). The
//! region and its shapefiles are built once and kept under
//! target/bench-read/. Writing the shapefiles needs pyogrio
//! (tests/python/requirements.txt). Prints rows per second of each and
//! their ratio, plain and zipped.

mod support;

use std::path::Path;
use std::process::Command;

use support::{build_region, root, shell, sizes_from_args, times};

/// Writes the region's blocks as one zipped and one plain shapefile per
/// county into `dir` (GDAL's ESRI Shapefile driver through pyogrio).
fn write_shapefiles(region: &Path, dir: &Path) {
    let script = r#"
import os, sys, zipfile, sqlite3
import numpy as np, pyogrio
region, out = sys.argv[1], sys.argv[2]
os.makedirs(out, exist_ok=True)
db = sqlite3.connect(region)
counties = [r[0] for r in db.execute("SELECT DISTINCT substr(geoid, 1, 5) FROM blocks ORDER BY 1")]
for c in counties:
    rows = db.execute("SELECT geoid, population, geom FROM blocks WHERE geoid LIKE ? || '%' ORDER BY fid", (c,)).fetchall()
    # GeoPackage blob: 8-byte header + 32-byte envelope (flags 0x03), then WKB.
    def wkb(b):
        flags = b[3]
        env = {0: 0, 1: 32, 2: 48, 3: 48, 4: 64}[(flags >> 1) & 7]
        return bytes(b[8 + env:])
    stem = os.path.join(out, f"blocks_{c}")
    pyogrio.raw.write(stem + ".shp",
        geometry=np.array([wkb(r[2]) for r in rows], dtype=object),
        field_data=[np.array([r[0] for r in rows], dtype=object), np.array([r[1] for r in rows], dtype=np.int64)],
        fields=["GEOID", "POP"], geometry_type="Polygon", crs="EPSG:4326", driver="ESRI Shapefile")
    with zipfile.ZipFile(os.path.join(out, f"zipped_{c}.zip"), "w", zipfile.ZIP_DEFLATED) as z:
        for ext in ("shp", "shx", "dbf", "prj", "cpg"):
            if os.path.exists(stem + "." + ext):
                z.write(stem + "." + ext, f"blocks_{c}.{ext}")
print(len(counties))
"#;
    let status = Command::new("python3")
        .arg("-c")
        .arg(script)
        .arg(region)
        .arg(dir)
        .status()
        .expect("python3 runs");
    assert!(
        status.success(),
        "writing the shapefiles failed (pyogrio installed? tests/prepare-host)"
    );
}

fn main() {
    let work = root().join("target/bench-read");
    std::fs::create_dir_all(&work).unwrap();
    for blocks in sizes_from_args(&[400_000]) {
        let region = work.join(format!("region-{blocks}.gpkg"));
        if !region.exists() {
            let built = build_region(blocks, &work);
            assert_eq!(built, region);
        }
        let files = work.join(format!("shapefiles-{blocks}"));
        if !files.join("done").exists() {
            write_shapefiles(&region, &files);
            std::fs::write(files.join("done"), "").unwrap();
        }
        let out = work.join(format!("read-{blocks}.gpkg"));
        std::fs::remove_file(&out).ok();
        let sql = format!(
            "ATTACH '{region}' AS region;\n\
             .timer on\n\
             CREATE TABLE copied AS SELECT geoid, population, geom FROM region.blocks;\n\
             CREATE TABLE read_plain AS SELECT json_extract(attributes, '$.GEOID') AS geoid, json_extract(attributes, '$.POP') AS population, geom FROM ambit_read('{dir}/blocks_*.shp');\n\
             CREATE TABLE read_zipped AS SELECT json_extract(attributes, '$.GEOID') AS geoid, json_extract(attributes, '$.POP') AS population, geom FROM ambit_read('{dir}/zipped_*.zip');\n\
             .timer off\n\
             SELECT count(*) FROM copied;\n\
             SELECT count(*) FROM read_plain;\n\
             SELECT count(*) FROM read_zipped;\n\
             SELECT count(*) FROM copied c JOIN read_plain r USING (geoid) WHERE r.population = c.population AND abs(ambit_area(r.geom) - ambit_area(c.geom)) <= 1e-9 * ambit_area(c.geom);",
            region = region.display(),
            dir = files.display()
        );
        let (stdout, rss, _) = shell(&out, &[], &sql);
        let t = times(&stdout);
        let counts: Vec<f64> = stdout
            .lines()
            .filter(|l| !l.starts_with("Run Time"))
            .filter_map(|l| l.trim().parse().ok())
            .collect();
        assert_eq!(t.len(), 3, "{stdout}");
        assert_eq!(counts.len(), 4, "{stdout}");
        let rows = counts[0];
        assert_eq!(counts[1], rows, "ambit_read read every block");
        assert_eq!(counts[2], rows, "ambit_read read every zipped block");
        println!(
            "read, {blocks} blocks in {} files",
            std::fs::read_dir(&files)
                .unwrap()
                .filter(|e| e
                    .as_ref()
                    .is_ok_and(|e| e.path().extension().is_some_and(|x| x == "zip")))
                .count()
        );
        println!(
            "  INSERT ... SELECT copy     {:>8.0} rows/s ({:.2} s)",
            rows / t[0],
            t[0]
        );
        println!(
            "  ambit_read .shp            {:>8.0} rows/s ({:.2} s, {:.1} x the copy's time)",
            rows / t[1],
            t[1],
            t[1] / t[0]
        );
        println!(
            "  ambit_read .zip            {:>8.0} rows/s ({:.2} s, {:.1} x the copy's time)",
            rows / t[2],
            t[2],
            t[2] / t[0]
        );
        println!("  blocks read back with the same geoid, population and area (to 1e-9; the shapefile writer turns outer rings clockwise): {} of {rows}", counts[3]);
        println!("  peak memory of the shell: {rss:.0} MiB");
    }
}
