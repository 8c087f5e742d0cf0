//! `docs/conventions.md` is the project's reference for its conventions:
//! every citation of one of its sections names a section that exists, and no
//! file of the project points at a document outside the repository.

use std::fs;
use std::path::{Path, PathBuf};

const ROOT: &str = env!("CARGO_MANIFEST_DIR");

/// Headings of `docs/conventions.md`, without the leading `#`s.
fn headings() -> Vec<String> {
    let text = fs::read_to_string(Path::new(ROOT).join("docs/conventions.md")).unwrap();
    text.lines()
        .filter(|l| l.starts_with('#'))
        .map(|l| l.trim_start_matches('#').trim().to_owned())
        .collect()
}

/// Every text file of the project that cites or documents conventions.
fn project_files() -> Vec<PathBuf> {
    fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
        for e in fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                walk(&p, out);
            } else if matches!(
                p.extension().and_then(|x| x.to_str()),
                Some("rs" | "md" | "toml" | "c" | "h")
            ) {
                out.push(p);
            }
        }
    }
    let mut out = Vec::new();
    for d in [
        "src",
        "tests",
        "benches",
        "docs",
        "firmware-formats",
        "shows",
    ] {
        walk(&Path::new(ROOT).join(d), &mut out);
    }
    for f in ["README.md", "DEVELOPERS.md", "Cargo.toml", "clippy.toml"] {
        out.push(Path::new(ROOT).join(f));
    }
    out
}

/// The section names cited: a quoted name right after the file name, after
/// a comma or in parentheses, on the same line (the forms the next test
/// shows).
fn citations(text: &str) -> Vec<String> {
    let key = "conventions.md";
    let mut out = Vec::new();
    let mut rest = text;
    while let Some(i) = rest.find(key) {
        rest = &rest[i + key.len()..];
        let after = rest.strip_prefix('`').unwrap_or(rest);
        let Some(name) = after
            .strip_prefix(", \"")
            .or_else(|| after.strip_prefix(" (\""))
        else {
            continue;
        };
        if let Some(end) = name.find(['"', '\n']) {
            out.push(name[..end].to_owned());
        }
    }
    out
}

#[test]
fn the_citation_parser_finds_both_forms() {
    // Worked by hand: the two ways the project cites a section.
    let t = "see docs/conventions.md, \"Motion\" and `docs/conventions.md` (\"Viewport\"); \
             docs/conventions.md alone";
    assert_eq!(citations(t), ["Motion", "Viewport"]);
}

#[test]
fn every_cited_section_exists() {
    let heads = headings();
    for want in [
        "Space",
        "Planes and clock angles",
        "Motion",
        "Events",
        "Colour on the frames",
        "Command line",
        "Program form",
    ] {
        assert!(heads.iter().any(|h| h == want), "no section {want:?}");
    }
    let mut cited = 0;
    for f in project_files() {
        let text = fs::read_to_string(&f).unwrap();
        for name in citations(&text) {
            cited += 1;
            assert!(
                heads.contains(&name),
                "{} cites docs/conventions.md section {name:?}, which does not exist",
                f.display()
            );
        }
    }
    assert!(cited >= 10, "only {cited} citations found");
}

#[test]
fn no_file_points_outside_the_repository() {
    // The words are put together here so that this file does not match itself.
    let banned = [
        ["/wo", "rk/"].concat(),
        ["shared", "/contract"].concat(),
        ["outside ", "contract"].concat(),
        ["the ", "brief"].concat(),
    ];
    for f in project_files() {
        let text = fs::read_to_string(&f).unwrap().to_lowercase();
        for b in &banned {
            assert!(!text.contains(b.as_str()), "{} names {b:?}", f.display());
        }
    }
}
