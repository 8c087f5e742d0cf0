//! End-to-end tests of `glowscore compile`: frames checked by hand, the
//! reference C decoder reproducing every frame, and failed runs leaving
//! earlier outputs untouched.

use crate::common;

use std::path::{Path, PathBuf};
use std::process::Command;

fn tmp(name: &str) -> PathBuf {
    common::scratch("compile", name)
}

fn compile(show: &Path, out: &Path) -> std::process::Output {
    common::cli()
        .arg("compile")
        .arg(show)
        .arg("--out")
        .arg(out)
        .arg("--no-previews")
        .output()
        .unwrap()
}

/// Rows of a CSV table: the bytes of each frame, R, G, B per LED.
fn csv_frames(path: &Path) -> Vec<Vec<u8>> {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    let header = lines.next().unwrap();
    assert!(header.starts_with("frame,time_s,r0,g0,b0"), "{header}");
    lines
        .enumerate()
        .map(|(k, l)| {
            let cells: Vec<&str> = l.split(',').collect();
            assert_eq!(cells[0], k.to_string());
            cells[2..]
                .iter()
                .map(|c| c.parse::<u8>().unwrap())
                .collect()
        })
        .collect()
}

fn write_show(dir: &Path, text: &str) -> PathBuf {
    let p = dir.join("show.toml");
    std::fs::write(&p, text).unwrap();
    p
}

const STROBE: &str = r##"
[show]
title = "by hand"
frame_rate = 10
bpm = 60
beats_per_bar = 4

[prop.a]
tether_m = 0.5
anchor_m = [0, 1.5, 0]

[pattern.flower]
plane = "wall"
beats = 4
hand_radius_m = 0.1
head_turns = -3

[[section]]
bars = [1, 2]
a = { pattern = "flower", delay_beats = 0.3 }

[[cue]]
prop = "a"
bars = [1, 1]
at = "beat"
colours = ["red", "#0000ff"]

[[cue]]
prop = "a"
bars = [2, 2]
at = "tip"
colours = ["#808080", "white", "lime"]
"##;

#[test]
fn frames_of_a_hand_computed_show() {
    let dir = tmp("by-hand");
    let show = write_show(&dir, STROBE);
    let out = compile(&show, &dir.join("out"));
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let frames = csv_frames(&dir.join("out/a.csv"));
    // Two bars of 4 beats at 60 bpm: 8 s at 10 frames/s.
    assert_eq!(frames.len(), 80);
    // Bar 1: one beat per second, so a change every 10 frames (beat k at
    // k s starts on frame ceil(10 k - 1/2) = 10 k), red first.
    for (k, f) in frames.iter().take(40).enumerate() {
        let want = if (k / 10) % 2 == 0 {
            [255, 0, 0]
        } else {
            [0, 0, 255]
        };
        assert_eq!(f.as_slice(), want, "frame {k}");
    }
    // Bar 2: an antispin m = -3 flower has its tips where cos(4 * 2 pi u)
    // is 1 (|p|^2 = R^2 + r^2 + 2Rr cos((m - 1) 2 pi u), handbook algebra):
    // u = k/4, i.e. every beat after the 0.3-beat delay: t = 4.3, 5.3, 6.3,
    // 7.3 s, starting on frames 43, 53, 63, 73. Grey #808080 is 0.2158605
    // in linear light (IEC 61966-2-1), byte 55.
    let grey = [55, 55, 55];
    let colours = [grey, [255, 255, 255], [0, 255, 0]];
    for (k, f) in frames.iter().enumerate().skip(40) {
        let changes = [43, 53, 63, 73].iter().filter(|&&c| k >= c).count();
        assert_eq!(f.as_slice(), colours[changes % 3], "frame {k}");
    }
}

#[test]
fn the_c_decoder_reproduces_every_frame_of_the_demo_shows() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut shows: Vec<PathBuf> = std::fs::read_dir(root.join("shows"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    shows.sort();
    assert!(shows.len() >= 2, "at least two demo shows");
    let dir = tmp("decoder");
    shows.push(write_show(&dir, STROBE));
    for (i, show) in shows.iter().enumerate() {
        let out = dir.join(format!("out{i}"));
        let run = compile(show, &out);
        assert!(
            run.status.success(),
            "{}: {}",
            show.display(),
            String::from_utf8_lossy(&run.stderr)
        );
        let mut n = 0;
        for entry in std::fs::read_dir(&out).unwrap() {
            let csv = entry.unwrap().path();
            if csv.extension().is_none_or(|e| e != "csv") {
                continue;
            }
            let stem = csv.file_stem().unwrap().to_string_lossy().into_owned();
            // The CSV is R, G, B; the binary tables are in the prop's wire order.
            let report: serde_json::Value =
                serde_json::from_slice(&std::fs::read(out.join("report.json")).unwrap()).unwrap();
            let order = report["compile"]["tables"][&stem]["wire_order"]
                .as_str()
                .unwrap();
            let order = glowscore::model::WireOrder::from_name(order).unwrap();
            let mut expect = Vec::new();
            for rgb in csv_frames(&csv).concat().chunks(3) {
                let mut b = vec![0u8; order.bytes_per_led()];
                order.encode([rgb[0], rgb[1], rgb[2]], &mut b);
                expect.extend(b);
            }
            for form in ["full", "compact"] {
                let table = out.join(format!("{stem}.{form}.bin"));
                let dump = out.join(format!("{stem}.{form}.dump"));
                let st = Command::new(common::decoder())
                    .arg("dump")
                    .arg(&table)
                    .arg(&dump)
                    .status()
                    .unwrap();
                assert!(st.success(), "{} refused", table.display());
                let got = std::fs::read(&dump).unwrap();
                assert_eq!(got.len(), expect.len(), "{}", table.display());
                if let Some(i) = got.iter().zip(&expect).position(|(a, b)| a != b) {
                    panic!("{}: first difference at byte {i}", table.display());
                }
            }
            n += 1;
        }
        assert!(n >= 1, "{}: no tables", show.display());
    }
}

#[test]
fn a_flipped_bit_is_refused_by_the_decoder() {
    let dir = tmp("flip");
    let show = write_show(&dir, STROBE);
    assert!(compile(&show, &dir.join("out")).status.success());
    for form in ["full", "compact"] {
        let table = dir.join(format!("out/a.{form}.bin"));
        let mut bytes = std::fs::read(&table).unwrap();
        let mid = bytes.len() / 2;
        bytes[mid] ^= 0x10;
        let bad = dir.join(format!("bad.{form}.bin"));
        std::fs::write(&bad, &bytes).unwrap();
        let st = Command::new(common::decoder())
            .arg("info")
            .arg(&bad)
            .output()
            .unwrap();
        assert_eq!(
            st.status.code(),
            Some(1),
            "{form}: a corrupted table must be refused"
        );
    }
}

#[test]
fn a_failed_compile_leaves_earlier_outputs_untouched() {
    let dir = tmp("atomic");
    let show = write_show(&dir, STROBE);
    let out = dir.join("out");
    assert!(compile(&show, &out).status.success());
    let before: Vec<(PathBuf, Vec<u8>)> = {
        let mut v: Vec<_> = std::fs::read_dir(&out)
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        v.sort();
        v.into_iter()
            .map(|p| (p.clone(), std::fs::read(&p).unwrap()))
            .collect()
    };
    // An invalid show, then one whose tables are too large.
    std::fs::write(&show, STROBE.replace("tether_m = 0.5", "tether_m = -0.5")).unwrap();
    let run = compile(&show, &out);
    assert_eq!(run.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&run.stderr).contains("prop.a.tether_m"));
    let huge = STROBE
        .replace("frame_rate = 10", "frame_rate = 100000")
        .replace("bars = [1, 2]\na =", "bars = [1, 400]\na =");
    std::fs::write(&show, huge).unwrap();
    let run = compile(&show, &out);
    assert_eq!(run.status.code(), Some(1));
    let err = String::from_utf8_lossy(&run.stderr);
    assert!(
        err.contains("too large") && err.contains("100000 frames/s"),
        "{err}"
    );
    let after: Vec<PathBuf> = {
        let mut v: Vec<_> = std::fs::read_dir(&out)
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        v.sort();
        v
    };
    assert_eq!(
        after,
        before.iter().map(|b| b.0.clone()).collect::<Vec<_>>(),
        "no file added or left behind"
    );
    for (p, bytes) in before {
        assert_eq!(std::fs::read(&p).unwrap(), bytes, "{} changed", p.display());
    }
}

#[test]
fn compiling_twice_gives_the_same_bytes() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let show = root.join("shows/moth-garden.toml");
    let (a, b) = (tmp("twice-a"), tmp("twice-b"));
    for d in [&a, &b] {
        let st = common::cli()
            .arg("compile")
            .arg(&show)
            .arg("--out")
            .arg(d)
            .output()
            .unwrap();
        assert!(st.status.success());
    }
    let mut names: Vec<_> = std::fs::read_dir(&a)
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    names.sort();
    assert!(names.iter().any(|n| n.to_string_lossy() == "preview.png"));
    assert!(names.iter().any(|n| n.to_string_lossy() == "report.json"));
    for n in names {
        assert_eq!(
            std::fs::read(a.join(&n)).unwrap(),
            std::fs::read(b.join(&n)).unwrap(),
            "{n:?} differs"
        );
    }
}

#[test]
fn report_json_has_the_check_fields_and_the_table_sizes() {
    let dir = tmp("report");
    let show = write_show(&dir, STROBE);
    assert!(compile(&show, &dir.join("out")).status.success());
    let v: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.join("out/report.json")).unwrap()).unwrap();
    assert_eq!(v["valid"], true);
    assert!(v["props"]["a"]["max_tension_n"].is_number());
    let full = &v["compile"]["tables"]["a"]["full"];
    let size = std::fs::metadata(dir.join("out/a.full.bin")).unwrap().len();
    assert_eq!(
        full["bytes"].as_u64(),
        Some(size),
        "reported size is the file's size"
    );
}

#[test]
fn brightness_limit_dims_the_tables_under_the_current_limit() {
    // 10 white LEDs at 20 mA per channel draw 10 x 3 x 0.02 = 0.6 A plus the
    // idle 0.05 A; a 0.4 A limit needs the tables dimmed.
    let dir = tmp("dim");
    let text = STROBE
        .replace(
            "anchor_m = [0, 1.5, 0]",
            "anchor_m = [0, 1.5, 0]\nleds = 10\nmax_current_a = 0.4\nbrightness_limit = true",
        )
        .replace("colours = [\"red\", \"#0000ff\"]", "colours = [\"white\"]");
    let show = write_show(&dir, &text);
    let run = compile(&show, &dir.join("out"));
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let frames = csv_frames(&dir.join("out/a.csv"));
    let peak = frames
        .iter()
        .map(|f| f.iter().map(|&b| f64::from(b)).sum::<f64>() / 255.0 * 0.020 + 0.05)
        .fold(0.0, f64::max);
    assert!(peak <= 0.4, "peak {peak} A after dimming");
    assert!(peak > 0.35, "dimmed no more than needed: {peak} A");
    let v: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.join("out/report.json")).unwrap()).unwrap();
    let k = v["compile"]["brightness_scale_applied"]["a"]
        .as_f64()
        .unwrap();
    assert!(k < 1.0 && k > 0.5, "{k}");
    assert!(v["props"]["a"]["peak_current_a"].as_f64().unwrap() <= 0.4);
}
