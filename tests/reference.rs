//! The function reference in README.md is the one place each SQL function is
//! documented. This test runs every example there in the stock shell and
//! compares what it prints with the result block under it, and checks that
//! the reference covers exactly the functions the library registers.

mod common;

use std::collections::BTreeSet;

struct Example {
    function: String,
    sql: String,
    expected: String,
}

/// The `### name(...)` entries of the "Function reference" section, each
/// with its ```sql block and the ```text block after it.
fn reference() -> Vec<Example> {
    let readme = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md"))
        .expect("README.md");
    let section = readme
        .split("\n## Function reference\n")
        .nth(1)
        .expect("README has a Function reference section");
    let section = section.split("\n## ").next().unwrap();
    let mut examples = Vec::new();
    for entry in section.split("\n### ").skip(1) {
        let function = entry.split(['(', '\n']).next().unwrap().trim().to_string();
        let block = |fence: &str, from: usize| -> Option<(String, usize)> {
            let start = entry[from..].find(fence)? + from + fence.len();
            let end = entry[start..].find("\n```")? + start;
            Some((entry[start..end].trim().to_string(), end + 4))
        };
        let (sql, after) = block("```sql\n", 0)
            .unwrap_or_else(|| panic!("reference entry {function} has no ```sql example"));
        let (expected, _) = block("```text\n", after)
            .unwrap_or_else(|| panic!("reference entry {function} has no ```text result"));
        examples.push(Example {
            function,
            sql,
            expected,
        });
    }
    examples
}

#[test]
fn every_reference_example_prints_its_documented_result() {
    let examples = reference();
    assert!(examples.len() >= 17, "only {} entries", examples.len());
    for e in &examples {
        let got = common::query(&e.sql);
        assert_eq!(got, e.expected, "example of {} in README.md", e.function);
    }
}

#[test]
fn the_reference_documents_exactly_the_registered_functions() {
    let documented: BTreeSet<String> = reference()
        .iter()
        .map(|e| e.function.to_lowercase())
        .collect();
    let registered: BTreeSet<String> = common::query(
        "SELECT DISTINCT name FROM pragma_function_list \
         WHERE name LIKE 'st\\_%' ESCAPE '\\' OR name LIKE 'ambit\\_%' ESCAPE '\\' \
         OR name IN ('stddev_samp', 'stddev_pop', 'var_samp', 'var_pop') \
         UNION SELECT name FROM pragma_module_list WHERE name LIKE 'ambit\\_%' ESCAPE '\\';",
    )
    .lines()
    .map(str::to_string)
    .collect();
    assert_eq!(documented, registered);
}
