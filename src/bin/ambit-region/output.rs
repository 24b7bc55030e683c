//! CSV files and table extents.

use ambit::geometry::Geometry;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::Path;

/// A CSV file (RFC 4180: CRLF line ends, fields with commas, quotes or line
/// breaks in double quotes, quotes doubled).
pub struct Csv {
    pub out: BufWriter<File>,
    pub rows: u64,
}

impl Csv {
    pub fn create(dir: &Path, name: &str, header: &[&str]) -> std::io::Result<Csv> {
        let path = dir.join(name);
        let mut csv = Csv {
            out: BufWriter::with_capacity(1 << 20, File::create(path)?),
            rows: 0,
        };
        csv.write(header)?;
        csv.rows = 0;
        Ok(csv)
    }

    pub fn write(&mut self, fields: &[&str]) -> std::io::Result<()> {
        for (i, f) in fields.iter().enumerate() {
            if i > 0 {
                self.out.write_all(b",")?;
            }
            if f.contains([',', '"', '\r', '\n']) {
                self.out.write_all(b"\"")?;
                self.out.write_all(f.replace('"', "\"\"").as_bytes())?;
                self.out.write_all(b"\"")?;
            } else {
                self.out.write_all(f.as_bytes())?;
            }
        }
        self.out.write_all(b"\r\n")?;
        self.rows += 1;
        Ok(())
    }

    pub fn finish(mut self) -> std::io::Result<u64> {
        self.out.flush()?;
        Ok(self.rows)
    }
}

/// The XY extent of a table.
#[derive(Clone, Copy)]
pub struct Extent {
    pub min_x: f64,
    pub min_y: f64,
    pub max_x: f64,
    pub max_y: f64,
}

impl Extent {
    pub const EMPTY: Extent = Extent {
        min_x: f64::INFINITY,
        min_y: f64::INFINITY,
        max_x: f64::NEG_INFINITY,
        max_y: f64::NEG_INFINITY,
    };

    pub fn add(&mut self, g: &Geometry) {
        g.for_each_xy(&mut |x, y| {
            self.min_x = self.min_x.min(x);
            self.min_y = self.min_y.min(y);
            self.max_x = self.max_x.max(x);
            self.max_y = self.max_y.max(y);
        });
    }
}
