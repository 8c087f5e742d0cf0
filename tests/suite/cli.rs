//! The command line a person expects: picture formats, one show length,
//! completions, a starter show, the help, and one rule for the streams
//! (results on stdout; progress, notes and errors on stderr).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_glowscore"))
}

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("shows")
        .join(name)
}

/// A fresh, empty folder for one test.
fn scratch(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("cli")
        .join(format!("{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn run(args: &[&str]) -> Output {
    bin().args(args).output().unwrap()
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

#[test]
fn preview_writes_a_jpeg_into_a_new_folder_and_refuses_other_names() {
    let dir = scratch("jpeg");
    let show = demo("moth-garden.toml");
    let show = show.to_str().unwrap();
    let jpg = dir.join("pictures/nested/bars.JPG");
    let out = run(&[
        "preview",
        show,
        "--out",
        jpg.to_str().unwrap(),
        "--bars",
        "5-5",
        "--size",
        "96x72",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let bytes = std::fs::read(&jpg).unwrap();
    // A JPEG starts with the SOI marker and a segment marker (ITU-T T.81).
    assert_eq!(&bytes[..3], &[0xff, 0xd8, 0xff]);
    let img = image::load_from_memory(&bytes).unwrap();
    assert_eq!((img.width(), img.height()), (96, 72));
    // The same picture as a PNG, for comparison: JPEG is lossy but close.
    let png = dir.join("bars.png");
    let out = run(&[
        "preview",
        show,
        "--out",
        png.to_str().unwrap(),
        "--bars",
        "5-5",
        "--size",
        "96x72",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let a = img.to_rgb8();
    let b = image::open(&png).unwrap().to_rgb8();
    let diff: u64 = a
        .as_raw()
        .iter()
        .zip(b.as_raw())
        .map(|(x, y)| u64::from(x.abs_diff(*y)))
        .sum();
    let mean = diff as f64 / a.as_raw().len() as f64;
    assert!(mean < 6.0, "mean difference {mean} per channel");
    // Another extension: refused before any work, nothing written.
    for name in ["bars.gif", "bars"] {
        let out = run(&["preview", show, "--out", dir.join(name).to_str().unwrap()]);
        assert_eq!(out.status.code(), Some(1));
        let err = text(&out.stderr);
        assert!(err.contains(".png, .jpg or .jpeg"), "{err}");
        assert!(!dir.join(name).exists());
    }
}

/// The seconds in "NNN.NNN s long".
fn length_in(s: &str) -> String {
    let end = s
        .find(" s long")
        .unwrap_or_else(|| panic!("no length in {s}"));
    let start = s[..end].rfind(['(', ' ']).unwrap() + 1;
    s[start..end].to_string()
}

#[test]
fn check_and_compile_give_the_same_show_length() {
    // salt-marsh-reel starts bar 1 after frame 0 and changes tempo: the
    // length is from frame 0 to the end of the last section in both.
    let show = demo("salt-marsh-reel.toml");
    let show = show.to_str().unwrap();
    let checked = run(&["check", show]);
    let dir = scratch("length");
    let compiled = run(&[
        "compile",
        show,
        "--out",
        dir.to_str().unwrap(),
        "--no-previews",
    ]);
    assert!(compiled.status.success(), "{}", text(&compiled.stderr));
    let a = length_in(&text(&checked.stdout));
    let b = length_in(&text(&compiled.stdout));
    assert_eq!(a, b);
    let json = run(&["check", show, "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&json.stdout).unwrap();
    let report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.join("report.json")).unwrap()).unwrap();
    let secs = v["duration_s"].as_f64().unwrap();
    assert_eq!(format!("{secs:.3}"), a);
    assert_eq!(report["duration_s"], v["duration_s"]);
    assert_eq!(report["compile"]["duration_s"].as_f64(), Some(secs));
    // And it is the tables' length: frames / frame rate.
    let frames = report["compile"]["frames"].as_f64().unwrap();
    let rate = report["compile"]["frame_rate_hz"].as_f64().unwrap();
    assert!(
        (frames / rate - secs).abs() <= 0.5 / rate,
        "{frames} / {rate} vs {secs}"
    );
}

#[test]
fn completions_are_printed_for_each_shell() {
    for shell in ["bash", "zsh", "fish", "elvish", "powershell"] {
        let out = run(&["completions", shell]);
        assert!(out.status.success(), "{shell}: {}", text(&out.stderr));
        let script = text(&out.stdout);
        for word in ["glowscore", "compile", "preview", "deny-warnings"] {
            assert!(script.contains(word), "{shell} lacks {word}");
        }
        assert!(out.stderr.is_empty());
    }
    let out = run(&["completions", "teletype"]);
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn the_starter_show_passes_check_and_is_never_written_over() {
    let dir = scratch("new");
    let name = dir.join("first/my-first-show");
    let out = run(&["new", name.to_str().unwrap()]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(out.stderr.is_empty(), "{}", text(&out.stderr));
    let file = dir.join("first/my-first-show.toml");
    assert!(text(&out.stdout).contains("my-first-show.toml"));
    let written = std::fs::read_to_string(&file).unwrap();
    assert!(written.contains("title = \"My First Show\""), "{written}");
    let checked = run(&["check", file.to_str().unwrap(), "--deny-warnings"]);
    assert!(
        checked.status.success(),
        "{}{}",
        text(&checked.stdout),
        text(&checked.stderr)
    );
    // Every command takes it.
    let events = run(&["events", file.to_str().unwrap(), "--json"]);
    assert!(events.status.success(), "{}", text(&events.stderr));
    // A second `new` with the same name leaves the file alone.
    std::fs::write(&file, "# mine\n").unwrap();
    let again = run(&["new", file.to_str().unwrap()]);
    assert_eq!(again.status.code(), Some(1));
    assert!(text(&again.stderr).contains("already exists"));
    assert_eq!(std::fs::read_to_string(&file).unwrap(), "# mine\n");
}

#[test]
fn the_help_names_every_prop_and_command() {
    let out = run(&["--help"]);
    assert!(out.status.success());
    let help = text(&out.stdout);
    for word in [
        "poi",
        "staffs",
        "strips",
        "compile",
        "events",
        "check",
        "preview",
        "new",
        "completions",
    ] {
        assert!(help.contains(word), "help lacks {word}:\n{help}");
    }
}

/// Asserts the stream rule for one run: status, and whether each stream
/// has text.
#[track_caller]
fn streams(args: &[&str], ok: bool, stdout: bool, stderr: bool) -> Output {
    let out = run(args);
    assert_eq!(
        out.status.success(),
        ok,
        "{args:?}: {}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    assert_eq!(
        !out.stdout.is_empty(),
        stdout,
        "{args:?} stdout: {}",
        text(&out.stdout)
    );
    assert_eq!(
        !out.stderr.is_empty(),
        stderr,
        "{args:?} stderr: {}",
        text(&out.stderr)
    );
    out
}

#[test]
fn results_go_to_stdout_and_errors_to_stderr_in_every_command() {
    let dir = scratch("streams");
    let show = demo("moth-garden.toml");
    let show = show.to_str().unwrap();
    let out = dir.join("out");
    let out = out.to_str().unwrap();
    let png = dir.join("p.png");
    let png = png.to_str().unwrap();
    // Results, and nothing on stderr (no progress into a pipe).
    streams(&["check", show], true, true, false);
    streams(&["check", show, "--json"], true, true, false);
    streams(&["events", show, "--json"], true, true, false);
    streams(&["events", show], true, true, false);
    let c = streams(
        &["compile", show, "--out", out, "--no-previews"],
        true,
        true,
        false,
    );
    assert!(text(&c.stdout).starts_with("compiled"));
    streams(
        &["compile", show, "--out", out, "--no-previews", "--quiet"],
        true,
        false,
        false,
    );
    streams(
        &[
            "preview", show, "--out", png, "--size", "48x36", "--bars", "1-1",
        ],
        true,
        true,
        false,
    );
    let wav = demo("tide-lamp-groove.wav");
    streams(
        &["tempo", wav.to_str().unwrap(), "--json"],
        true,
        true,
        false,
    );
    streams(&["completions", "bash"], true, true, false);
    // Errors: on stderr only (check --json also prints its report).
    let bad = dir.join("bad.toml");
    std::fs::write(&bad, "[show]\nframe_rate = 0\nbpm = 100\n").unwrap();
    let bad = bad.to_str().unwrap();
    streams(&["check", bad], false, false, true);
    streams(&["check", bad, "--json"], false, true, true);
    streams(&["events", bad], false, false, true);
    streams(&["compile", bad, "--out", out], false, false, true);
    streams(&["preview", bad, "--out", png], false, false, true);
    let missing = dir.join("missing.toml");
    let m = streams(&["check", missing.to_str().unwrap()], false, false, true);
    let err = text(&m.stderr);
    assert!(err.contains("missing.toml: no such file"), "{err}");
    assert!(!err.contains("invalid"), "{err}");
}

#[test]
fn compile_draws_progress_on_a_terminal_only_and_not_when_quiet() {
    // util-linux `script` runs the command on a pseudo-terminal; without it
    // there is no terminal to test with.
    if !Path::new("/usr/bin/script").exists() {
        eprintln!("no /usr/bin/script: skipped");
        return;
    }
    let dir = scratch("progress");
    let show = demo("moth-garden.toml");
    let on_tty = |extra: &str| {
        let cmd = format!(
            "{} compile {} --out {} --no-previews {extra} >/dev/null",
            env!("CARGO_BIN_EXE_glowscore"),
            show.display(),
            dir.join("out").display()
        );
        let out = Command::new("/usr/bin/script")
            .args(["-qc", &cmd, "/dev/null"])
            .output()
            .unwrap();
        assert!(out.status.success(), "{}", text(&out.stderr));
        text(&out.stdout)
    };
    assert!(on_tty("").contains("writing tables"));
    assert!(!on_tty("--quiet").contains("writing tables"));
    // Into a pipe: none (the stream test also checks stderr is empty).
    let piped = run(&[
        "compile",
        show.to_str().unwrap(),
        "--out",
        dir.join("out").to_str().unwrap(),
        "--no-previews",
    ]);
    assert!(!text(&piped.stderr).contains("writing tables"));
}
