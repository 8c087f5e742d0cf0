//! Long fuzz runs, ignored by default (DEVELOPERS.md, "Fuzzing"):
//!
//! - `fuzz::reader`: the reader and the model over mutated demo shows (byte
//!   edits, extreme numbers put in place of numbers, lines doubled, dropped
//!   or swapped, brackets doubled or halved) and arbitrary text: every input
//!   is either a valid `Show` or diagnostics, each error located or naming
//!   its key, never a panic.
//! - `fuzz::commands`: the same mutations through the entry point of every
//!   command (`check`, `events`, `compile`, `preview`) on a file: each exits
//!   with its result or a `Failure`, never a panic, and an invalid show is
//!   refused by all of them alike.
//!
//! The demo shows are the seed corpus. `GLOWSCORE_FUZZ_CASES` sets the
//! number of cases (default 1 000 000 for the reader, 2 000 for the
//! commands).

use std::path::{Path, PathBuf};

use glowscore::commands::{self, Failure};
use proptest::prelude::*;
use proptest::test_runner::{Config, TestRunner};

const SEEDS: [&str; 3] = [
    include_str!("../../shows/moth-garden.toml"),
    include_str!("../../shows/salt-marsh-reel.toml"),
    include_str!("../../shows/eelgrass-lanterns.toml"),
];

/// Numbers that have broken readers: zero, subnormals, huge, negative,
/// beyond an f64's exact integers, and TOML's special floats.
const EXTREMES: [&str; 16] = [
    "0",
    "-0.0",
    "5e-324",
    "1e-300",
    "1e300",
    "-1e300",
    "9007199254740993",
    "18446744073709551616",
    "-1",
    "inf",
    "-inf",
    "nan",
    "0.0001",
    "100000",
    "1e9",
    "64",
];

/// One mutation of a show's text.
#[derive(Clone, Debug)]
enum Edit {
    /// Replace, insert or delete one byte.
    Byte(usize, u8, u8),
    /// Put an extreme number in place of the n-th number.
    Number(usize, usize),
    /// Double, drop or swap with the next the n-th line.
    Line(usize, u8),
    /// `[[x]]` into `[x]` or `[x]` into `[[x]]` on the n-th header.
    Brackets(usize),
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        (any::<usize>(), any::<u8>(), any::<u8>()).prop_map(|(a, b, c)| Edit::Byte(a, b, c)),
        (any::<usize>(), 0..EXTREMES.len()).prop_map(|(a, b)| Edit::Number(a, b)),
        (any::<usize>(), any::<u8>()).prop_map(|(a, b)| Edit::Line(a, b)),
        any::<usize>().prop_map(Edit::Brackets),
    ]
}

/// Byte ranges of the numbers in `text` (digits with their sign, point and
/// exponent).
fn numbers(text: &[u8]) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut i = 0;
    while i < text.len() {
        let starts = text[i].is_ascii_digit()
            && (i == 0 || !(text[i - 1].is_ascii_alphanumeric() || text[i - 1] == b'_'));
        if starts {
            let a = if i > 0 && text[i - 1] == b'-' {
                i - 1
            } else {
                i
            };
            let mut j = i;
            while j < text.len()
                && (text[j].is_ascii_digit() || matches!(text[j], b'.' | b'e' | b'E' | b'_'))
            {
                j += 1;
            }
            out.push((a, j));
            i = j;
        } else {
            i += 1;
        }
    }
    out
}

/// `base` with `edits` applied, as bytes (not always UTF-8).
fn mutate(base: &str, edits: &[Edit]) -> Vec<u8> {
    let mut b = base.as_bytes().to_vec();
    for e in edits {
        if b.is_empty() {
            break;
        }
        match *e {
            Edit::Byte(pos, byte, kind) => {
                let i = pos % b.len();
                match kind % 3 {
                    0 => b[i] = byte,
                    1 => b.insert(i, byte),
                    _ => {
                        b.remove(i);
                    }
                }
            }
            Edit::Number(n, x) => {
                let found = numbers(&b);
                if let Some(&(s, t)) = found.get(n % found.len().max(1)) {
                    b.splice(s..t, EXTREMES[x].bytes());
                }
            }
            Edit::Line(n, how) => {
                let mut lines: Vec<Vec<u8>> =
                    b.split(|&c| c == b'\n').map(<[u8]>::to_vec).collect();
                let i = n % lines.len();
                match how % 3 {
                    0 => {
                        let l = lines[i].clone();
                        lines.insert(i, l);
                    }
                    1 => {
                        lines.remove(i);
                    }
                    _ if i + 1 < lines.len() => lines.swap(i, i + 1),
                    _ => {}
                }
                b = lines.join(&b'\n');
            }
            Edit::Brackets(n) => {
                let heads: Vec<usize> = (0..b.len())
                    .filter(|&i| b[i] == b'[' && (i == 0 || b[i - 1] == b'\n'))
                    .collect();
                if let Some(&i) = heads.get(n % heads.len().max(1)) {
                    if b.get(i + 1) == Some(&b'[') {
                        b.remove(i);
                        if let Some(j) = b[i..].iter().position(|&c| c == b']') {
                            b.remove(i + j);
                        }
                    } else {
                        b.insert(i, b'[');
                        if let Some(j) = b[i..].iter().position(|&c| c == b']') {
                            b.insert(i + j, b']');
                        }
                    }
                }
            }
        }
    }
    b
}

fn cases(default: u32) -> u32 {
    std::env::var("GLOWSCORE_FUZZ_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(default)
}

/// Reads `bytes` as a show named as if in `shows/` (so that the staff
/// show's picture is found); every error must be located or keyed.
fn read(bytes: Vec<u8>) -> Result<(), TestCaseError> {
    if let Err(diags) = glowscore::show::parse_bytes("shows/fuzz.toml", bytes) {
        prop_assert!(diags.has_errors());
        for d in &diags.0 {
            prop_assert!(
                d.span.is_some() || d.key.is_some(),
                "an error without a place: {}",
                d
            );
            prop_assert!(!d.message.contains("NaN") && !d.message.contains("inf turns"));
        }
        // Rendering is bounded and never panics.
        let shown = diags.to_string();
        prop_assert!(shown.len() < 1 << 20);
    }
    Ok(())
}

#[test]
#[ignore = "a long fuzz run: cargo test --test suite fuzz:: -- --ignored"]
fn reader() {
    let mut runner = TestRunner::new(Config {
        cases: cases(1_000_000),
        failure_persistence: None,
        ..Config::default()
    });
    let strategy = (0..SEEDS.len(), proptest::collection::vec(edit(), 1..6));
    runner
        .run(&strategy, |(seed, edits)| read(mutate(SEEDS[seed], &edits)))
        .unwrap();
    let text = "\\PC{0,300}";
    let mut runner = TestRunner::new(Config {
        cases: cases(1_000_000) / 10,
        failure_persistence: None,
        ..Config::default()
    });
    runner.run(&text, |t| read(t.into_bytes())).unwrap();
}

/// The show folder the command target writes its mutated shows into: a
/// copy of the demo picture sits beside them.
fn folder() -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("fuzz")
        .join(std::process::id().to_string());
    std::fs::create_dir_all(&dir).unwrap();
    let pic = Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/moon-and-tide.png");
    std::fs::copy(pic, dir.join("moon-and-tide.png")).unwrap();
    dir
}

/// Whether a failure is the show's (the same in every command), and the
/// first line of its message.
fn refusal(r: &Result<(), Failure>) -> Option<String> {
    match r {
        Err(Failure::Invalid(d)) => Some(d.to_string().lines().next().unwrap_or("").into()),
        _ => None,
    }
}

#[test]
#[ignore = "a long fuzz run: cargo test --test suite fuzz:: -- --ignored"]
fn commands() {
    let dir = folder();
    let file = dir.join("fuzz.toml");
    let out = dir.join("out");
    let png = dir.join("p.png");
    let mut runner = TestRunner::new(Config {
        cases: cases(2_000),
        failure_persistence: None,
        ..Config::default()
    });
    let strategy = (0..SEEDS.len(), proptest::collection::vec(edit(), 1..4));
    runner
        .run(&strategy, |(seed, edits)| {
            let bytes = mutate(SEEDS[seed], &edits);
            // Long or heavy valid shows are the reader target's: here each
            // case must take well under a second.
            if let Ok(show) = glowscore::show::parse_bytes("shows/fuzz.toml", bytes.clone()) {
                let leds: u64 = show.props.iter().map(|p| u64::from(p.leds)).sum();
                if show.end_s() > 120.0 || show.frame_count() * leds > 2_000_000 {
                    return Ok(());
                }
            }
            std::fs::write(&file, bytes).unwrap();
            let sink = &mut std::io::sink();
            let checked = commands::check::run(&file, true, false, 10.0, sink);
            let events = commands::events::run(&file, true, &Default::default(), sink);
            // The same refusal in every command.
            prop_assert_eq!(refusal(&checked), refusal(&events));
            if refusal(&checked).is_some() {
                let opts = commands::compile::RunOptions {
                    tolerance_mm: 10.0,
                    header_form: glowscore::output::TableForm::Compact,
                    previews: false,
                    skip: Vec::new(),
                    quiet: true,
                };
                let compiled = commands::compile::run(&file, Some(&out), &opts, sink);
                prop_assert_eq!(refusal(&checked), refusal(&compiled));
                let popts = glowscore::preview::PreviewOptions {
                    size: Some((32, 24)),
                    ..Default::default()
                };
                let previewed = commands::preview::run(&file, &png, &popts, sink);
                prop_assert_eq!(refusal(&checked), refusal(&previewed));
            } else if checked.is_ok() {
                // A valid show compiles (small shows only: the demos'
                // lengths, or refused by a limit with a message).
                let opts = commands::compile::RunOptions {
                    tolerance_mm: 10.0,
                    header_form: glowscore::output::TableForm::Compact,
                    previews: false,
                    skip: Vec::new(),
                    quiet: true,
                };
                let compiled = commands::compile::run(&file, Some(&out), &opts, sink);
                if let Err(e) = &compiled {
                    prop_assert!(!e.to_string().is_empty());
                }
            }
            Ok(())
        })
        .unwrap();
}

#[test]
fn the_mutations_do_what_they_say() {
    let base = "[show]\nbpm = 100\n[[cue]]\nx = 1.5e3\n";
    assert_eq!(numbers(base.as_bytes()).len(), 2);
    let n = mutate(base, &[Edit::Number(1, 2)]);
    assert_eq!(
        String::from_utf8(n).unwrap(),
        "[show]\nbpm = 100\n[[cue]]\nx = 5e-324\n"
    );
    let b = mutate(base, &[Edit::Brackets(1)]);
    assert_eq!(
        String::from_utf8(b).unwrap(),
        "[show]\nbpm = 100\n[cue]\nx = 1.5e3\n"
    );
    let b = mutate(base, &[Edit::Brackets(0)]);
    assert_eq!(
        String::from_utf8(b).unwrap(),
        "[[show]]\nbpm = 100\n[[cue]]\nx = 1.5e3\n"
    );
    let l = mutate(base, &[Edit::Line(1, 0)]);
    assert!(
        String::from_utf8(l)
            .unwrap()
            .contains("bpm = 100\nbpm = 100\n")
    );
}
