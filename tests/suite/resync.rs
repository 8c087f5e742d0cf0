//! Resync marks end to end: a compiled show's marks are the first frames of
//! its `resync_bars`, worked out here from the tempo map and the frame rule
//! of docs/conventions.md ("Colour on the frames": a bar that starts at `t`
//! begins on frame `ceil(t * rate - 1/2)`) in exact rational arithmetic,
//! independently of the writer; the same in the full table, the compact
//! table and the program form, as the Rust reader and the C decoder
//! (`test_decode marks`) both report them. And the C header embeds the
//! program form, which a C program including it plays.

use crate::common;

use std::path::Path;
use std::process::Command;

use glowscore::compile::{CompileOptions, compile};
use glowscore::output::{Mark, TableForm, read_table};
use glowscore::prepared::Prepared;

/// 250 frames/s, bar 1 at 0.3 s, 4 beats a bar at 96 bpm, then 112 bpm
/// from bar 5 and 90 from bar 9, to bar 12.
const SHOW: &str = r##"
[show]
frame_rate = 250
bpm = 96
beats_per_bar = 4
start_s = 0.3
resync_bars = [1, 4, 5, 7, 9, 12]

[[tempo]]
bar = 5
bpm = 112

[[tempo]]
bar = 9
bpm = 90

[prop.left]
tether_m = 0.5
anchor_m = [-0.3, 1.4, 0.0]
leds = 3

[prop.right]
tether_m = 0.5
anchor_m = [0.3, 1.4, 0.0]
strip = { leds = 8, from_m = 0.1, to_m = 0.5 }

[pattern.flower]
plane = "wall"
beats = 4
hand_radius_m = 0.15
figure = "antispin"
petals = 4

[[section]]
bars = [1, 12]
left = "flower"
right = { pattern = "flower", mirror = true }

[[cue]]
prop = "left"
bars = [1, 12]
at = "tip"
colours = ["#ff2000", "teal", "gold"]
fade_beats = 0.5

[[cue]]
prop = "right"
bars = [3, 10]
at = "beat"
along = "chase"
colours = ["crimson", "#0050ff"]
chase_leds_per_beat = 4
"##;

/// The first frame of each resync bar, worked out by hand: bar `b` starts
/// `start_s + sum of 4 * 60 / bpm` seconds in; at 250 frames/s a bar lasts
/// 60000 / bpm frames. With t * rate = p / q exactly, the frame is
/// ceil((2p - q) / 2q).
fn expected_marks() -> Vec<Mark> {
    let bpm_of_bar = |b: i128| match b {
        ..=4 => 96,
        5..=8 => 112,
        _ => 90,
    };
    [1u32, 4, 5, 7, 9, 12]
        .iter()
        .map(|&bar| {
            // t * rate as the fraction p / q: 0.3 s * 250 = 75 frames, then whole bars.
            let (mut p, mut q) = (75i128, 1i128);
            for b in 1..i128::from(bar) {
                let d = bpm_of_bar(b);
                // p/q + 60000/d
                p = p * d + 60000 * q;
                q *= d;
            }
            let (num, den) = (2 * p - q, 2 * q);
            let frame = (num + den - 1).div_euclid(den);
            Mark {
                frame: frame as u32,
                bar,
            }
        })
        .collect()
}

fn compiled(name: &str, header_form: TableForm) -> std::path::PathBuf {
    let dir = common::scratch("resync", name);
    let file = dir.join("show.toml");
    std::fs::write(&file, SHOW).unwrap();
    let show = glowscore::show::load(&file).unwrap();
    let mut opts = CompileOptions::new(dir.join("out"));
    opts.previews = false;
    opts.header_form = header_form;
    compile(&Prepared::new(show).unwrap(), &opts).unwrap();
    dir.join("out")
}

fn c_marks(file: &Path) -> String {
    let out = Command::new(common::decoder())
        .arg("marks")
        .arg(file)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

#[test]
fn every_binary_form_marks_the_first_frame_of_each_resync_bar() {
    let want = expected_marks();
    // Worked by hand for two of them: bar 1 at 0.3 s is frame 75 (75 - 1/2
    // rounds up to 75); bar 5 at 0.3 + 4 * 2.5 s = 10.3 s is frame 2575.
    assert_eq!(want[0], Mark { frame: 75, bar: 1 });
    assert_eq!(
        want[2],
        Mark {
            frame: 2575,
            bar: 5
        }
    );
    let out = compiled("forms", TableForm::Compact);
    let text: String = want
        .iter()
        .map(|m| format!("{} {}\n", m.frame, m.bar))
        .collect();
    for prop in ["left", "right"] {
        for form in ["full", "compact"] {
            let file = out.join(format!("{prop}.{form}.bin"));
            let bytes = std::fs::read(&file).unwrap();
            let view = read_table(&bytes).unwrap();
            assert_eq!(view.version(), 2, "{prop} {form}");
            assert_eq!(view.marks().collect::<Vec<_>>(), want, "{prop} {form}");
            assert_eq!(c_marks(&file), text, "{prop} {form}: C decoder");
        }
        let program = out.join(format!("{prop}.prog.bin"));
        assert_eq!(c_marks(&program), text, "{prop} program form: C player");
    }
    // The cues' own frame rule (`cues::frame_of`) lands on the same frames.
    let show = glowscore::show::parse("show.toml", SHOW.to_string()).unwrap();
    let p = Prepared::new(show).unwrap();
    for m in &want {
        let t = p.show().tempo.time_at_bar(m.bar);
        assert_eq!(
            glowscore::cues::frame_of(t, 250),
            u64::from(m.frame),
            "bar {}",
            m.bar
        );
    }
}

/// The bytes of the `static const uint8_t` array of a C header.
fn embedded_bytes(text: &str) -> Vec<u8> {
    text.lines()
        .filter(|l| l.starts_with("    0x"))
        .flat_map(|l| l.split(','))
        .filter_map(|t| t.trim().strip_prefix("0x"))
        .map(|h| u8::from_str_radix(h, 16).unwrap())
        .collect()
}

#[test]
fn the_c_header_embeds_the_program_form_and_a_c_program_plays_it() {
    let out = compiled("header", TableForm::Program);
    let prog = std::fs::read(out.join("left.prog.bin")).unwrap();
    let header = out.join("left.h");
    let text = std::fs::read_to_string(&header).unwrap();
    assert_eq!(embedded_bytes(&text), prog);
    assert!(text.contains(&format!("#define LEFT_TABLE_SIZE {}u\n", prog.len())));
    assert!(text.contains("#define LEFT_TABLE_IS_PROGRAM 1\n"));
    assert!(text.contains("#define LEFT_TABLE_IS_COMPACT 0\n"));
    assert!(text.contains("firmware-formats/program-form.md"));
    // The report counts the header's text as written.
    let report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("report.json")).unwrap()).unwrap();
    let bytes = std::fs::metadata(&header).unwrap().len();
    assert_eq!(
        report["compile"]["tables"]["left"]["header"]["bytes"].as_u64(),
        Some(bytes)
    );
    // A C program that includes the header plays the array through the
    // reference player; its frames are the player's frames of the file.
    let exe = out.join("embedded_left");
    common::build_decoder(
        &exe,
        &[
            &format!("-DEMBED_HEADER=\"{}\"", header.display()),
            "-DEMBED_NAME=left_table",
            "-DEMBED_MACRO=LEFT_TABLE",
        ],
    );
    let played = out.join("embedded.raw");
    let run = Command::new(&exe)
        .arg("embedded")
        .arg(&played)
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let info = String::from_utf8(run.stdout).unwrap();
    assert!(info.starts_with("form=program "), "{info}");
    let from_file = out.join("file.raw");
    let dump = Command::new(common::decoder())
        .arg("dump")
        .arg(out.join("left.prog.bin"))
        .arg(&from_file)
        .status()
        .unwrap();
    assert!(dump.success());
    // The documented firmware snippet (c-header.md, "Playing an embedded
    // program form") compiles against this header.
    let text = std::fs::read_to_string(common::firmware_formats().join("c-header.md")).unwrap();
    let at = text.find("## Playing an embedded program form").unwrap();
    let rest = &text[at..];
    let open = rest.find("```c\n").unwrap() + 5;
    let close = rest[open..].find("```").unwrap();
    let src = out.join("snippet.c");
    std::fs::write(&src, &rest[open..open + close]).unwrap();
    let cc = Command::new("cc")
        .args(["-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic", "-c"])
        .arg("-I")
        .arg(common::firmware_formats())
        .arg("-I")
        .arg(&out)
        .arg("-o")
        .arg(out.join("snippet.o"))
        .arg(&src)
        .status()
        .unwrap();
    assert!(cc.success(), "the documented snippet does not compile");
    let played = std::fs::read(&played).unwrap();
    assert_eq!(played, std::fs::read(&from_file).unwrap());
    // Every frame of the show, each within 1 of the full table's.
    let full = std::fs::read(out.join("left.full.bin")).unwrap();
    let view = read_table(&full).unwrap();
    assert_eq!(
        played.len(),
        view.frame_size() * view.spec().frame_count as usize
    );
    let mut frame = vec![0u8; view.frame_size()];
    for (k, got) in played.chunks(view.frame_size()).enumerate() {
        view.frame(k as u32, &mut frame).unwrap();
        for (a, b) in got.iter().zip(&frame) {
            assert!(a.abs_diff(*b) <= 1, "frame {k}: {got:?} against {frame:?}");
        }
    }
}

#[test]
fn the_counted_sizes_are_the_sizes_written() {
    // compile::output_bytes, counted before anything is written: the full
    // tables and the C headers of the program form exactly, the compact
    // tables at most the full ones.
    let out = compiled("sizes", TableForm::Program);
    let show = glowscore::show::parse("show.toml", SHOW.to_string()).unwrap();
    let mut opts = CompileOptions::new(out.clone());
    opts.header_form = TableForm::Program;
    opts.previews = false;
    let size = |f: &str| std::fs::metadata(out.join(f)).unwrap().len();
    let programs = [size("left.prog.bin"), size("right.prog.bin")];
    let parts = glowscore::compile::output_bytes(&show, &opts, &programs);
    let part = |k: &str| parts.iter().find(|p| p.0 == k).unwrap().1;
    assert_eq!(part("full"), size("left.full.bin") + size("right.full.bin"));
    assert_eq!(part("program"), programs.iter().sum::<u64>());
    assert_eq!(part("header"), size("left.h") + size("right.h"));
    assert!(part("compact") >= size("left.compact.bin") + size("right.compact.bin"));
    // With the full table embedded the header's count is exact too.
    let out = compiled("sizes_full", TableForm::Full);
    opts.header_form = TableForm::Full;
    let size = |f: &str| std::fs::metadata(out.join(f)).unwrap().len();
    let parts = glowscore::compile::output_bytes(&show, &opts, &programs);
    let part = |k: &str| parts.iter().find(|p| p.0 == k).unwrap().1;
    assert_eq!(part("header"), size("left.h") + size("right.h"));
}
