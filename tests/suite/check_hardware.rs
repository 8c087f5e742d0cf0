//! Will it play on the prop: refresh limit, memory fit and clock drift.

use std::path::Path;
use std::process::Command;

fn show(extra_prop_keys: &str, frame_rate: u32, bars: u32) -> String {
    format!(
        "[show]\nframe_rate = {frame_rate}\nbpm = 120\n\
         [prop.p]\ntether_m = 0.5\nanchor_m = [0, 1.5, 0]\nleds = 100\n{extra_prop_keys}\n\
         [pattern.x]\nplane = \"wall\"\nbeats = 2\nhand_radius_m = 0.1\nhead_turns = -3\n\
         [[section]]\nbars = [1, {bars}]\np = \"x\"\n\
         [[cue]]\nprop = \"p\"\nbars = [1, {bars}]\nat = \"tip\"\ncolours = [\"red\", \"blue\"]\n"
    )
}

fn report(text: &str) -> glowscore::check::report::CheckReport {
    let show = glowscore::show::parse("hw.toml", text.to_string()).unwrap();
    let prepared = glowscore::prepared::Prepared::new(show).unwrap();
    glowscore::check::check(&prepared, &Default::default()).unwrap()
}

fn kinds(r: &glowscore::check::report::CheckReport) -> Vec<&'static str> {
    r.warnings.iter().map(|w| w.kind.name()).collect()
}

#[test]
fn data_only_line_of_100_leds_cannot_play_500_frames_per_second() {
    // From memory of common data-only LED data sheets: 1.25 us per bit, 24
    // bits per RGB LED, a latch of at least 50 us: about 328 frames/s.
    let r = report(&show("", 500, 2));
    let h = r.props[0].hardware.as_ref().unwrap();
    assert!(
        (h.max_frame_rate_hz - 327.87).abs() < 0.01,
        "{}",
        h.max_frame_rate_hz
    );
    assert!(kinds(&r).contains(&"refresh"));
    let ok = report(&show("", 300, 2));
    assert!(!kinds(&ok).contains(&"refresh"));
    // A data-and-clock line at 8 MHz plays it.
    let clocked = report(&show(
        "led_driver = \"data_clock\"\ndriver_clock_hz = 8e6",
        500,
        2,
    ));
    assert!(!kinds(&clocked).contains(&"refresh"));
}

#[test]
fn memory_warns_when_no_table_fits_and_names_the_form_that_does() {
    let tight = report(&show("table_memory_kb = 0.5", 100, 2));
    assert!(kinds(&tight).contains(&"memory"));
    let roomy = report(&show("table_memory_kb = 64", 100, 2));
    let h = roomy.props[0].hardware.as_ref().unwrap();
    // The program form is the smallest; the full table (100 LEDs, 400
    // frames: 120 kB) does not fit.
    assert_eq!(h.fits, Some("program"));
    assert_eq!(h.forms_that_fit, vec!["program", "compact"]);
    assert!(h.program_bytes < h.compact_table_bytes);
    assert!(!kinds(&roomy).contains(&"memory"));
}

#[test]
fn drift_of_a_ceramic_resonator_warns_and_a_crystal_does_not() {
    // 60 bars of 4 beats at 120 bpm: 120 s. 50 ppm (a crystal, common
    // practice) drifts 6 ms; 0.5 % (a ceramic resonator) drifts 0.6 s.
    let crystal = report(&show("", 100, 60));
    let h = crystal.props[0].hardware.as_ref().unwrap();
    assert!((h.drift_ms - 6.0).abs() < 1e-9, "{}", h.drift_ms);
    let ceramic = report(&show("clock_ppm = 5000", 100, 60));
    let h = ceramic.props[0].hardware.as_ref().unwrap();
    assert!((h.drift_ms - 600.0).abs() < 1e-6);
    assert!((h.drift_beats - 1.2).abs() < 1e-9);
    assert!(kinds(&ceramic).contains(&"drift"));
    // The show is synced at its start; a drift within the performer's own
    // spread about the beat (20 ms, see `PERFORMER_SPREAD_S`) is not worth a
    // warning, however fast the head: 6 ms and 18 ms (150 ppm) pass, 30 ms
    // (250 ppm) warns.
    assert!(!kinds(&crystal).contains(&"drift"));
    assert!(!kinds(&report(&show("clock_ppm = 150", 100, 60))).contains(&"drift"));
    let loose = report(&show("clock_ppm = 250", 100, 60));
    assert!(kinds(&loose).contains(&"drift"));
    let w = loose
        .warnings
        .iter()
        .find(|w| w.kind.name() == "drift")
        .unwrap();
    assert_eq!(
        w.limit,
        Some(20.0),
        "the limit is the performer's spread here"
    );
}

#[test]
fn reported_table_sizes_are_the_sizes_of_the_files_written() {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("hardware-sizes");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("show.toml");
    std::fs::write(&file, show("wire_order = \"grbw\"", 200, 4)).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .arg("compile")
        .arg(&file)
        .arg("--out")
        .arg(dir.join("out"))
        .arg("--no-previews")
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.join("out/report.json")).unwrap()).unwrap();
    let hw = &v["props"]["p"]["hardware"];
    for (key, file) in [
        ("full_table_bytes", "p.full.bin"),
        ("compact_table_bytes", "p.compact.bin"),
        ("program_bytes", "p.prog.bin"),
    ] {
        let size = std::fs::metadata(dir.join("out").join(file)).unwrap().len();
        assert_eq!(hw[key].as_u64(), Some(size), "{key}");
    }
}

#[test]
fn check_counts_the_resync_marks_in_the_table_sizes_and_the_fit() {
    // With `resync_bars` the tables are version 2: 4 bytes of count and 8 a
    // mark more in each header. `check` counts the tables without writing
    // them; its sizes are the compiled files', and which forms fit a memory
    // exactly the compact table's size (with its marks) turns on them.
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("hardware-marks");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let with_marks =
        |keys: &str| show(keys, 200, 4).replace("bpm = 120\n", "bpm = 120\nresync_bars = [1, 3]\n");
    let file = dir.join("show.toml");
    std::fs::write(&file, with_marks("")).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .arg("compile")
        .arg(&file)
        .arg("--out")
        .arg(dir.join("out"))
        .arg("--no-previews")
        .output()
        .unwrap();
    assert!(out.status.success());
    let size = |f: &str| std::fs::metadata(dir.join("out").join(f)).unwrap().len();
    let (full, compact, program) = (
        size("p.full.bin"),
        size("p.compact.bin"),
        size("p.prog.bin"),
    );
    // 100 LEDs x 3 bytes x 1600 frames (16 beats at 120 bpm, 200 frames/s), the
    // 40-byte header with two marks, the trailer.
    assert_eq!(full, 300 * 1600 + 40 + 16 + 12);
    let h = report(&with_marks(""));
    let h = h.props[0].hardware.as_ref().unwrap();
    assert_eq!(
        (h.full_table_bytes, h.compact_table_bytes, h.program_bytes),
        (full, compact, program)
    );
    assert!(program < compact);
    let fits = |bytes: u64| {
        let kb = bytes as f64 / 1024.0;
        let r = report(&with_marks(&format!("table_memory_kb = {kb}")));
        r.props[0].hardware.as_ref().unwrap().forms_that_fit.clone()
    };
    assert_eq!(fits(compact), vec!["program", "compact"]);
    assert_eq!(fits(compact - 1), vec!["program"]);
    assert_eq!(fits(full), vec!["program", "compact", "full"]);
    assert_eq!(fits(full - 1), vec!["program", "compact"]);
}
