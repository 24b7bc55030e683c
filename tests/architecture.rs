//! The layering of DEVELOPERS.md, checked: only the SQL surface (src/sql/)
//! and the entry point (src/lib.rs) know SQLite, and `unsafe` appears only
//! where SQLite's C interface is met: the entry point, the virtual tables
//! (whose rusqlite traits are unsafe to implement) and the sweep's query
//! reader; there every unsafe block or impl carries a SAFETY comment.

use std::path::Path;

fn sources(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            sources(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn only_the_sql_layer_imports_rusqlite_and_only_the_entry_point_is_unsafe() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut files = Vec::new();
    sources(&root.join("src"), &mut files);
    assert!(files.len() > 10);
    for file in files {
        let rel = file
            .strip_prefix(root)
            .unwrap()
            .to_string_lossy()
            .into_owned();
        let text = std::fs::read_to_string(&file).unwrap();
        let sql_side = rel.starts_with("src/sql/") || rel == "src/lib.rs";
        if !sql_side {
            assert!(
                !text.contains("rusqlite"),
                "{rel} uses rusqlite; only src/sql/ may (keep the core pure)"
            );
        }
        let ffi = [
            "src/lib.rs",
            "src/sql/entry.rs",
            "src/sql/tables.rs",
            "src/sql/sweep.rs",
            "src/sql/gpkg.rs",
            "src/sql/reproject.rs",
            "src/sql/interrupt.rs",
            "src/sql/read.rs",
            "src/sql/layer_from.rs",
        ]
        .contains(&rel.as_str());
        if !ffi {
            assert!(
                !text.contains("unsafe "),
                "{rel} uses unsafe; only the code at SQLite's C interface may"
            );
        } else if rel != "src/lib.rs" && rel != "src/sql/entry.rs" {
            let lines: Vec<&str> = text.lines().collect();
            for (i, line) in lines.iter().enumerate() {
                if line.contains("unsafe ") && !line.trim_start().starts_with("//") {
                    let before = &lines[i.saturating_sub(6)..i];
                    assert!(
                        before
                            .iter()
                            .any(|l| l.contains("SAFETY") || l.contains("# Safety")),
                        "{rel}:{}: unsafe without a SAFETY comment just above",
                        i + 1
                    );
                }
            }
        }
    }
}
