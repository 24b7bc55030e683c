//! What can go wrong while reading a file: [`ReadError`] stops the whole
//! statement (a file that cannot be read at all, or a bad row when bad rows
//! are errors); a [`Problem`] is one row's reason, reported beside the row
//! when bad rows are kept.

use std::fmt;

use crate::error::GeomError;

/// Why one row could not be read. The row keeps its number and its
/// attributes; its geometry is NULL.
#[derive(Clone, Debug, PartialEq)]
pub enum Problem {
    /// A shapefile record of shape type 0 (ESRI 1998, "Null Shapes") or a
    /// GeoJSON feature whose geometry is null.
    NoGeometry { what: &'static str },
    /// Record content that does not follow its format (a count that does
    /// not fit the record, an unknown shape type, malformed JSON).
    Malformed { message: String },
    /// A CSV coordinate that is blank or not a number.
    NotANumber { column: String, text: String },
    /// CSV coordinates outside longitude [-180, 180] / latitude [-90, 90];
    /// `swapped` when they fit the reading with the two columns exchanged.
    OutOfRange { lon: f64, lat: f64, swapped: bool },
    /// An attribute that cannot be read as its declared type.
    Attribute { field: String, message: String },
    /// The geometry fails ambit's checks (or reprojection).
    Geometry(GeomError),
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Problem::NoGeometry { what } => write!(f, "{what}"),
            Problem::Malformed { message } => write!(f, "{message}"),
            Problem::NotANumber { column, text } if text.trim().is_empty() => {
                write!(f, "column {column} is blank")
            }
            Problem::NotANumber { column, text } => {
                write!(f, "column {column} holds {text:?}, which is not a number")
            }
            Problem::OutOfRange { lon, lat, swapped: true } => write!(
                f,
                "longitude {lon}, latitude {lat} is outside latitude [-90, 90], but read the other way round (longitude {lat}, latitude {lon}) it is valid: are the longitude and latitude columns swapped? name them with the options lon and lat"
            ),
            Problem::OutOfRange { lon, lat, .. } => write!(
                f,
                "longitude {lon}, latitude {lat} is outside longitude [-180, 180] / latitude [-90, 90]: the coordinates look projected (give their definition with the option srs) or corrupt"
            ),
            Problem::Attribute { field, message } => write!(f, "field {field}: {message}"),
            Problem::Geometry(e) => write!(f, "{e}"),
        }
    }
}

/// An error that stops reading: the message names the file (and the row).
#[derive(Clone, Debug, PartialEq)]
pub enum ReadError {
    /// The options argument is not what ambit_read takes.
    Options { message: String },
    /// No file matches the path or pattern.
    NoMatch { pattern: String },
    /// The operating system could not read a file.
    Io { file: String, message: String },
    /// A file whose format the name does not tell.
    UnknownFormat { file: String },
    /// A shapefile without one of its required parts (ESRI 1998: the main
    /// file .shp, the index .shx and the dBASE table .dbf).
    MissingPart { file: String, part: &'static str },
    /// A file whose structure is broken beyond one row.
    Corrupt { file: String, message: String },
    /// A spatial reference definition that cannot be used.
    Definition { file: String, message: String },
    /// A row that cannot be read, when bad rows are errors.
    BadRow {
        file: String,
        row: u64,
        problem: Problem,
    },
    /// The computation was interrupted.
    Interrupted,
}

impl fmt::Display for ReadError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ReadError::Options { message } => write!(f, "options: {message}"),
            ReadError::NoMatch { pattern } => write!(
                f,
                "no file matches {pattern:?} (a path, or a pattern with * and ? in its last part)"
            ),
            ReadError::Io { file, message } => write!(f, "{file}: {message}"),
            ReadError::UnknownFormat { file } => write!(
                f,
                "{file}: cannot tell the format from the name (.shp, .zip, .csv, .tsv, .txt, .geojson, .json, .ndjson, .geojsonl); give it with the option format"
            ),
            ReadError::MissingPart { file, part } => write!(
                f,
                "{file}: the shapefile has no {part} file beside it; a shapefile is read from its .shp, .shx and .dbf together (an incomplete download or unzip?)"
            ),
            ReadError::Corrupt { file, message } => write!(f, "{file}: {message}"),
            ReadError::Definition { file, message } => write!(f, "{file}: {message}"),
            ReadError::BadRow { file, row, problem } => write!(
                f,
                "{file}, row {row}: {problem} (to keep such rows with a NULL geom and the reason in column problem, pass '{{\"bad_rows\": \"keep\"}}')"
            ),
            ReadError::Interrupted => write!(f, "interrupted"),
        }
    }
}

impl std::error::Error for ReadError {}
