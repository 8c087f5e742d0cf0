//! `glowscore new NAME`: writes a commented starter show to build on.
//!
//! The starter is a small, complete show of our own design: two poi that
//! open with extensions and flower into four-petal antispin, with a cue of
//! each common kind. It passes `glowscore check --deny-warnings` as written
//! (a test keeps it so), and its comments name every key it uses.

use std::fs::{self, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};

use super::Failure;

/// The starter show; `{title}` is replaced by the title, a TOML string.
const STARTER: &str = r##"# {name}: a starter show written by `glowscore new`.
#
# Two poi, one in each hand, for eight bars: four bars of slow extensions,
# then four of four-petal antispin flowers, each cue stepping its colours on
# the events of the motion. Change anything; `glowscore check FILE` says
# what a change does to the tension, the reach and the landings, and
# `glowscore preview FILE --out FILE.png` shows a long exposure of it.
#
# Stage coordinates are metres: x to the audience's right, y up, z toward
# the audience. Clock angles are degrees: 0 at 12 o'clock, 90 at 3 o'clock.
# Every key and its default is listed in the README's key reference.

[show]
title = {title}
frame_rate = 500          # LED frames per second in the props
bpm = 100                 # tempo at bar 1, beats per minute
beats_per_bar = 4
start_s = 0.5             # bar 1, beat 1 starts half a second into the tables
# [[tempo]] tables change the tempo at the start of a bar:
# [[tempo]]
# bar = 5
# bpm = 110

# One table per prop; its key (`left`, `right`) is the prop's name, which
# also names its output files (left.csv, left.h, ...).
[prop.left]
kind = "poi"              # or "staff" (a rigid rod held at the grip)
tether_m = 0.55           # handle to the head's centre
anchor_m = [-0.30, 1.35, 0.12]  # centre of the hand's circle; 24 cm in front of the right
                                # hand's, so that the two poi never touch
leds = 1                  # LEDs in the head; a pixel strip is `strip = { leds = 36, ... }`
head_mass_kg = 0.14       # for the tension checks

[prop.right]
kind = "poi"
tether_m = 0.55
anchor_m = [0.30, 1.35, -0.12]
leds = 1
head_mass_kg = 0.14

# Spin patterns: a hand circle (`hand_radius_m`, one turn every `beats`)
# with the tether turning `head_turns` times per hand turn. Negative
# `head_turns` is antispin, a flower of |head_turns - 1| petals.
[pattern.extension]       # hand and tether turn together: one big circle
plane = "wall"            # wall | wheel | floor
beats = 2
hand_radius_m = 0.20
head_turns = 1

[pattern.flower]          # four-petal antispin, starting where the extension ends
plane = "wall"
beats = 4
hand_radius_m = 0.20
head_turns = -3

# Sections place patterns on props for a stretch of bars (first and last,
# inclusive). A prop left out of a section rests.
[[section]]
bars = [1, 4]
left = "extension"
right = { pattern = "extension", mirror = true }   # mirrored: the right poi turns the other way

[[section]]
bars = [5, 8]
left = "flower"
right = { pattern = "flower", mirror = true }

# Colour cues: the colours step on every event of the kind named by `at`
# (tip, inner, stall, beat, bar, or angle with `angle_deg`), cycling.
# Colours are #rrggbb or CSS colour names.
[[cue]]
prop = "left"
bars = [1, 4]
at = "beat"
colours = ["#ff6a00", "gold"]

[[cue]]
prop = "right"
bars = [1, 4]
at = "angle"
angle_deg = 0             # each time the head passes 12 o'clock
colours = ["deepskyblue", "#2040ff"]

[[cue]]
prop = "left"
bars = [5, 8]
at = "tip"                # a new colour at each petal tip
colours = ["#ff2000", "#ffd000", "#20ff40", "#0050ff"]

[[cue]]
prop = "right"
bars = [5, 8]
at = "tip"
colours = ["#0050ff", "#20ff40", "#ffd000", "#ff2000"]
fade_beats = 0.25         # a quarter-beat crossfade after each tip; 0 is a hard cut

# A warning the show means can be named so that `check` marks it expected:
# [[expected]]
# kind = "slack"
# prop = "left"
# bars = [5, 8]
# why = "the reason, in your words"
"##;

/// The file `glowscore new NAME` writes: `NAME`, with `.toml` added when
/// it has no extension.
pub fn file_for(name: &Path) -> PathBuf {
    if name.extension().is_some() {
        name.to_path_buf()
    } else {
        name.with_extension("toml")
    }
}

/// The starter show's text, titled after the file's stem (`my-first-show`
/// becomes "My First Show").
pub fn starter(file: &Path) -> String {
    let stem = file
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let words: Vec<String> = stem
        .split(['-', '_', ' '])
        .filter(|w| !w.is_empty())
        .map(|w| {
            let mut c = w.chars();
            c.next()
                .map(|f| f.to_uppercase().chain(c).collect())
                .unwrap_or_default()
        })
        .collect();
    let title = if words.is_empty() {
        "A New Show".to_string()
    } else {
        words.join(" ")
    };
    // A TOML basic string: the title's quotes, backslashes and control
    // characters escaped.
    let quoted = toml::Value::String(title.clone()).to_string();
    let heading: String = title.chars().filter(|c| !c.is_control()).collect();
    STARTER
        .replacen("{name}", &heading, 1)
        .replacen("{title}", &quoted, 1)
}

/// Writes the starter show for `name` (never over an existing file; its
/// folder is made if missing) and says where to `log`.
pub fn run(name: &Path, log: &mut dyn Write) -> Result<(), Failure> {
    let file = file_for(name);
    let shown = crate::diag::escape(&file.display().to_string());
    let cannot = |e: std::io::Error| Failure::Option(format!("cannot write `{shown}`: {e}"));
    if let Some(dir) = file.parent().filter(|d| !d.as_os_str().is_empty()) {
        fs::create_dir_all(dir).map_err(cannot)?;
    }
    let mut f = match OpenOptions::new().write(true).create_new(true).open(&file) {
        Ok(f) => f,
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
            return Err(Failure::Option(format!(
                "`{shown}` already exists; choose another name (nothing was written)"
            )));
        }
        Err(e) => return Err(cannot(e)),
    };
    f.write_all(starter(&file).as_bytes()).map_err(cannot)?;
    writeln!(
        log,
        "wrote {shown}: two poi, eight bars; next: `glowscore check {shown}`"
    )
    .map_err(Failure::output("the summary"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_starter_is_a_valid_show_titled_after_its_file() {
        let text = starter(Path::new("shows/my-first_show.toml"));
        let show = crate::show::parse("my-first_show.toml", text).unwrap();
        assert_eq!(show.title, "My First Show");
        assert_eq!(show.props.len(), 2);
        assert_eq!(show.sections.len(), 2);
    }

    #[test]
    fn a_title_with_quotes_is_escaped_for_toml() {
        let text = starter(Path::new("say \"hi\"\\.toml"));
        let show = crate::show::parse("x.toml", text).unwrap();
        assert_eq!(show.title, "Say \"hi\"\\");
    }

    #[test]
    fn toml_is_added_only_when_there_is_no_extension() {
        assert_eq!(file_for(Path::new("a/b")), PathBuf::from("a/b.toml"));
        assert_eq!(file_for(Path::new("b.toml")), PathBuf::from("b.toml"));
    }
}
