//! Hostile and extreme shows: each is refused quickly, with its location,
//! and the same way by every command (`check`, `events`, `compile`,
//! `preview`); outputs too large are refused before writing; a full disk
//! names the file and the cause.

use std::path::{Path, PathBuf};
use std::process::Command;

use glowscore::model::WireOrder;
use glowscore::output::files::{Opening, PropFiles};
use glowscore::output::{TableForm, TableSpec};

fn scratch(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("refusals")
        .join(format!("{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// A valid one-poi show of `bars` bars, with `extra` appended.
fn base(bars: u32, extra: &str) -> String {
    format!(
        "[show]\nframe_rate = 100\nbpm = 100\n\n[prop.left]\ntether_m = 0.5\nanchor_m = [0, 1.5, 0]\n\n\
         [pattern.w]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0.1\nhead_turns = -3\n\n\
         [[section]]\nbars = [1, {bars}]\nleft = \"w\"\n{extra}"
    )
}

/// Runs every command on `file`; each must exit 1 with the same first
/// line of stderr, which must contain `expect`. Returns that line.
#[track_caller]
fn refused_alike(dir: &Path, file: &Path, expect: &str) -> String {
    let f = file.to_str().unwrap();
    let out = dir.join("out");
    let png = dir.join("p.png");
    let runs: [Vec<&str>; 4] = [
        vec!["check", f],
        vec!["events", f, "--json"],
        vec!["compile", f, "--out", out.to_str().unwrap()],
        vec!["preview", f, "--out", png.to_str().unwrap()],
    ];
    let mut first = None;
    for args in &runs {
        let run = Command::new(env!("CARGO_BIN_EXE_glowscore"))
            .args(args)
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&run.stderr).into_owned();
        assert_eq!(run.status.code(), Some(1), "{args:?}: {err}");
        assert!(run.stdout.is_empty(), "{args:?} printed a result");
        let line = err.lines().next().unwrap_or("").to_string();
        assert!(line.contains(expect), "{args:?}: `{line}` lacks `{expect}`");
        match &first {
            None => first = Some(line),
            Some(l) => assert_eq!(l, &line, "{args:?} differs"),
        }
    }
    assert!(!out.exists() && !png.exists(), "something was written");
    first.unwrap()
}

#[test]
fn tiny_huge_and_inexact_numbers_are_refused_at_their_value_by_every_command() {
    let dir = scratch("numbers");
    let file = dir.join("show.toml");
    let cases = [
        (
            "bpm = 100",
            "bpm = 5e-324",
            "show.toml:3:7: error in `show.bpm`",
        ),
        (
            "beats = 4",
            "beats = 5e-324",
            "show.toml:11:9: error in `pattern.w.beats`",
        ),
        (
            "frame_rate = 100",
            "frame_rate = 9007199254740993",
            "show.toml:2:14: error in `show.frame_rate`",
        ),
    ];
    for (from, to, expect) in cases {
        std::fs::write(&file, base(4, "").replace(from, to)).unwrap();
        refused_alike(&dir, &file, expect);
    }
    // A picture a hair wide (and the picture's path rule).
    std::fs::copy(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/moon-and-tide.png"),
        dir.join("moon.png"),
    )
    .unwrap();
    let cue =
        "\n[[cue]]\nprop = \"left\"\nbars = [1, 1]\nimage = \"moon.png\"\nimage_width_m = 5e-324\n";
    std::fs::write(&file, base(4, cue)).unwrap();
    let line = refused_alike(&dir, &file, "error in `cue[0].image_width_m`");
    assert!(line.contains("show.toml:23:17"), "{line}");
}

#[test]
fn a_file_that_is_not_utf8_is_refused_at_its_byte_by_every_command() {
    let dir = scratch("utf8");
    let file = dir.join("latin.toml");
    let mut bytes = base(4, "").into_bytes();
    // "title = \"caf\xe9\"" on line 2: 0xE9 alone is not UTF-8.
    let at = bytes.iter().position(|&b| b == b'\n').unwrap() + 1;
    let mut line = b"title = \"caf".to_vec();
    line.extend_from_slice(&[0xe9, b'"', b'\n']);
    bytes.splice(at..at, line);
    std::fs::write(&file, bytes).unwrap();
    refused_alike(
        &dir,
        &file,
        "latin.toml:2:13: error: the show file is not UTF-8",
    );
}

#[test]
fn too_many_led_frames_are_refused_naming_the_keys_and_lines_behind_them() {
    // 4096 LEDs at 100 000 frames a second for 100 bars at 1000 bpm:
    // 2.4e6 frames, 9.8e9 LED-frames.
    let dir = scratch("frames");
    let file = dir.join("long.toml");
    let text = base(100, "")
        .replace("frame_rate = 100", "frame_rate = 100000")
        .replace("bpm = 100", "bpm = 1000")
        .replace(
            "tether_m = 0.5",
            "tether_m = 0.5\nstrip = { leds = 4096, from_m = 0.1, to_m = 0.5 }",
        );
    std::fs::write(&file, text).unwrap();
    let line = refused_alike(&dir, &file, "LED-frames");
    assert!(line.contains("`show.frame_rate` = 100000 ("), "{line}");
    assert!(line.contains("long.toml:2)"), "{line}");
    assert!(
        line.contains("`section[0].bars` ending at bar 100"),
        "{line}"
    );
    assert!(line.contains("prop `left` with 4096 LEDs"), "{line}");
}

#[test]
fn outputs_too_large_are_refused_before_writing_with_the_options_that_avoid_them() {
    // 4096 LEDs at 1000 frames a second for 150 s: 6.1e8 LED-frames, 1.8 GB
    // of full table (under its own limit) but up to 7.4 GB of CSV.
    let dir = scratch("size");
    let file = dir.join("big.toml");
    let text = base(63, "")
        .replace("frame_rate = 100", "frame_rate = 1000")
        .replace(
            "tether_m = 0.5",
            "tether_m = 0.5\nstrip = { leds = 4096, from_m = 0.1, to_m = 0.5 }",
        );
    std::fs::write(&file, text).unwrap();
    let out = dir.join("out");
    let run = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args([
            "compile",
            file.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(err.contains("the outputs would take up to"), "{err}");
    assert!(err.contains("csv 7."), "{err}");
    assert!(err.contains("more than the limit of 4.29 GB"), "{err}");
    assert!(
        err.contains("`show.frame_rate` = 1000 (") && err.contains("big.toml:2)"),
        "{err}"
    );
    assert!(err.contains("--skip csv (saves up to"), "{err}");
    assert!(!out.exists(), "the folder was made");
    // The numbers behind it, by hand: a row is at most the frame number
    // (6 digits), the time (3 + 7 characters), 12 characters per LED and
    // the commas and newline.
    let show = glowscore::show::parse_bytes("big.toml", std::fs::read(&file).unwrap()).unwrap();
    let frames = show.frame_count();
    let opts = glowscore::compile::CompileOptions::new(out.clone());
    let parts = glowscore::compile::output_bytes(&show, &opts, &[]);
    let csv = parts.iter().find(|p| p.0 == "csv").unwrap().1;
    let head: u64 = 13
        + (0..4096u64)
            .map(|i| 6 + 3 * (i.max(1).ilog10() as u64 + 1))
            .sum::<u64>();
    assert_eq!(csv, head + frames * (6 + 1 + 10 + 12 * 4096 + 1));
    let full = parts.iter().find(|p| p.0 == "full").unwrap().1;
    assert_eq!(full, frames * 4096 * 3 + 48);
}

#[test]
fn a_full_disk_names_the_file_and_says_so() {
    // Linux's /dev/full refuses every write with ENOSPC: the table files of
    // a prop are made links to it, as a disk that fills up would refuse.
    if !Path::new("/dev/full").exists() {
        eprintln!("no /dev/full here: skipped");
        return;
    }
    let dir = scratch("full");
    #[cfg(unix)]
    for suffix in [".csv", ".full.bin", ".compact.bin", ".h"] {
        std::os::unix::fs::symlink("/dev/full", dir.join(format!("left{suffix}"))).unwrap();
    }
    let opening = Opening {
        spec: TableSpec {
            frame_rate_hz: 100,
            leds: 300,
            order: WireOrder::Rgb,
            frame_count: 2000,
        },
        prop: "left",
        header_form: TableForm::Compact,
        marks: &[],
        program: &[],
        skip: &[],
    };
    let block = vec![[7u8, 8, 9]; 300 * 100];
    let result = PropFiles::open(&dir, 0, &opening).and_then(|mut files| {
        for _ in 0..20 {
            files.push_block(&block, 100)?;
        }
        files.finish(300, "rgb")
    });
    let err = result.expect_err("a full disk").to_string();
    assert!(err.starts_with("cannot write `left."), "{err}");
    assert!(err.ends_with("no space left on the device"), "{err}");
}

#[test]
fn a_picture_outside_the_show_folder_is_read_only_when_the_command_line_allows_it() {
    let dir = scratch("outside");
    let shows = dir.join("shows");
    std::fs::create_dir_all(&shows).unwrap();
    std::fs::copy(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/moon-and-tide.png"),
        dir.join("moon.png"),
    )
    .unwrap();
    let file = shows.join("up.toml");
    let cue =
        "\n[[cue]]\nprop = \"left\"\nbars = [1, 1]\nimage = \"../moon.png\"\nimage_width_m = 1.0\n";
    std::fs::write(&file, base(2, cue)).unwrap();
    let line = refused_alike(&dir, &file, "up.toml:22:9: error in `cue[0].image`");
    assert!(line.contains("leaves the show file's folder"), "{line}");
    let allowed = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["check", file.to_str().unwrap(), "--allow-outside-pictures"])
        .output()
        .unwrap();
    assert!(
        allowed.status.success(),
        "{}",
        String::from_utf8_lossy(&allowed.stderr)
    );
    // A symbolic link in the folder that leads out of it is refused too.
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink(dir.join("moon.png"), shows.join("moon.png")).unwrap();
        std::fs::write(&file, base(2, &cue.replace("../moon.png", "moon.png"))).unwrap();
        let line = refused_alike(&dir, &file, "error in `cue[0].image`");
        assert!(line.contains("a symbolic link"), "{line}");
    }
}

#[test]
fn text_from_the_show_reaches_the_terminal_escaped() {
    let dir = scratch("escape");
    let file = dir.join("esc.toml");
    let text = base(
        2,
        "\n[[expected]]\nkind = \"jump\"\nwhy = \"bell \\u0007 and title \\u001b]0;x\\u0007\"\n",
    )
    .replace("[show]\n", "[show]\ntitle = \"\\u001b[31mred\\u001b[0m\"\n");
    std::fs::write(&file, &text).unwrap();
    for args in [vec!["check"], vec!["compile", "--no-previews", "--out"]] {
        let mut a: Vec<String> = args.iter().map(|s| s.to_string()).collect();
        if a.len() > 1 {
            a.push(dir.join("out").display().to_string());
        }
        a.insert(1, file.display().to_string());
        let run = Command::new(env!("CARGO_BIN_EXE_glowscore"))
            .args(&a)
            .output()
            .unwrap();
        let all = [run.stdout.as_slice(), run.stderr.as_slice()].concat();
        assert!(!all.contains(&0x1b) && !all.contains(&0x07), "{a:?}");
        assert!(
            String::from_utf8_lossy(&all).contains("\\u{1b}[31mred"),
            "{a:?}"
        );
    }
    // A bad prop name with an escape in it, in an error.
    let bad = base(2, "").replace("[prop.left]", "[prop.\"l\\u001bft\"]");
    std::fs::write(&file, bad).unwrap();
    let run = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["check", file.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(1));
    assert!(!run.stderr.contains(&0x1b));
    assert!(String::from_utf8_lossy(&run.stderr).contains("l\\u{1b}ft"));
}
