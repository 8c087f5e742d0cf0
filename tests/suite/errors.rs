//! Bad show files in `tests/bad/`, each carrying its expected errors as
//! comments: `# error: LINE:COL KEY: MESSAGE [| HELP]`. Every error the
//! file produces must be expected, and every expected error must appear.

use std::path::Path;

use glowscore::diag::Diagnostic;

fn render(d: &Diagnostic) -> (String, String) {
    let (_, line, col) = d.location().unwrap_or_default();
    let head = format!(
        "{line}:{col} {}: {}",
        d.key.clone().unwrap_or_default(),
        d.message
    );
    (head, d.help.clone().unwrap_or_default())
}

fn check_file(path: &Path) {
    let text = std::fs::read_to_string(path).unwrap();
    let expected: Vec<(String, Option<String>)> = text
        .lines()
        .filter_map(|l| l.strip_prefix("# error: "))
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
        text.contains("show.toml:3:7: error in `show.bpm`: must be greater than 0"),
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
    assert!(err.contains("is not a file"), "{err}");
}
