//! Bad show files in `tests/bad/`, each carrying its expected errors as
//! comments: `# error: LINE:COL KEY: MESSAGE [| HELP]` (and warnings as
//! `# warning: ...`). Every error and warning the file produces must be
//! expected, and every expected one must appear.

use std::path::Path;

use glowscore::diag::{Diagnostic, Severity};

fn render(d: &Diagnostic) -> (String, String) {
    let (_, line, col) = d.location().unwrap_or_default();
    let label = match d.severity {
        Severity::Error => "error",
        Severity::Warning => "warning",
    };
    let head = format!(
        "{label}: {line}:{col} {}: {}",
        d.key.clone().unwrap_or_default(),
        d.message
    );
    (head, d.help.clone().unwrap_or_default())
}

fn check_file(path: &Path) {
    let text = std::fs::read_to_string(path).unwrap();
    let expected: Vec<(String, Option<String>)> = text
        .lines()
        .filter_map(|l| l.strip_prefix("# "))
        .filter(|l| l.starts_with("error: ") || l.starts_with("warning: "))
        .map(|e| match e.split_once(" | ") {
            Some((head, help)) => (head.to_string(), Some(help.to_string())),
            None => (e.to_string(), None),
        })
        .collect();
    assert!(
        !expected.is_empty(),
        "{}: no expected errors written",
        path.display()
    );
    let diags = match glowscore::show::parse(&path.display().to_string(), text.clone()) {
        Ok(_) => panic!("{}: parsed without errors", path.display()),
        Err(d) => d,
    };
    let got: Vec<(String, String)> = diags.0.iter().map(render).collect();
    for (head, help) in &expected {
        let found = got
            .iter()
            .any(|(h, hp)| h.starts_with(head) && help.as_ref().is_none_or(|x| hp == x));
        assert!(
            found,
            "{}: expected `{head}` (help {help:?}), got:\n{got:#?}",
            path.display()
        );
    }
    for (h, _) in &got {
        assert!(
            expected.iter().any(|(head, _)| h.starts_with(head)),
            "{}: unexpected error `{h}`",
            path.display()
        );
    }
}

#[test]
fn every_bad_show_reports_exactly_its_expected_errors() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad");
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    files.sort();
    assert!(files.len() >= 3);
    for f in files {
        check_file(&f);
    }
}

#[test]
fn diagnostics_render_file_line_column_and_a_caret() {
    let err = glowscore::show::parse("show.toml", "[show]\nframe_rate = 500\nbpm = -1\n".into())
        .unwrap_err();
    let text = err.to_string();
    assert!(
        text.contains("show.toml:3:7: error in `show.bpm`: must be between 1 and 1000, got -1"),
        "{text}"
    );
    assert!(text.contains("3 | bpm = -1\n  |       ^^"), "{text}");
}

#[test]
fn a_show_with_too_many_props_is_refused_by_the_reader() {
    // Every prop keeps four table files open while it compiles: a show of
    // more than `MAX_PROPS` is refused before anything is simulated.
    let mut text = String::from("[show]\nframe_rate = 100\nbpm = 60\n");
    for i in 0..=glowscore::show::MAX_PROPS {
        text.push_str(&format!(
            "[prop.p{i}]\ntether_m = 0.5\nanchor_m = [{i}, 1.5, 0]\n"
        ));
    }
    let err = glowscore::show::parse("many.toml", text)
        .unwrap_err()
        .to_string();
    assert!(err.contains("257 props, more than the 256"), "{err}");
}

#[test]
fn a_show_path_that_is_not_a_file_is_refused() {
    // A folder (and a named pipe alike) is refused before reading.
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR"));
    let err = glowscore::show::load(dir).unwrap_err().to_string();
    assert!(err.contains("it is a folder, not a show file"), "{err}");
}

#[test]
fn a_show_file_that_is_not_utf8_is_refused_at_its_bad_byte() {
    // 0xFF never occurs in UTF-8 (RFC 3629, section 1): on line 3 it comes
    // after the five characters `x = "`, so it is column 6.
    let mut bytes = b"[show]\nframe_rate = 100\nx = \"".to_vec();
    bytes.push(0xff);
    bytes.extend_from_slice(b"\"\n");
    let err = glowscore::show::parse_bytes("latin.toml", bytes).unwrap_err();
    assert_eq!(err.0.len(), 1);
    let d = &err.0[0];
    assert_eq!(d.location(), Some(("latin.toml".to_string(), 3, 6)));
    assert!(
        d.message.contains("not UTF-8") && d.message.contains("0xff"),
        "{d}"
    );
    // A two-byte character before it counts as one column; a lead byte
    // without its continuation byte is as bad (RFC 3629, section 3).
    let mut bytes = "é = \"".as_bytes().to_vec();
    bytes.push(0xc3); // a lead byte with no continuation
    bytes.push(b'"');
    let err = glowscore::show::parse_bytes("t.toml", bytes).unwrap_err();
    assert_eq!(err.0[0].location(), Some(("t.toml".to_string(), 1, 6)));
}

#[test]
fn the_old_driver_name_is_read_with_a_warning_not_an_error() {
    let text = "[show]\nframe_rate = 100\nbpm = 100\n\
                [prop.p]\ntether_m = 0.5\nanchor_m = [0, 1.5, 0]\nled_driver = \"one_wire\"\n\
                [pattern.x]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0.1\nhead_turns = 1\n\
                [[section]]\nbars = [1, 2]\np = \"x\"\n";
    let show = glowscore::show::parse("old.toml", text.into()).expect("a warning only");
    assert_eq!(
        show.props[0].led_driver,
        glowscore::model::LedDriver::DataOnly
    );
    assert_eq!(show.notes.len(), 1);
    let note = &show.notes[0];
    assert_eq!(note.severity, Severity::Warning);
    assert_eq!(note.location(), Some(("old.toml".to_string(), 7, 14)));
    assert!(
        note.to_string()
            .starts_with("old.toml:7:14: warning in `prop.p.led_driver`")
    );
    // The new name reads without a note.
    let show = glowscore::show::parse("new.toml", text.replace("one_wire", "data_only")).unwrap();
    assert!(show.notes.is_empty());
}

/// 45 000 valid patterns, then 5 000 patterns in error (`beats = 0`).
fn huge_invalid_show() -> String {
    let mut text = String::from("[show]\nframe_rate = 100\nbpm = 100\n");
    text.push_str("[prop.p]\ntether_m = 0.5\nanchor_m = [0, 1.5, 0]\n");
    for i in 0..50_000 {
        let beats = if i < 45_000 { 4 } else { 0 };
        text.push_str(&format!(
            "[pattern.q{i}]\nplane = \"wall\"\nbeats = {beats}\nhand_radius_m = 0.1\nhead_turns = 1\n"
        ));
    }
    text.push_str("[[section]]\nbars = [1, 2]\np = \"q0\"\n");
    text
}

#[test]
fn a_huge_invalid_show_reports_every_error_and_prints_fifty() {
    // Timing is measured by hand (DEVELOPERS.md), not here: this checks
    // the count and the cap.
    let err = glowscore::show::parse("huge.toml", huge_invalid_show()).unwrap_err();
    assert_eq!(err.error_count(), 5_000);
    let first = err.0[0].location().unwrap();
    // Pattern q45000 starts on line 7 + 45 000 * 5: its `beats` is 2 lines on.
    assert_eq!((first.1, first.2), (6 + 45_000 * 5 + 3, 9));
    let text = err.to_string();
    assert_eq!(text.matches(": error in `pattern.").count(), 50);
    assert!(
        text.contains("\nand 4950 more errors\n5000 errors\n"),
        "{}",
        &text[text.len() - 200..]
    );
}

#[test]
fn more_resync_bars_than_a_table_header_holds_are_refused_at_the_key() {
    // A table header's length is a u16: 40 bytes and 8 a mark hold 8186
    // marks (firmware-formats/full-table.md, "Resync marks").
    let show = |n: u32| {
        let bars: Vec<String> = (1..=n).map(|b| b.to_string()).collect();
        format!(
            "[show]\nframe_rate = 10\nbpm = 1000\nresync_bars = [{}]\n\
             [prop.p]\ntether_m = 0.5\nanchor_m = [0, 1.5, 0]\n\
             [pattern.w]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0.1\nhead_turns = 1\n\
             [[section]]\nbars = [1, 9000]\np = \"w\"\n",
            bars.join(", ")
        )
    };
    let ok = glowscore::show::parse("marks.toml", show(8186)).unwrap();
    assert_eq!(ok.resync_bars.len(), 8186);
    let err = glowscore::show::parse("marks.toml", show(8187)).unwrap_err();
    assert_eq!(err.error_count(), 1);
    let (line, col) = {
        let l = err.0[0].location().unwrap();
        (l.1, l.2)
    };
    assert_eq!((line, col), (4, 15));
    let text = err.to_string();
    assert!(
        text.contains("show.resync_bars")
            && text.contains("8187 resync bars are more than a table can mark (8186)"),
        "{text}"
    );
}
