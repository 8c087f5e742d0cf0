//! Helpers shared by the integration tests.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

use glowscore::check::{CheckReport, CheckSettings};
use glowscore::commands::Failure;
use glowscore::model::Show;
use glowscore::prepared::Prepared;

/// Asserts `|got - want| <= tol`, naming `what` and the miss.
#[track_caller]
pub fn close(got: f64, want: f64, tol: f64, what: &str) {
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got}, want {want} (off by {:e})",
        (got - want).abs()
    );
}

/// The `glowscore` binary this test build made.
pub fn cli() -> Command {
    Command::new(env!("CARGO_BIN_EXE_glowscore"))
}

/// An empty scratch folder `group/name` under the test build's temporary
/// folder (emptied if an earlier run left it).
pub fn scratch(group: &str, name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join(group)
        .join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("scratch folder");
    d
}

/// The repository's `firmware-formats` folder.
pub fn firmware_formats() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("firmware-formats")
}

/// Compiles the C99 `sources` (with `firmware-formats` on the include
/// path) into `out` with the system C compiler, strictly:
/// `cc -std=c99 -Wall -Wextra -Werror -pedantic -O1`, plus `extra` flags.
pub fn build_c(out: &Path, sources: &[PathBuf], extra: &[&str]) {
    let status = Command::new("cc")
        .args([
            "-std=c99",
            "-Wall",
            "-Wextra",
            "-Werror",
            "-pedantic",
            "-O1",
        ])
        .arg("-I")
        .arg(firmware_formats())
        .args(extra)
        .arg("-o")
        .arg(out)
        .args(sources)
        .status()
        .expect("run the system C compiler `cc`");
    assert!(status.success(), "cc failed for {}", out.display());
}

/// The C sources of the program form's reference player, in
/// `firmware-formats/` (the frames, and the container with its checks).
pub const PLAYER_SOURCES: [&str; 2] = ["glowscore_program.c", "glowscore_program_open.c"];

/// `PLAYER_SOURCES` as paths.
pub fn player_sources() -> Vec<PathBuf> {
    let fw = firmware_formats();
    PLAYER_SOURCES.iter().map(|f| fw.join(f)).collect()
}

/// Builds the reference decoder's driver (`firmware-formats/test_decode.c`,
/// `glowscore_table.c` and the player's [`PLAYER_SOURCES`]) into `out` with
/// [`build_c`], plus `extra` flags.
pub fn build_decoder(out: &Path, extra: &[&str]) {
    let fw = firmware_formats();
    let mut sources = vec![fw.join("test_decode.c"), fw.join("glowscore_table.c")];
    sources.extend(player_sources());
    build_c(out, &sources, extra);
}

/// The reference decoder's driver, built once per test binary.
pub fn decoder() -> &'static Path {
    static EXE: OnceLock<PathBuf> = OnceLock::new();
    EXE.get_or_init(|| {
        let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
            .join("decoder")
            .join(std::process::id().to_string());
        std::fs::create_dir_all(&dir).expect("temp dir");
        let exe = dir.join("test_decode");
        build_decoder(&exe, &[]);
        exe
    })
}

/// A show from TOML text; panics with the diagnostics if it is invalid.
/// It is read as if from the test target's temporary folder, so that the
/// pictures the tests write there are inside the show's folder.
#[track_caller]
pub fn show(text: &str) -> Show {
    let name = Path::new(env!("CARGO_TARGET_TMPDIR")).join("test.toml");
    match glowscore::show::parse(&name.display().to_string(), text.to_string()) {
        Ok(s) => s,
        Err(d) => panic!("show did not parse:\n{d}"),
    }
}

/// A one-prop show playing one pattern for `bars` bars of 4 beats at 60 bpm
/// (one beat per second), with the pattern's keys given as TOML lines.
pub fn one_pattern(tether_m: f64, pattern: &str, bars: u32, delay_beats: f64) -> Show {
    show(&format!(
        r#"
[show]
frame_rate = 1000
bpm = 60
beats_per_bar = 4

[prop.p]
tether_m = {tether_m}
anchor_m = [0.0, 1.5, 0.0]

[pattern.x]
{pattern}

[[section]]
bars = [1, {bars}]
p = {{ pattern = "x", delay_beats = {delay_beats} }}
"#
    ))
}

/// A show with its motion and placed lights, ready to render.
pub struct Setup {
    pub prepared: glowscore::prepared::Prepared,
    pub show: Show,
    pub motions: Vec<glowscore::motion::PropMotion>,
    pub lights: glowscore::cues::Lights,
}

/// The show of `text`, simulated, with its cues placed.
#[track_caller]
pub fn setup(text: &str) -> Setup {
    let prepared = glowscore::prepared::Prepared::new(show(text)).expect("prepares");
    Setup {
        show: prepared.show().clone(),
        motions: prepared.motions().to_vec(),
        lights: prepared.lights().clone(),
        prepared,
    }
}

/// The exposed (undeveloped) picture of `s` with `opts`.
pub fn shoot(s: &Setup, opts: &glowscore::preview::PreviewOptions) -> glowscore::preview::Photo {
    glowscore::preview::shoot(&s.prepared, opts, &|_, _| {}).expect("renders")
}

/// Sum over LEDs and frames of LED power x the time each frame is inside
/// the shutter `window` (seconds): the light the props give off,
/// LED-seconds per primary.
pub fn emitted(s: &Setup, window: (f64, f64)) -> [f64; 3] {
    let rate = f64::from(s.show.frame_rate_hz);
    let mut sum = [0.0; 3];
    for pl in &s.lights.props {
        let mut frame = vec![[0u8; 3]; pl.leds as usize];
        for k in 0..s.show.frame_count() {
            let a = (k as f64 / rate).max(window.0);
            let b = ((k + 1) as f64 / rate).min(window.1);
            if b > a {
                pl.fill_frame(&s.show, k, &mut frame);
                for led in &frame {
                    for c in 0..3 {
                        sum[c] += f64::from(led[c]) / 255.0 * (b - a);
                    }
                }
            }
        }
    }
    sum
}

/// The check report of `show` with the default settings, prepared as every
/// command prepares it.
pub fn check_show(show: &Show) -> Result<CheckReport, Failure> {
    let prepared = Prepared::new(show.clone())?;
    Ok(glowscore::check::check(
        &prepared,
        &CheckSettings::default(),
    )?)
}
