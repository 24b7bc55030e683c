//! Finding the files a path names and getting their bytes: a path or a
//! pattern (`*` any run of characters, `?` one character, in the last
//! part of the path only; matches in name order), plain files and the
//! members of a zip archive (PKWARE APPNOTE; stored and deflated members).
//!
//! A file is read whole into memory, one at a time; a zip member's size is
//! checked against what deflate can produce from its compressed bytes
//! (at most about 1032 to 1) before it is inflated, so a hostile archive
//! costs memory in proportion to its own size.

use std::io::Read;
use std::path::{Path, PathBuf};

use super::ReadError;

/// The most a deflated member may expand: deflate's limit is about 1032 to
/// 1 (RFC 1951 allows 258 bytes from a 2-bit code); 1100 leaves room.
const MAX_RATIO: u64 = 1100;

/// The endings of the zip members ambit_read reads.
pub const MEMBERS: [&str; 10] = [
    ".shp",
    ".shx",
    ".dbf",
    ".prj",
    ".cpg",
    ".csv",
    ".tsv",
    ".geojson",
    ".ndjson",
    ".geojsonl",
];

/// True when `name` matches `pattern` (`*` and `?`).
pub fn matches(pattern: &[char], name: &[char]) -> bool {
    // Iterative wildcard matching with one backtrack point: linear in
    // practice, never exponential.
    let (mut p, mut n) = (0, 0);
    let (mut star, mut mark) = (None, 0);
    while n < name.len() {
        if p < pattern.len() && (pattern[p] == '?' || pattern[p] == name[n]) {
            p += 1;
            n += 1;
        } else if p < pattern.len() && pattern[p] == '*' {
            star = Some(p);
            mark = n;
            p += 1;
        } else if let Some(s) = star {
            p = s + 1;
            mark += 1;
            n = mark;
        } else {
            return false;
        }
    }
    pattern[p..].iter().all(|&c| c == '*')
}

/// The files a path or pattern names, in name order.
pub fn expand(pattern: &str) -> Result<Vec<PathBuf>, ReadError> {
    let path = Path::new(pattern);
    let last = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    if !last.contains(['*', '?']) {
        if path.is_file() {
            return Ok(vec![path.to_path_buf()]);
        }
        return Err(ReadError::NoMatch {
            pattern: pattern.to_string(),
        });
    }
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let wanted: Vec<char> = last.chars().collect();
    let entries = std::fs::read_dir(&dir).map_err(|e| ReadError::Io {
        file: dir.display().to_string(),
        message: format!("cannot list the folder: {e}"),
    })?;
    let mut found: Vec<PathBuf> = entries
        .filter_map(|e| e.ok())
        .filter(|e| e.path().is_file())
        .filter(|e| {
            let name: Vec<char> = e.file_name().to_string_lossy().chars().collect();
            matches(&wanted, &name)
        })
        .map(|e| {
            if path.parent().is_some_and(|d| !d.as_os_str().is_empty()) {
                e.path()
            } else {
                PathBuf::from(e.file_name())
            }
        })
        .collect();
    found.sort();
    if found.is_empty() {
        return Err(ReadError::NoMatch {
            pattern: pattern.to_string(),
        });
    }
    Ok(found)
}

/// The bytes of a plain file.
pub fn read(path: &Path) -> Result<Vec<u8>, ReadError> {
    std::fs::read(path).map_err(|e| ReadError::Io {
        file: path.display().to_string(),
        message: format!("cannot read the file: {e}"),
    })
}

/// The bytes of a plain file, `None` when it does not exist.
pub fn read_if_present(path: &Path) -> Result<Option<Vec<u8>>, ReadError> {
    match std::fs::read(path) {
        Ok(b) => Ok(Some(b)),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(ReadError::Io {
            file: path.display().to_string(),
            message: format!("cannot read the file: {e}"),
        }),
    }
}

/// A sibling of `path` with extension `ext` (lower or upper case, or as
/// the path's own extension is written), if there is one.
pub fn sibling(path: &Path, ext: &str) -> Result<Option<(PathBuf, Vec<u8>)>, ReadError> {
    let own_upper = path
        .extension()
        .is_some_and(|e| e.to_string_lossy().chars().all(|c| c.is_ascii_uppercase()));
    let mut tries = vec![ext.to_ascii_uppercase(), ext.to_ascii_lowercase()];
    if !own_upper {
        tries.reverse();
    }
    for e in tries {
        let p = path.with_extension(&e);
        if let Some(b) = read_if_present(&p)? {
            return Ok(Some((p, b)));
        }
    }
    Ok(None)
}

/// The members of a zip archive that can be part of a dataset (see
/// [`MEMBERS`]): (name, bytes), in archive order. Directories, `__MACOSX/`
/// resource files and other members (metadata, spatial index files) are
/// not inflated. The sizes of all members together may not exceed what
/// deflate can produce from the archive, so overlapping members cannot
/// multiply the memory used.
pub fn unzip(bytes: Vec<u8>, file: &str) -> Result<Vec<(String, Vec<u8>)>, ReadError> {
    let corrupt = |message: String| ReadError::Corrupt {
        file: file.to_string(),
        message,
    };
    let archive_len = bytes.len();
    let mut archive = zip::ZipArchive::new(std::io::Cursor::new(bytes))
        .map_err(|e| corrupt(format!("not a readable zip archive: {e}")))?;
    let budget = (archive_len as u64)
        .saturating_mul(MAX_RATIO)
        .saturating_add(1024);
    let mut total = 0u64;
    let mut out = Vec::new();
    for i in 0..archive.len() {
        let mut entry = archive
            .by_index(i)
            .map_err(|e| corrupt(format!("member {} cannot be read: {e}", i + 1)))?;
        let name = entry.name().to_string();
        let lower = name.to_ascii_lowercase();
        if entry.is_dir()
            || name.starts_with("__MACOSX/")
            || !MEMBERS.iter().any(|e| lower.ends_with(e))
        {
            continue;
        }
        let size = entry.size();
        total = total.saturating_add(size);
        if total > budget {
            return Err(corrupt(format!(
                "its members claim {total} bytes in all, more than deflate can produce from an archive of {archive_len} bytes: the archive is corrupt"
            )));
        }
        let packed = entry.compressed_size();
        if size > packed.saturating_mul(MAX_RATIO).saturating_add(1024) {
            return Err(corrupt(format!(
                "member {name} claims {size} bytes from {packed} compressed bytes, more than deflate can produce: the archive is corrupt"
            )));
        }
        let mut data = Vec::new();
        // The size is bounded above by MAX_RATIO times the archive's bytes.
        data.try_reserve_exact(size as usize).map_err(|_| {
            corrupt(format!(
                "member {name} of {size} bytes does not fit in memory"
            ))
        })?;
        (&mut entry)
            .take(size.saturating_add(1))
            .read_to_end(&mut data)
            .map_err(|e| corrupt(format!("member {name} cannot be inflated: {e}")))?;
        if data.len() as u64 != size {
            return Err(corrupt(format!(
                "member {name} holds {} bytes but its header says {size}",
                data.len()
            )));
        }
        out.push((name, data));
    }
    Ok(out)
}
