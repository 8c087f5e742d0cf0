//! The show parser never panics, whatever the input: arbitrary text, and
//! the demo shows with random bytes changed, inserted or removed. Each
//! invalid input must come back as diagnostics, and valid ones must run
//! through motion and events. Raise PROPTEST_CASES for a longer fuzz.

use proptest::prelude::*;

const DEMO: &str = include_str!("../../shows/moth-garden.toml");
const REEL: &str = include_str!("../../shows/salt-marsh-reel.toml");
const LANTERNS: &str = include_str!("../../shows/eelgrass-lanterns.toml");

fn run(text: String) {
    // Named as if in `shows/`, so that the staff show's picture is found.
    if let Ok(show) = glowscore::show::parse("shows/fuzz.toml", text) {
        let motions = glowscore::motion::simulate(&show);
        let events = glowscore::events::find_events(&show, &motions);
        // Colours on a few frames of every prop, strips and paintings too.
        let lights = glowscore::cues::place(&show, &motions, &events);
        let n = show.frame_count();
        for pl in &lights.props {
            let mut frame = vec![[0u8; 3]; pl.leds as usize];
            for k in [0, n / 3, n / 2, n.saturating_sub(1)] {
                pl.fill_frame(&show, k, &mut frame);
            }
        }
    }
}

/// A demo show with `edits` applied: (position, byte, kind) where kind 0
/// replaces, 1 inserts and 2 deletes.
fn mutate(base: &str, edits: &[(usize, u8, u8)]) -> String {
    let mut b = base.as_bytes().to_vec();
    for &(pos, byte, kind) in edits {
        if b.is_empty() {
            break;
        }
        let i = pos % b.len();
        match kind % 3 {
            0 => b[i] = byte,
            1 => b.insert(i, byte),
            _ => {
                b.remove(i);
            }
        }
    }
    String::from_utf8_lossy(&b).into_owned()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn arbitrary_text_never_panics(text in "\\PC{0,400}") {
        run(text);
    }

    #[test]
    fn mutated_demo_shows_never_panic(
        edits in proptest::collection::vec((any::<usize>(), any::<u8>(), any::<u8>()), 1..8),
        which in 0..3usize,
    ) {
        run(mutate([DEMO, REEL, LANTERNS][which], &edits));
    }

    #[test]
    fn numbers_swapped_in_never_panic(
        pos in any::<usize>(),
        value in prop_oneof![
            Just("0".to_string()), Just("-1".to_string()), Just("1e308".to_string()),
            Just("nan".to_string()), Just("inf".to_string()), Just("-0.0".to_string()),
            Just("99999999999".to_string()), Just("\"x\"".to_string()), Just("[]".to_string()),
            Just("{}".to_string()), Just("1979-05-27".to_string()),
        ],
    ) {
        // Replace the n-th number of a demo with an edge value.
        let demo = if pos % 2 == 0 { DEMO } else { LANTERNS };
        let pos = pos / 2;
        let nums: Vec<(usize, usize)> = demo
            .match_indices(|c: char| c.is_ascii_digit())
            .map(|(i, _)| i)
            .filter(|&i| i == 0 || !demo.as_bytes()[i - 1].is_ascii_digit() && demo.as_bytes()[i - 1] != b'.')
            .map(|i| (i, demo[i..].find(|c: char| !(c.is_ascii_digit() || c == '.')).map_or(demo.len(), |e| i + e)))
            .collect();
        let (a, b) = nums[pos % nums.len()];
        run(format!("{}{}{}", &demo[..a], value, &demo[b..]));
    }
}
