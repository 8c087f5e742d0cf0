//! One prepared show for every command: `compile`, `check` and `preview`
//! read the same frames, so they give the same currents, the same warnings
//! and the same pixels. The show has what used to make them disagree: a
//! prop dimmed by `brightness_limit`, a mirrored prop and a painting.

use crate::common::cli;
use std::path::{Path, PathBuf};

fn folder(name: &str) -> PathBuf {
    let dir =
        std::env::temp_dir().join(format!("glowscore-pipeline-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Writes the show and its picture into `dir`; returns the show's path.
fn write_show(dir: &Path) -> PathBuf {
    // A 16 x 16 picture: red top half, blue bottom half.
    let mut pic = image::RgbImage::new(16, 16);
    for (_, y, px) in pic.enumerate_pixels_mut() {
        *px = if y < 8 {
            image::Rgb([255, 0, 0])
        } else {
            image::Rgb([0, 0, 255])
        };
    }
    pic.save(dir.join("halves.png")).unwrap();
    let text = r##"
[show]
title = "Three Answers"
frame_rate = 200
bpm = 120
beats_per_bar = 4

[prop.a]
tether_m = 0.5
anchor_m = [-0.6, 1.4, 0.0]
strip = { leds = 12, from_m = 0.05, to_m = 0.5 }
max_current_a = 0.3
brightness_limit = true

[prop.b]
tether_m = 0.5
anchor_m = [0.6, 1.4, 0.0]
leds = 4

[prop.c]
tether_m = 0.5
anchor_m = [0.0, 1.4, -1.5]
strip = { leds = 16, from_m = 0.05, to_m = 0.5 }

[pattern.flower]
plane = "wall"
beats = 4
hand_radius_m = 0.15
head_turns = -3

[pattern.wheel]
plane = "wall"
beats = 2
hand_radius_m = 0.0
head_turns = 1

[[section]]
bars = [1, 2]
a = "flower"
b = { pattern = "flower", mirror = true }
c = "wheel"

[[cue]]
prop = "a"
bars = [1, 2]
at = "tip"
colours = ["white", "gold"]

[[cue]]
prop = "b"
bars = [1, 2]
at = "tip"
colours = ["red", "teal"]

[[cue]]
prop = "c"
bars = [1, 2]
image = "halves.png"
image_width_m = 1.0
image_centre_m = [0.0, 1.4]
"##;
    let path = dir.join("three.toml");
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn compile_check_and_preview_agree_on_a_dimmed_mirrored_painted_show() {
    let dir = folder("agree");
    let show = write_show(&dir);
    let out = dir.join("out");
    let compiled = cli()
        .args([
            "compile",
            show.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ])
        .output()
        .unwrap();
    assert!(
        compiled.status.success(),
        "{}",
        String::from_utf8_lossy(&compiled.stderr)
    );
    let checked = cli()
        .args(["check", show.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    assert!(
        checked.status.success(),
        "{}",
        String::from_utf8_lossy(&checked.stderr)
    );

    // The report in the output folder is the check's report plus the
    // compile's own section.
    let mut report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("report.json")).unwrap()).unwrap();
    let compile = report
        .as_object_mut()
        .unwrap()
        .remove("compile")
        .expect("compile section");
    let check: serde_json::Value = serde_json::from_slice(&checked.stdout).unwrap();
    assert_eq!(report, check, "report.json and check --json differ");

    // Prop a is dimmed, everywhere the same: within its limit, no current
    // warning, the applied scale reported by both.
    let a = &check["props"]["a"];
    let peak = a["peak_current_a"].as_f64().unwrap();
    assert!(peak <= 0.3, "peak {peak} A over the 0.3 A limit");
    let scale = a["brightness_scale"].as_f64().unwrap();
    assert!(scale > 0.0 && scale < 1.0, "scale {scale}");
    let applied = compile["brightness_scale_applied"]["a"].as_f64().unwrap();
    assert!((applied - scale).abs() < 1e-9, "{applied} vs {scale}");
    let warnings = check["warnings"].as_array().unwrap();
    assert!(
        !warnings.iter().any(|w| w["kind"] == "current"),
        "{warnings:?}"
    );

    // The preview command draws what compile drew.
    let picture = dir.join("preview.png");
    let previewed = cli()
        .args([
            "preview",
            show.to_str().unwrap(),
            "--out",
            picture.to_str().unwrap(),
        ])
        .output()
        .unwrap();
    assert!(
        previewed.status.success(),
        "{}",
        String::from_utf8_lossy(&previewed.stderr)
    );
    let ours = image::open(&picture).unwrap().to_rgb8();
    let compiled_picture = image::open(out.join("preview.png")).unwrap().to_rgb8();
    assert_eq!(ours.dimensions(), compiled_picture.dimensions());
    let differing = ours
        .pixels()
        .zip(compiled_picture.pixels())
        .position(|(p, q)| p != q);
    assert_eq!(differing, None, "first differing pixel (row-major index)");

    // And the table's brightest frame of prop a is the dimmed one: no LED
    // byte above the scaled white.
    let csv = std::fs::read_to_string(out.join("a.csv")).unwrap();
    let max_byte = csv
        .lines()
        .skip(1)
        .flat_map(|l| l.split(',').skip(2).map(|v| v.parse::<u32>().unwrap()))
        .max()
        .unwrap();
    assert!(
        f64::from(max_byte) <= (scale * 255.0).round(),
        "{max_byte} vs scale {scale}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// The frames `compile` keeps in memory for its previews are the frames it
/// would compute: every byte of every frame of every prop, on a show with a
/// dimmed prop, a mirrored prop and a painting, before and after keeping.
#[test]
fn kept_frames_are_the_computed_frames() {
    let dir = folder("kept");
    let show = write_show(&dir);
    let parsed = glowscore::show::load(&show).unwrap();
    let prepared = glowscore::prepared::Prepared::new(parsed).unwrap();
    let frames_of = |p: &glowscore::prepared::Prepared| {
        let mut all = Vec::new();
        for (i, prop) in p.show().props.iter().enumerate() {
            let mut frame = vec![[0u8; 3]; prop.leds as usize];
            for k in 0..p.frame_count() {
                p.fill_frame(i, k, &mut frame);
                all.extend_from_slice(&frame);
            }
        }
        all
    };
    let made = frames_of(&prepared);
    assert!(made.iter().any(|px| *px != [0, 0, 0]), "the show is lit");
    assert!(prepared.keep_frames(), "a small show's frames are kept");
    assert_eq!(frames_of(&prepared), made);
    let mut blocks = vec![Vec::new(); prepared.show().props.len()];
    let r: Result<(), std::convert::Infallible> = prepared.for_each_block(|_, n, b| {
        for ((all, block), prop) in blocks.iter_mut().zip(b).zip(&prepared.show().props) {
            all.extend_from_slice(&block[..n * prop.leds as usize]);
        }
        Ok(())
    });
    let Ok(()) = r;
    assert_eq!(blocks.concat(), made);
}

#[test]
fn repeated_warnings_are_grouped_and_point_at_their_show_line() {
    // The demo's stall line goes slack at every stall tip, bars 9-16: one
    // warning per prop, with the count and each instance, located at the
    // `[[section]]` that plays it.
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/salt-marsh-reel.toml");
    let text = std::fs::read_to_string(&path).unwrap();
    let out = cli()
        .args(["check", path.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let warnings = report["warnings"].as_array().unwrap();
    let slack: Vec<_> = warnings.iter().filter(|w| w["kind"] == "slack").collect();
    assert_eq!(slack.len(), 2, "one per prop: {slack:?}");
    for w in &slack {
        let count = w["count"].as_u64().unwrap();
        assert!(count > 1, "{w}");
        let each = w["each"].as_array().unwrap();
        assert_eq!(each.len() as u64, count);
        // The worst value is the lowest tension of the instances.
        let worst = each
            .iter()
            .map(|i| i["value"].as_f64().unwrap())
            .fold(f64::INFINITY, f64::min);
        assert_eq!(w["value"].as_f64(), Some(worst));
        let bars = w["bars"].as_array().unwrap();
        assert!(bars[0].as_i64() < bars[1].as_i64(), "{bars:?}");
        let line = w["line"].as_u64().unwrap() as usize;
        let at = text.lines().nth(line - 1).unwrap();
        assert!(
            at.trim().starts_with("[[section]]"),
            "line {line} is `{at}`"
        );
    }
    for w in warnings {
        assert!(
            w["line"].as_u64().is_some(),
            "every warning is located: {w}"
        );
    }
}

#[test]
fn cautions_follow_the_show() {
    // A staff and a strip bring cautions of their own: the staff's reach, and
    // the strip's peak current (the figure the report gives).
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/eelgrass-lanterns.toml");
    let out = cli()
        .args(["check", path.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let cautions: Vec<&str> = report["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c.as_str().unwrap())
        .collect();
    let (name, prop) = report["props"].as_object().unwrap().iter().next().unwrap();
    let amps = format!("{:.2} A", prop["peak_current_a"].as_f64().unwrap());
    assert!(
        cautions
            .iter()
            .any(|c| c.contains("is a staff") && c.starts_with(name.as_str())),
        "{cautions:?}"
    );
    assert!(
        cautions.iter().any(|c| c.contains(&amps)),
        "{amps}: {cautions:?}"
    );
    // A poi show has no staff caution but names its peak tension.
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/moth-garden.toml");
    let out = cli()
        .args(["check", path.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let cautions = report["cautions"].as_array().unwrap();
    assert!(
        !cautions
            .iter()
            .any(|c| c.as_str().unwrap().contains("is a staff"))
    );
    assert!(
        cautions
            .iter()
            .any(|c| c.as_str().unwrap().contains(" N: use tethers"))
    );
}

/// A one-prop show with a tip cue over bars 1-4 and a beat cue over
/// `later_bars` on the same prop.
fn overlapping(later_bars: &str) -> String {
    format!(
        r#"
[show]
frame_rate = 500
bpm = 120

[prop.p]
tether_m = 0.5
anchor_m = [0.0, 1.5, 0.0]

[pattern.flower]
plane = "wall"
beats = 4
hand_radius_m = 0.15
head_turns = -3

[[section]]
bars = [1, 4]
p = "flower"

[[cue]]
prop = "p"
bars = [1, 4]
at = "tip"
colours = ["red", "blue"]

[[cue]]
prop = "p"
bars = {later_bars}
at = "beat"
colours = ["white", "black"]
"#
    )
}

#[test]
fn a_cue_hidden_by_a_later_one_warns_and_counts_only_what_plays() {
    let dir = folder("overlap");
    let check = |text: &str| -> serde_json::Value {
        let path = dir.join("overlap.toml");
        std::fs::write(&path, text).unwrap();
        let out = cli()
            .args(["check", path.to_str().unwrap(), "--json"])
            .output()
            .unwrap();
        serde_json::from_slice(&out.stdout).unwrap()
    };
    let text = overlapping("[3, 4]");
    let r = check(&text);
    let w: Vec<_> = r["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|w| w["kind"] == "overlap")
        .collect();
    assert_eq!(w.len(), 1, "{w:?}");
    assert_eq!(w[0]["cue"], 0);
    assert_eq!(w[0]["bar"], 3);
    // Bars 3-4 of 1-4 at one tempo: half the frames.
    assert!(
        (w[0]["value"].as_f64().unwrap() - 50.0).abs() < 1e-9,
        "{}",
        w[0]
    );
    let line = w[0]["line"].as_u64().unwrap() as usize;
    let first_cue = text.lines().position(|l| l == "[[cue]]").unwrap() + 1;
    assert_eq!(line, first_cue);
    // A four-petal flower has 4 tips a hand turn, a turn a bar: the tip cue
    // changes at the tips of bars 1-2 only (7: its first instant is no
    // change), where alone it would change at those of bars 1-4 (15).
    assert_eq!(r["cues"][0]["changes"], 7, "{}", r["cues"][0]);
    let alone = check(&overlapping("[5, 5]").replace("bars = [1, 4]\np = ", "bars = [1, 5]\np = "));
    assert_eq!(alone["cues"][0]["changes"], 15, "{}", alone["cues"][0]);
    assert!(
        !alone["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .any(|w| w["kind"] == "overlap")
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn events_filter_by_prop_kind_and_bars_and_stop_quietly_on_a_closed_pipe() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/moth-garden.toml");
    let p = path.to_str().unwrap();
    let events = |extra: &[&str]| -> Vec<serde_json::Value> {
        let out = cli()
            .args(["events", p, "--json"])
            .args(extra)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        serde_json::from_slice(&out.stdout).unwrap()
    };
    let all = events(&[]);
    let some = events(&["--prop", "left", "--kind", "beat", "--bars", "2-3"]);
    // Bars 2 and 3 of beats_per_bar beats each: the beats of bar 2 and 3.
    let expected: Vec<_> = all
        .iter()
        .filter(|e| e["prop"] == "left" && e["kind"] == "beat")
        .filter(|e| (2..=3).contains(&e["bar"].as_i64().unwrap()))
        .cloned()
        .collect();
    assert!(!expected.is_empty());
    assert_eq!(some, expected);
    let bad = cli()
        .args(["events", p, "--kind", "petal"])
        .output()
        .unwrap();
    assert_eq!(bad.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("not an event kind"));
    // A reader that stops early, on a show whose events fill more than a
    // pipe holds (about 200 kB of text): no error, success.
    let long = Path::new(env!("CARGO_MANIFEST_DIR")).join("benches/fixtures/four-minutes.toml");
    let mut child = cli()
        .args(["events", long.to_str().unwrap()])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdout = child.stdout.take().unwrap();
    let mut first = [0u8; 16];
    std::io::Read::read_exact(&mut stdout, &mut first).unwrap();
    drop(stdout);
    let out = child.wait_with_output().unwrap();
    assert!(out.status.success(), "{:?}", out.status);
    assert!(
        out.stderr.is_empty(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn the_output_folder_keeps_one_set_of_files() {
    use glowscore::folder::{Folder, FolderError, LOCK_FILE, MANIFEST_FILE};
    let dir = folder("set");
    let show = write_show(&dir);
    let out = dir.join("out");
    let compile = |show: &Path| {
        cli()
            .args([
                "compile",
                show.to_str().unwrap(),
                "--out",
                out.to_str().unwrap(),
                "--no-previews",
            ])
            .output()
            .unwrap()
    };
    assert!(compile(&show).status.success());
    // A file of the maker's own and a staging folder of a run killed earlier.
    std::fs::write(out.join("notes.txt"), "mine").unwrap();
    std::fs::create_dir_all(out.join(".glowscore-staging-999999/x")).unwrap();
    std::fs::create_dir_all(dir.join(".out.glowscore-staging-999998/y")).unwrap();
    // Prop `b` is renamed `b2`: its old files go, the new ones come.
    let renamed = dir.join("renamed.toml");
    let text = std::fs::read_to_string(&show)
        .unwrap()
        .replace("[prop.b]", "[prop.b2]")
        .replace("prop = \"b\"", "prop = \"b2\"")
        .replace("\nb = {", "\nb2 = {");
    std::fs::write(&renamed, text).unwrap();
    let run = compile(&renamed);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let mut names: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    for stale in ["b.csv", "b.full.bin", "b.compact.bin", "b.h"] {
        assert!(
            !names.contains(&stale.to_string()),
            "{stale} left: {names:?}"
        );
    }
    for new in [
        "b2.csv",
        "b2.h",
        "a.csv",
        "report.json",
        "notes.txt",
        MANIFEST_FILE,
        LOCK_FILE,
    ] {
        assert!(names.contains(&new.to_string()), "{new} missing: {names:?}");
    }
    assert!(
        !names.iter().any(|n| n.starts_with(".glowscore-staging")),
        "{names:?}"
    );
    assert!(!dir.join(".out.glowscore-staging-999998").exists());
    let manifest = std::fs::read_to_string(out.join(MANIFEST_FILE)).unwrap();
    assert!(manifest.lines().any(|l| l == "b2.csv") && !manifest.contains("notes.txt"));
    // While a compile holds the folder, another is refused and changes
    // nothing.
    let held = Folder::open(&out).unwrap();
    let before = std::fs::read(out.join("a.csv")).unwrap();
    let refused = compile(&show);
    assert_eq!(refused.status.code(), Some(1));
    let err = String::from_utf8_lossy(&refused.stderr);
    assert!(
        err.contains("another glowscore compile is writing into"),
        "{err}"
    );
    assert_eq!(std::fs::read(out.join("a.csv")).unwrap(), before);
    assert!(out.join("b2.csv").exists());
    assert!(matches!(Folder::open(&out), Err(FolderError::Busy { .. })));
    drop(held);
    assert!(compile(&show).status.success());
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_demos_expect_their_warnings_and_pass_deny_warnings() {
    let shows = Path::new(env!("CARGO_MANIFEST_DIR")).join("shows");
    let mut checked = 0;
    for entry in std::fs::read_dir(&shows).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_none_or(|e| e != "toml") {
            continue;
        }
        let out = cli()
            .args(["check", path.to_str().unwrap(), "--deny-warnings", "--json"])
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}: {}",
            path.display(),
            String::from_utf8_lossy(&out.stderr)
        );
        // Expected warnings are still reported, with their reason.
        let r: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        for w in r["warnings"].as_array().unwrap() {
            assert!(w["expected"].is_string(), "{}: {w}", path.display());
        }
        checked += 1;
    }
    assert!(checked >= 3);
    // Without its `[[expected]]` entries the same show fails the denial.
    let text = std::fs::read_to_string(shows.join("moth-garden.toml")).unwrap();
    let cut = text.find("[[expected]]").unwrap();
    let dir = folder("expected");
    let bare = dir.join("bare.toml");
    std::fs::write(&bare, &text[..cut]).unwrap();
    let out = cli()
        .args(["check", bare.to_str().unwrap(), "--deny-warnings"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("does not expect"));
    let _ = std::fs::remove_dir_all(&dir);
}
