//! The show as the play page reads it: motion as closed-form terms, colours
//! as run-length coded frames, the timeline's marks.
//!
//! Motion is sent as each span's sums of rotating terms (see
//! `motion::curve`): the page evaluates, at any time t, the tempo map (beat
//! at t), the span playing at that beat, its phase `u = phase0 + per_beat *
//! s` (s beats into the section), the hand `sum r (cos(a + 2 pi f u), sin(..))`
//! and the tether angle `b + 2 pi m u`; an LED `along` metres from the grip
//! sits at `anchor + up (hand_up + along cos) + right (hand_right + along sin)`
//! (`up` and `right` already mirrored), exactly `motion::Span::point_curve`.
//! Outside every span a prop rests (`motion::PropMotion::rest_point`).
//!
//! Colours: per prop, the LED bytes of every frame through
//! [`Prepared::for_each_block`], coded as runs of frames that share their
//! colours: a LEB128 number `2 * count + uniform`, then, when `uniform` is 1
//! (every LED of those frames has one colour), that colour's 3 bytes, else
//! the prop's `leds * 3` bytes (red, green, blue per LED); the runs follow
//! each other to the last frame. The bytes
//! are those of the tables (linear light); the page shows them through
//! [`display_lut`] (IEC 61966-2-1 encoding).

use serde::Serialize;

use crate::colour::linear_to_srgb;
use crate::model::Show;
use crate::motion::PropMotion;
use crate::prepared::Prepared;

/// Most bytes of run-length coded colour data a page may carry, every prop
/// together (before base64): a browser tab holds them in memory.
pub const MAX_COLOUR_BYTES: usize = 256 * 1024 * 1024;

/// Why the page's data could not be made.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum DataError {
    /// The colour data would be larger than [`MAX_COLOUR_BYTES`].
    #[error(
        "the show's frame colours need more than {} MiB on the play page (colours that change on every frame of many LEDs): play a shorter show or fewer LEDs",
        MAX_COLOUR_BYTES / (1024 * 1024)
    )]
    TooLarge,
}

/// Everything the page draws, serialised as one JSON object.
#[derive(Clone, Debug, Serialize)]
pub struct ShowData {
    /// The show's title.
    pub title: String,
    /// Frames per second.
    pub frame_rate: u32,
    /// Frames in the tables.
    pub frames: u64,
    /// End of the last section, seconds.
    pub end_s: f64,
    /// Beats per bar.
    pub beats_per_bar: u32,
    /// The tempo map: `[global beat, seconds, bpm]` per stretch of one tempo.
    pub tempo: Vec<[f64; 3]>,
    /// Number of bars (the last section's last bar).
    pub bars: u32,
    /// The sections, in time order.
    pub sections: Vec<SectionData>,
    /// The props, in show order.
    pub props: Vec<PropData>,
    /// A box holding every LED at every moment, stage metres: `[lo, hi]`.
    pub reach_box: [[f64; 3]; 2],
    /// Display sRGB byte of each LED byte (linear light), IEC 61966-2-1.
    pub display_lut: Vec<u8>,
    /// The song the page embeds, as its size and CRC-32 (`"BYTES-CRC"`,
    /// the CRC in hexadecimal), or none: a live page that is told of a
    /// show with another song fetches the new page for it.
    pub song: Option<String>,
}

/// One section on the timeline.
#[derive(Clone, Debug, Serialize)]
pub struct SectionData {
    /// First and last bar, inclusive.
    pub bars: [u32; 2],
    /// Start and end, seconds.
    pub time_s: [f64; 2],
    /// What each prop plays: `prop: pattern` (props that rest left out).
    pub label: String,
}

/// One prop: its LEDs, its spans and its colours.
#[derive(Clone, Debug, Serialize)]
pub struct PropData {
    /// The prop's name.
    pub name: String,
    /// `poi` or `staff`.
    pub kind: &'static str,
    /// The anchor, stage metres (the resting hand).
    pub anchor: [f64; 3],
    /// Each LED's signed distance from the grip along the prop, metres.
    pub leds: Vec<f64>,
    /// The prop's ends (head end, then a staff's tail end), metres along it.
    pub ends: Vec<f64>,
    /// The spans, in time order.
    pub spans: Vec<SpanData>,
    /// Run-length coded frame colours (see the module documentation), base64.
    pub colours: String,
    /// The times at which a cue changes the prop's colour, seconds
    /// (the cue's start and every change that plays), ascending.
    pub changes: Vec<f64>,
}

/// One span in closed form.
#[derive(Clone, Debug, Serialize)]
pub struct SpanData {
    /// Global beats where the section starts and ends.
    pub beats: [f64; 2],
    /// Phase at the section's start (hand revolutions; minus the delay's).
    pub phase0: f64,
    /// Phase per beat (negative when reversed).
    pub per_beat: f64,
    /// The anchor, stage metres.
    pub anchor: [f64; 3],
    /// The plane's `up`, stage.
    pub up: [f64; 3],
    /// The plane's `right`, stage (negated by `mirror`).
    pub right: [f64; 3],
    /// The hand's rotating terms: `[radius m, turns per phase, start rad]`.
    pub hand: Vec<[f64; 3]>,
    /// The tether's term: `[turns per phase, start rad]`.
    pub tether: [f64; 2],
}

/// Builds the page's data from the prepared show.
pub fn show_data(prepared: &Prepared) -> Result<ShowData, DataError> {
    let show = prepared.show();
    let colours = colour_runs(prepared)?;
    let props = show
        .props
        .iter()
        .zip(prepared.motions())
        .zip(colours)
        .enumerate()
        .map(|(i, ((prop, motion), runs))| PropData {
            name: prop.name.clone(),
            kind: prop.kind.name(),
            anchor: prop.anchor_m.into(),
            leds: prop.led_spots().iter().map(|s| s.along_m).collect(),
            ends: prop.ends_m(),
            spans: motion.spans.iter().map(span_data).collect(),
            colours: base64(&runs),
            changes: change_times(prepared, i),
        })
        .collect();
    Ok(ShowData {
        title: show.title.clone(),
        frame_rate: show.frame_rate_hz,
        frames: show.frame_count(),
        end_s: show.end_s(),
        beats_per_bar: show.tempo.beats_per_bar(),
        tempo: tempo_rows(show),
        bars: show.sections.iter().map(|s| s.last_bar).max().unwrap_or(0),
        sections: sections(show),
        props,
        reach_box: reach_box(show, prepared.motions()),
        display_lut: display_lut(),
        song: None,
    })
}

fn span_data(span: &crate::motion::Span) -> SpanData {
    let tether = span.tether();
    SpanData {
        beats: [span.start_beat, span.end_beat],
        phase0: span.phase(0.0),
        per_beat: span.phase_per_beat(),
        anchor: span.anchor().into(),
        up: span.to_stage_dir([1.0, 0.0]).into(),
        right: span.to_stage_dir([0.0, 1.0]).into(),
        hand: span
            .hand
            .rotors()
            .iter()
            .map(|r| [r.radius_m, r.turns, r.start_rad])
            .collect(),
        tether: [tether.turns, tether.start_rad],
    }
}

fn tempo_rows(show: &Show) -> Vec<[f64; 3]> {
    let t = &show.tempo;
    let mut rows = vec![[0.0, t.time_at_beat(0.0), t.bpm_at_beat(0.0)]];
    rows.extend(
        t.changes()
            .map(|(beat, bpm)| [beat, t.time_at_beat(beat), bpm]),
    );
    rows
}

fn sections(show: &Show) -> Vec<SectionData> {
    show.sections
        .iter()
        .map(|sec| {
            let label = sec
                .placements
                .iter()
                .enumerate()
                .filter_map(|(p, pl)| {
                    let pl = pl.as_ref()?;
                    Some(format!(
                        "{}: {}",
                        show.props[p].name, show.patterns[pl.pattern].name
                    ))
                })
                .collect::<Vec<_>>()
                .join(", ");
            SectionData {
                bars: [sec.first_bar, sec.last_bar],
                time_s: [
                    show.tempo.time_at_bar(sec.first_bar),
                    show.tempo.time_at_bar(sec.last_bar + 1),
                ],
                label,
            }
        })
        .collect()
}

/// The times at which prop `prop`'s colour changes by a cue that plays there.
fn change_times(prepared: &Prepared, prop: usize) -> Vec<f64> {
    let lights = &prepared.lights().props[prop];
    let mut times: Vec<f64> = lights
        .tracks
        .iter()
        .flat_map(|track| {
            track
                .changes
                .iter()
                .filter(|c| lights.plays(track.cue, c.frame))
                .map(|c| (c.time_s * 1e4).round() / 1e4)
        })
        .collect();
    times.sort_by(f64::total_cmp);
    times.dedup();
    times
}

/// A box that holds every point of every prop at every moment: around each
/// anchor, the hand's reach plus the longer end of the prop, and the resting
/// prop hanging below it.
fn reach_box(show: &Show, motions: &[PropMotion]) -> [[f64; 3]; 2] {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for (prop, motion) in show.props.iter().zip(motions) {
        let len = prop.tether_m.max(prop.tail_m);
        let hand = motion
            .spans
            .iter()
            .map(|s| s.hand.rotors().iter().map(|r| r.radius_m).sum::<f64>())
            .fold(0.0, f64::max);
        let centres = std::iter::once(prop.anchor_m).chain(motion.spans.iter().map(|s| s.anchor()));
        for c in centres {
            let c: [f64; 3] = c.into();
            for k in 0..3 {
                lo[k] = lo[k].min(c[k] - hand - len);
                hi[k] = hi[k].max(c[k] + hand + len);
            }
        }
    }
    if lo[0] > hi[0] {
        return [[-1.0, 0.0, -1.0], [1.0, 2.0, 1.0]];
    }
    [lo, hi]
}

/// The display sRGB byte (IEC 61966-2-1 encoding) of each LED byte.
pub fn display_lut() -> Vec<u8> {
    (0..=255u8)
        .map(|b| {
            let v = linear_to_srgb(f64::from(b) / 255.0);
            (v * 255.0).round().clamp(0.0, 255.0) as u8
        })
        .collect()
}

/// Every prop's frames as runs (see the module documentation).
pub fn colour_runs(prepared: &Prepared) -> Result<Vec<Vec<u8>>, DataError> {
    let props = &prepared.show().props;
    let mut out: Vec<Vec<u8>> = vec![Vec::new(); props.len()];
    // The current run of each prop: its colours and its length so far.
    let mut runs: Vec<(Vec<[u8; 3]>, u64)> = vec![(Vec::new(), 0); props.len()];
    let mut total = 0usize;
    prepared.for_each_block(|_, n, blocks| {
        for (p, block) in blocks.iter().enumerate() {
            let leds = props[p].leds as usize;
            if leds == 0 {
                runs[p].1 += n as u64;
                continue;
            }
            for frame in block[..n * leds].chunks(leds) {
                let run = &mut runs[p];
                if run.1 > 0 && run.0 == frame {
                    run.1 += 1;
                    continue;
                }
                if run.1 > 0 {
                    total += push_run(&mut out[p], &run.0, run.1);
                    if total > MAX_COLOUR_BYTES {
                        return Err(DataError::TooLarge);
                    }
                }
                run.0.clear();
                run.0.extend_from_slice(frame);
                run.1 = 1;
            }
        }
        Ok(())
    })?;
    for (p, run) in runs.iter().enumerate() {
        if run.1 > 0 {
            total += push_run(&mut out[p], &run.0, run.1);
        }
    }
    if total > MAX_COLOUR_BYTES {
        return Err(DataError::TooLarge);
    }
    Ok(out)
}

/// Appends one run; returns the bytes written.
fn push_run(out: &mut Vec<u8>, colours: &[[u8; 3]], count: u64) -> usize {
    let before = out.len();
    let uniform = colours.iter().all(|c| *c == colours[0]);
    let mut n = 2 * count + u64::from(uniform);
    loop {
        let byte = (n & 0x7f) as u8;
        n >>= 7;
        if n == 0 {
            out.push(byte);
            break;
        }
        out.push(byte | 0x80);
    }
    if uniform {
        out.extend_from_slice(colours.first().unwrap_or(&[0; 3]));
        return out.len() - before;
    }
    for c in colours {
        out.extend_from_slice(c);
    }
    out.len() - before
}

/// Decodes runs back to frames (the page's reading, for tests): for each
/// frame, its `leds` colours.
pub fn decode_runs(data: &[u8], leds: usize) -> Option<Vec<Vec<[u8; 3]>>> {
    let mut frames = Vec::new();
    let mut i = 0;
    while i < data.len() {
        let mut n: u64 = 0;
        let mut shift = 0;
        loop {
            let b = *data.get(i)?;
            i += 1;
            n |= u64::from(b & 0x7f) << shift;
            shift += 7;
            if b & 0x80 == 0 {
                break;
            }
            if shift > 63 {
                return None;
            }
        }
        let (count, uniform) = (n / 2, n % 2 == 1);
        let colours: Vec<[u8; 3]> = if uniform {
            let c = data.get(i..i + 3)?;
            i += 3;
            vec![[c[0], c[1], c[2]]; leds]
        } else {
            let bytes = data.get(i..i + 3 * leds)?;
            i += 3 * leds;
            bytes.chunks(3).map(|c| [c[0], c[1], c[2]]).collect()
        };
        for _ in 0..count {
            frames.push(colours.clone());
        }
    }
    Some(frames)
}

const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";

/// Standard base64 with padding (RFC 4648, section 4).
pub fn base64(data: &[u8]) -> String {
    let mut s = String::with_capacity(data.len().div_ceil(3) * 4);
    for chunk in data.chunks(3) {
        let b = [
            chunk[0],
            chunk.get(1).copied().unwrap_or(0),
            chunk.get(2).copied().unwrap_or(0),
        ];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        for k in 0..4 {
            if k <= chunk.len() {
                s.push(char::from(ALPHABET[((n >> (18 - 6 * k)) & 63) as usize]));
            } else {
                s.push('=');
            }
        }
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_matches_the_rfc_4648_test_vectors() {
        // RFC 4648, section 10.
        let cases = [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ];
        for (plain, coded) in cases {
            assert_eq!(base64(plain.as_bytes()), coded, "{plain:?}");
        }
    }

    #[test]
    fn runs_decode_to_what_was_pushed() {
        let mut out = Vec::new();
        push_run(&mut out, &[[1, 2, 3], [4, 5, 6]], 300);
        push_run(&mut out, &[[0, 0, 0], [9, 9, 9]], 1);
        push_run(&mut out, &[[7, 7, 7], [7, 7, 7]], 2);
        let frames = decode_runs(&out, 2).unwrap();
        assert_eq!(frames.len(), 303);
        assert_eq!(frames[299], vec![[1, 2, 3], [4, 5, 6]]);
        assert_eq!(frames[300], vec![[0, 0, 0], [9, 9, 9]]);
        assert_eq!(frames[302], vec![[7, 7, 7], [7, 7, 7]]);
        // 2 * 300 = 600 needs two LEB128 bytes; a uniform run carries one colour.
        assert_eq!(out[..2], [0xd8, 0x04]);
        assert_eq!(out[out.len() - 4..], [2 * 2 + 1, 7, 7, 7]);
    }

    #[test]
    fn display_lut_is_the_srgb_encoding() {
        // IEC 61966-2-1: black and white stay; byte 128 (linear 0.50196)
        // encodes to 1.055 * 0.50196^(1/2.4) - 0.055 = 0.7367 (worked by
        // hand), byte 188; byte 1 (linear 0.00392) to 0.0498, byte 13.
        let lut = display_lut();
        assert_eq!((lut[0], lut[255]), (0, 255));
        assert_eq!(lut[128], 188);
        assert_eq!(lut[1], 13);
    }
}
