//! Every key the reader accepts is documented in README.md: the key lists
//! of `src/show/keys.rs` (and any other `*_KEYS` list of the reader) are read
//! from the source, and each key must appear in backticks in the README.

use std::path::Path;

/// The quoted strings of every `const *_KEYS: &[&str] = &[...];` in `text`.
fn key_lists(text: &str) -> Vec<(String, Vec<String>)> {
    let mut out = Vec::new();
    let mut rest = text;
    while let Some(at) = rest.find("_KEYS: &[&str] = &[") {
        let name_start = rest[..at].rfind(' ').map_or(0, |i| i + 1);
        let name = format!("{}_KEYS", &rest[name_start..at]);
        let body_start = at + "_KEYS: &[&str] = &[".len();
        let body_end = body_start + rest[body_start..].find("];").expect("a closed list");
        let body = &rest[body_start..body_end];
        let keys = body
            .lines()
            .map(|l| l.split("//").next().unwrap_or(""))
            .flat_map(|l| l.split('"').skip(1).step_by(2).map(str::to_string))
            .collect();
        out.push((name, keys));
        rest = &rest[body_end..];
    }
    out
}

#[test]
fn every_key_of_the_reader_is_in_the_readme() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("README.md")).unwrap();
    let mut lists = Vec::new();
    for entry in std::fs::read_dir(root.join("src/show")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "rs") {
            lists.extend(key_lists(&std::fs::read_to_string(&path).unwrap()));
        }
    }
    let names: Vec<&str> = lists.iter().map(|(n, _)| n.as_str()).collect();
    // The lists this test is meant to read are found (the parse works).
    for must in [
        "TOP_KEYS",
        "SHOW_KEYS",
        "PROP_KEYS",
        "PATTERN_KEYS",
        "CUE_KEYS",
    ] {
        assert!(names.contains(&must), "{must} not found among {names:?}");
    }
    let mut missing = Vec::new();
    for (list, keys) in &lists {
        assert!(!keys.is_empty(), "{list} read as empty");
        for key in keys {
            if !readme.contains(&format!("`{key}`")) && !readme.contains(&format!("[{key}")) {
                missing.push(format!("{key} ({list})"));
            }
        }
    }
    assert!(
        missing.is_empty(),
        "keys missing from README.md: {missing:?}"
    );
}

#[test]
fn the_key_lists_are_read_with_their_comments_left_out() {
    let text = "pub(super) const A_KEYS: &[&str] = &[\n    \"a\", // \"not\"\n    \"b\",\n];\n";
    let lists = key_lists(text);
    assert_eq!(lists, vec![("A_KEYS".into(), vec!["a".into(), "b".into()])]);
}

#[test]
fn the_readme_names_the_rust_version_cargo_asks_for() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let cargo = std::fs::read_to_string(root.join("Cargo.toml")).unwrap();
    let version = cargo
        .lines()
        .find_map(|l| l.strip_prefix("rust-version = "))
        .expect("Cargo.toml has a rust-version")
        .trim_matches('"');
    let readme = std::fs::read_to_string(root.join("README.md")).unwrap();
    assert!(
        readme.contains(&format!("Rust {version} or newer")),
        "README.md should say \"Rust {version} or newer\""
    );
}
