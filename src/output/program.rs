//! The program form (`GSPR`): one prop's show as the firmware evaluates it.
//!
//! Instead of frames it stores what makes them: the tempo map as frame
//! steps, the motion spans (sums of rotating terms), where each LED sits,
//! the cues with their colours and every colour change's frame number, and
//! each painted picture once. `firmware-formats/program-form.md` documents
//! every byte; `firmware-formats/glowscore_program.c` (with
//! `glowscore_program_open.c`) is the reference player, which computes
//! frame `k` from them in single precision and 64-bit integers.
//!
//! Everything the player could decide differently from the tables by a
//! rounding is decided here, in the same double-precision arithmetic the
//! tables come from, and stored as a frame number: where each tempo segment,
//! motion span, cue and colour change starts, and which cue plays each
//! frame. Beats are 64-bit fixed point (32 fraction bits), rates of turn
//! 48 fraction bits, so that phases stay exact over hours.

use std::io::Write;

use palette::{FromColor, Oklab, Srgb};

use super::OutputError;
use super::files::{Finished, Output, PropFile};
use super::spec::{HEADER_LEN, TableSpec};
use crate::colour;
use crate::cues::CueTrack;
use crate::model::{Along, FixedTo, Look, Plane, Show};
use crate::motion::Rotor;
use crate::picture::Picture;
use crate::prepared::Prepared;

/// Magic of the program form.
pub const MAGIC_PROGRAM: [u8; 4] = *b"GSPR";
/// Version of the program form written, and the only one the player accepts.
pub const PROGRAM_VERSION: u16 = 1;
/// Colour changes per block of the change stream (a player scans at most
/// this many to find a frame's change).
pub const CHANGES_PER_BLOCK: usize = 32;
/// Marks a stretch of frames no cue covers in the `PLAY` section.
pub const DARK: u32 = u32::MAX;

/// Why a prop's program form cannot be written.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ProgramError {
    /// A value falls outside what the form's fixed-point fields hold.
    #[error("the program form cannot hold {what}")]
    OutOfRange {
        /// What, in words.
        what: String,
    },
}

fn out_of_range(what: impl Into<String>) -> ProgramError {
    ProgramError::OutOfRange { what: what.into() }
}

/// `x` in fixed point with `bits` fraction bits, if it fits in an `i64`
/// with room to spare (below 2^62 in size).
fn fixed(x: f64, bits: i32, what: &str) -> Result<i64, ProgramError> {
    let v = (x * 2f64.powi(bits)).round();
    if v.is_finite() && v.abs() < 2f64.powi(62) {
        Ok(v as i64)
    } else {
        Err(out_of_range(format!("{what} ({x})")))
    }
}

/// A beat count in the form's beat units (32 fraction bits).
fn beat_q(x: f64, what: &str) -> Result<i64, ProgramError> {
    fixed(x, 32, what)
}

/// A rate of turn, revolutions per beat (48 fraction bits; below 16384).
fn rate_q(x: f64, what: &str) -> Result<i64, ProgramError> {
    if x.abs() >= 16384.0 {
        return Err(out_of_range(format!("{what} ({x} revolutions a beat)")));
    }
    fixed(x, 48, what)
}

/// A start angle, radians, as a fraction of a turn in 2^-32 units.
fn turn_u32(rad: f64) -> u32 {
    let t = rad / std::f64::consts::TAU;
    let f = t - t.floor();
    ((f * 4294967296.0).round() as u64 & 0xffff_ffff) as u32
}

/// Little-endian byte sink.
#[derive(Default)]
struct Bytes(Vec<u8>);

impl Bytes {
    fn u8(&mut self, v: u8) {
        self.0.push(v);
    }
    fn u16(&mut self, v: u16) {
        self.0.extend_from_slice(&v.to_le_bytes());
    }
    fn u32(&mut self, v: u32) {
        self.0.extend_from_slice(&v.to_le_bytes());
    }
    fn i64(&mut self, v: i64) {
        self.0.extend_from_slice(&v.to_le_bytes());
    }
    fn u64(&mut self, v: u64) {
        self.0.extend_from_slice(&v.to_le_bytes());
    }
    fn f32(&mut self, v: f64) {
        self.0.extend_from_slice(&(v as f32).to_le_bytes());
    }
    fn varint(&mut self, mut v: u64) {
        while v >= 0x80 {
            self.0.push((v as u8 & 0x7f) | 0x80);
            v >>= 7;
        }
        self.0.push(v as u8);
    }
    fn len_u32(&self, what: &str) -> Result<u32, ProgramError> {
        u32::try_from(self.0.len()).map_err(|_| out_of_range(format!("{what} over 4 GiB")))
    }
}

fn count_u32(n: usize, what: &str) -> Result<u32, ProgramError> {
    u32::try_from(n).map_err(|_| out_of_range(format!("{n} {what}")))
}

fn frame_u32(k: u64) -> u32 {
    u32::try_from(k).unwrap_or(u32::MAX)
}

/// The beat at the midpoint of frame `k`, as every frame's colours take it.
fn mid_beat(show: &Show, k: u64) -> f64 {
    let mid = (k as f64 + 0.5) / f64::from(show.frame_rate_hz);
    show.tempo.beat_at_time(mid)
}

/// The first frame in `0..=n` for which `pred` holds (`pred` false then
/// true along the frames), or `n`.
fn first_frame(n: u64, pred: impl Fn(u64) -> bool) -> u64 {
    let (mut lo, mut hi) = (0u64, n);
    while lo < hi {
        let mid = lo + (hi - lo) / 2;
        if pred(mid) { hi = mid } else { lo = mid + 1 }
    }
    lo
}

/// The tempo segments as frame steps: for each, the frame it starts on,
/// the beat at that frame's midpoint and the beats a frame (56 fraction bits).
fn tempo_section(show: &Show, frames: u64) -> Result<(Bytes, Vec<(u64, f64)>), ProgramError> {
    let rate = f64::from(show.frame_rate_hz);
    let mut segs: Vec<(f64, f64)> = vec![(show.tempo.start_s(), show.tempo.bpm_at_beat(0.0))];
    // bpm_at_beat(0) is the tempo at bar 1; the first segment extends
    // before it. A change at bar 1 replaces the first tempo (the map does).
    for (beat, bpm) in show.tempo.changes() {
        segs.push((show.tempo.time_at_beat(beat), bpm));
    }
    let mut b = Bytes::default();
    b.u32(count_u32(segs.len(), "tempo segments")?);
    let mut steps = Vec::new();
    for (i, &(time_s, bpm)) in segs.iter().enumerate() {
        // The map picks a frame's segment by its midpoint: the last segment
        // starting at or before it (the first for frames before bar 1).
        let k0 = if i == 0 {
            0
        } else {
            first_frame(frames, |k| time_s <= (k as f64 + 0.5) / rate)
        };
        let step = bpm / 60.0 / rate;
        let step_q = step * 2f64.powi(56);
        if !step_q.is_finite() || step_q >= 2f64.powi(63) {
            return Err(out_of_range(format!(
                "a tempo of {bpm} bpm at {rate} frames/s"
            )));
        }
        b.u32(frame_u32(k0));
        b.i64(beat_q(mid_beat(show, k0), "a beat")?);
        b.u64(step_q.round() as u64);
        steps.push((k0, step));
    }
    Ok((b, steps))
}

/// The beats a frame in force at frame `k`.
fn step_at(steps: &[(u64, f64)], k: u64) -> f64 {
    let i = steps.partition_point(|s| s.0 <= k).saturating_sub(1);
    steps[i].1
}

fn rotor(b: &mut Bytes, r: &Rotor, ppb: f64) -> Result<(), ProgramError> {
    b.f32(r.radius_m);
    b.i64(rate_q(r.turns * ppb, "a rotating term's rate")?);
    b.u32(turn_u32(r.start_rad));
    Ok(())
}

/// The motion spans (`SPAN`) and their rotating terms (`ROTR`).
fn motion_sections(
    prepared: &Prepared,
    prop: usize,
    frames: u64,
) -> Result<(Bytes, Bytes), ProgramError> {
    let show = prepared.show();
    let motion = &prepared.motions()[prop];
    let mut spans = Bytes::default();
    let mut rotors = Bytes::default();
    let mut n_rotors = 0usize;
    spans.u32(count_u32(motion.spans.len(), "spans")?);
    for span in &motion.spans {
        let a = first_frame(frames, |k| mid_beat(show, k) >= span.start_beat);
        let e = first_frame(frames, |k| mid_beat(show, k) >= span.end_beat);
        let ppb = span.phase_per_beat();
        let hand = span.hand.rotors();
        let hand_count = u8::try_from(hand.len())
            .map_err(|_| out_of_range(format!("{} hand terms", hand.len())))?;
        spans.u32(frame_u32(a));
        spans.u32(frame_u32(e.max(a)));
        spans.i64(beat_q(span.start_beat, "a section's start")?);
        spans.i64(beat_q(span.end_beat, "a section's end")?);
        spans.i64(beat_q(span.delay_beats(), "a delay")?);
        spans.i64(rate_q(ppb, "a pattern's rate")?);
        spans.u32(count_u32(n_rotors, "rotating terms")?);
        spans.u8(hand_count);
        spans.u8(match span.plane {
            Plane::Wall => 0,
            Plane::Wheel => 1,
            Plane::Floor => 2,
        });
        spans.u8(u8::from(span.mirror));
        spans.u8(0);
        for r in hand {
            rotor(&mut rotors, r, ppb)?;
        }
        rotor(&mut rotors, &span.tether(), ppb)?;
        n_rotors += hand.len() + 1;
    }
    let mut out = Bytes::default();
    out.u32(count_u32(n_rotors, "rotating terms")?);
    out.0.extend_from_slice(&rotors.0);
    Ok((spans, out))
}

/// The LEDs' places (`LEDS`).
fn leds_section(show: &Show, prop: usize) -> Result<Bytes, ProgramError> {
    let spots = show.props[prop].led_spots();
    let mut b = Bytes::default();
    b.u32(count_u32(spots.len(), "LEDs")?);
    for s in &spots {
        let index =
            u16::try_from(s.index).map_err(|_| out_of_range("a strip of over 65535 LEDs"))?;
        let count =
            u16::try_from(s.count).map_err(|_| out_of_range("a strip of over 65535 LEDs"))?;
        b.f32(s.along_m);
        b.u16(index);
        b.u16(count);
    }
    Ok(b)
}

/// A picture, cropped to its texels that are not wholly transparent.
struct Crop {
    x0: u32,
    y0: u32,
    w: u32,
    h: u32,
}

fn crop(pic: &Picture) -> Crop {
    let (mut x0, mut y0, mut x1, mut y1) = (u32::MAX, u32::MAX, 0, 0);
    for y in 0..pic.height() {
        for x in 0..pic.width() {
            if pic.texel(x, y)[3] > 0.0 {
                (x0, y0) = (x0.min(x), y0.min(y));
                (x1, y1) = (x1.max(x + 1), y1.max(y + 1));
            }
        }
    }
    if x0 == u32::MAX {
        return Crop {
            x0: 0,
            y0: 0,
            w: 0,
            h: 0,
        };
    }
    Crop {
        x0,
        y0,
        w: x1 - x0,
        h: y1 - y0,
    }
}

/// The sRGB byte whose decoded value times `alpha` is nearest `v`
/// (premultiplied linear light back to the 8-bit texel it came from).
fn srgb_byte(lut: &[f32; 256], v: f32, alpha: f32) -> u8 {
    let mut best = (f32::INFINITY, 0u8);
    for (i, l) in lut.iter().enumerate() {
        let d = (l * alpha - v).abs();
        if d < best.0 {
            best = (d, i as u8);
        }
    }
    best.1
}

/// The IEC 61966-2-1 decode of every 8-bit code, in single precision, as
/// the pictures and the reference player take it.
pub fn srgb_decode_table() -> [f32; 256] {
    let mut t = [0f32; 256];
    for (i, v) in t.iter_mut().enumerate() {
        *v = colour::srgb_to_linear(i as f64 / 255.0) as f32;
    }
    t
}

/// Appends a picture's cropped texels as 8-bit sRGB with straight alpha.
fn picture_texels(pic: &Picture, c: &Crop, out: &mut Vec<u8>) {
    let lut = srgb_decode_table();
    for y in c.y0..c.y0 + c.h {
        for x in c.x0..c.x0 + c.w {
            let t = pic.texel(x, y);
            let a = (t[3] * 255.0).round().clamp(0.0, 255.0) as u8;
            if a == 0 {
                out.extend_from_slice(&[0, 0, 0, 0]);
                continue;
            }
            let af = f32::from(a) / 255.0;
            out.extend_from_slice(&[
                srgb_byte(&lut, t[0], af),
                srgb_byte(&lut, t[1], af),
                srgb_byte(&lut, t[2], af),
                a,
            ]);
        }
    }
}

/// The Oklab colour of an sRGB colour, as the cues mix it.
fn oklab(c: [u8; 3]) -> Oklab<f64> {
    Oklab::from_color(colour::to_linear(Srgb::new(c[0], c[1], c[2])))
}

fn lab(b: &mut Bytes, c: Oklab<f64>) {
    b.f32(c.l);
    b.f32(c.a);
    b.f32(c.b);
}

/// The cue sections: colours, tracks, which track plays each frame, the
/// colour changes and the pictures.
struct CueSections {
    colours: Bytes,
    tracks: Bytes,
    play: Bytes,
    changes: Bytes,
    pictures: Bytes,
}

/// Frames `[a, b)` of each stretch and the track that decides it: the last
/// track in file order that covers it (as the tables take it).
fn play_list(tracks: &[CueTrack]) -> Vec<(u64, u32)> {
    let mut cuts: Vec<u64> = vec![0];
    for t in tracks {
        cuts.push(t.first_frame);
        cuts.push(t.end_frame);
    }
    cuts.sort_unstable();
    cuts.dedup();
    let mut out: Vec<(u64, u32)> = Vec::new();
    for &k in &cuts {
        let who = tracks
            .iter()
            .enumerate()
            .rev()
            .find(|(_, t)| t.first_frame <= k && k < t.end_frame)
            .map_or(DARK, |(i, _)| i as u32);
        if out.last().is_none_or(|l| l.1 != who) {
            out.push((k, who));
        }
    }
    out
}

fn cue_sections(
    prepared: &Prepared,
    prop: usize,
    steps: &[(u64, f64)],
) -> Result<CueSections, ProgramError> {
    let show = prepared.show();
    let lights = &prepared.lights().props[prop];
    let brightness = lights.brightness;
    let mut colours = Bytes::default();
    let mut n_colours = 0usize;
    let mut tracks = Bytes::default();
    let mut blocks = Bytes::default();
    let mut n_blocks = 0usize;
    let mut stream = Bytes::default();
    let mut pics: Vec<(*const Picture, Crop)> = Vec::new();
    let mut pic_entries = Bytes::default();
    let mut texels = Vec::new();
    tracks.u32(count_u32(lights.tracks.len(), "cues")?);
    for t in &lights.tracks {
        let cue = &show.cues[t.cue];
        let mut rec = Bytes::default();
        rec.u32(frame_u32(t.first_frame));
        rec.u32(frame_u32(t.end_frame.max(t.first_frame)));
        match &cue.look {
            Look::Image(p) => {
                let key = std::sync::Arc::as_ptr(&p.picture);
                let index = match pics.iter().position(|(k, _)| *k == key) {
                    Some(i) => i,
                    None => {
                        let c = crop(&p.picture);
                        pic_entries.u32(p.picture.width());
                        pic_entries.u32(p.picture.height());
                        for v in [c.x0, c.y0, c.w, c.h] {
                            pic_entries.u32(v);
                        }
                        pic_entries.u32(count_u32(texels.len(), "texel bytes")?);
                        picture_texels(&p.picture, &c, &mut texels);
                        pics.push((key, c));
                        pics.len() - 1
                    }
                };
                rec.u8(3);
                rec.u8(match p.placement.fixed_to {
                    FixedTo::Stage => 0,
                    FixedTo::Hand => 1,
                });
                rec.u16(0);
                rec.u32(count_u32(index, "pictures")?);
                for _ in 0..3 {
                    rec.u32(0);
                }
                for _ in 0..2 {
                    rec.i64(0);
                }
                for m in p.placement.to_pixel(&p.picture, 0.0).coefficients() {
                    rec.f32(m);
                }
            }
            Look::Steps(st) => {
                let n = st.colours.len();
                let labs: Vec<Oklab<f64>> = st.colours.iter().map(|&c| oklab(c)).collect();
                let (kind, lpb, width) = match st.along {
                    Along::Solid => (0u8, 0.0, 0.0),
                    Along::Gradient => (1, 0.0, 0.0),
                    Along::Chase {
                        leds_per_beat,
                        width_leds,
                    } => (2, leds_per_beat, width_leds),
                };
                if kind == 2 {
                    let beats = show.tempo.beat_of_bar(cue.last_bar + 1)
                        - show.tempo.beat_of_bar(cue.first_bar);
                    if lpb.abs() * beats + f64::from(lights.leds) >= 2f64.powi(30) {
                        return Err(out_of_range(
                            "a chase that runs over 2^30 LEDs in one cue (split the cue)",
                        ));
                    }
                }
                let start = show.tempo.beat_of_bar(cue.first_bar);
                rec.u8(kind);
                rec.u8(0);
                rec.u16(0);
                rec.u32(count_u32(n_colours, "colours")?);
                rec.u32(count_u32(n, "colours")?);
                rec.u32(count_u32(t.changes.len(), "colour changes")?);
                rec.u32(count_u32(n_blocks, "change blocks")?);
                rec.i64(beat_q(st.fade_beats, "a crossfade")?);
                rec.i64(beat_q(start, "a cue's start")?);
                rec.i64(beat_q(lpb, "a chase's speed")?);
                rec.i64(beat_q(width, "a chase's band")?);
                for _ in 0..2 {
                    rec.f32(0.0);
                }
                for (&c, &l) in st.colours.iter().zip(&labs) {
                    let bytes = colour::led_bytes(
                        colour::to_linear(Srgb::new(c[0], c[1], c[2])),
                        brightness,
                    );
                    colours.0.extend_from_slice(&bytes);
                    lab(&mut colours, l);
                }
                n_colours += n;
                let target = |c: usize| match st.along {
                    Along::Gradient => [labs[c], labs[(c + 1) % n]],
                    _ => [labs[c]; 2],
                };
                let fades = st.fade_beats > 0.0;
                for (bi, block) in t.changes.chunks(CHANGES_PER_BLOCK).enumerate() {
                    blocks.u32(frame_u32(block[0].frame));
                    blocks.u32(stream.len_u32("the change stream")?);
                    blocks.u32(count_u32(bi * CHANGES_PER_BLOCK, "colour changes")?);
                    n_blocks += 1;
                    let mut prev = block[0].frame;
                    for (j, c) in block.iter().enumerate() {
                        let i = bi * CHANGES_PER_BLOCK + j;
                        let before = if i == 0 { 0 } else { (i - 1) % n };
                        let from = c.from_colours();
                        let explicit = from != target(before);
                        let mut v = c.frame - prev;
                        if fades {
                            // How far the event lies before its frame's
                            // midpoint, in 2^-12 frames (the tempo at the frame).
                            let d = (mid_beat(show, c.frame) - c.beat) / step_at(steps, c.frame);
                            v = (v << 12) | (d * 4096.0).round().clamp(0.0, 4095.0) as u64;
                        }
                        stream.varint((v << 1) | u64::from(explicit));
                        prev = c.frame;
                        if explicit {
                            lab(&mut stream, from[0]);
                            lab(&mut stream, from[1]);
                        }
                    }
                }
            }
        }
        tracks.0.extend_from_slice(&rec.0);
    }
    let mut colour_sec = Bytes::default();
    colour_sec.u32(count_u32(n_colours, "colours")?);
    colour_sec.0.extend_from_slice(&colours.0);
    let mut changes = Bytes::default();
    changes.u32(count_u32(n_blocks, "change blocks")?);
    changes.0.extend_from_slice(&blocks.0);
    changes.u32(stream.len_u32("the change stream")?);
    changes.0.extend_from_slice(&stream.0);
    let mut pictures = Bytes::default();
    pictures.u32(count_u32(pics.len(), "pictures")?);
    pictures.0.extend_from_slice(&pic_entries.0);
    pictures.u32(count_u32(texels.len(), "texel bytes")?);
    pictures.0.extend_from_slice(&texels);
    let list = play_list(&lights.tracks);
    let mut play = Bytes::default();
    play.u32(count_u32(list.len(), "play entries")?);
    for (k, who) in list {
        play.u32(frame_u32(k));
        play.u32(who);
    }
    Ok(CueSections {
        colours: colour_sec,
        tracks,
        play,
        changes,
        pictures,
    })
}

/// The program form of prop `prop` of `prepared`, with the table
/// description `spec` (rate, LEDs, wire order, frames): every byte.
pub fn encode(prepared: &Prepared, prop: usize, spec: &TableSpec) -> Result<Vec<u8>, OutputError> {
    spec.validate()?;
    let show = prepared.show();
    let frames = u64::from(spec.frame_count);
    let lights = &prepared.lights().props[prop];
    let (tempo, steps) = tempo_section(show, frames)?;
    let (spans, rotors) = motion_sections(prepared, prop, frames)?;
    let leds = leds_section(show, prop)?;
    let cues = cue_sections(prepared, prop, &steps)?;
    let mut info = Bytes::default();
    info.f32(lights.brightness);
    info.u32(show.tempo.beats_per_bar());
    info.f32(show.props[prop].tether_m);
    let mut marks = Bytes::default();
    let marked = super::marks::resync_marks(show, spec.frame_count);
    marks.u32(count_u32(marked.len(), "resync marks")?);
    for m in marked {
        marks.u32(m.frame);
        marks.u32(m.bar);
    }
    let mut sections: Vec<(&[u8; 4], Bytes)> = vec![
        (b"PROP", info),
        (b"TEMP", tempo),
        (b"LEDS", leds),
        (b"SPAN", spans),
        (b"ROTR", rotors),
        (b"COLR", cues.colours),
        (b"TRAK", cues.tracks),
        (b"PLAY", cues.play),
        (b"CHNG", cues.changes),
        (b"PICT", cues.pictures),
    ];
    if !show.resync_bars.is_empty() {
        sections.push((b"MARK", marks));
    }
    let mut out = Bytes::default();
    out.0.extend_from_slice(&MAGIC_PROGRAM);
    out.u16(PROGRAM_VERSION);
    out.u16(HEADER_LEN as u16);
    out.u32(0);
    out.u32(spec.frame_rate_hz);
    out.u32(spec.leds);
    out.u32(spec.frame_count);
    out.u8(spec.order.bytes_per_led() as u8);
    out.0.extend_from_slice(&[0, 0, 0]);
    out.0.extend_from_slice(&spec.order.letters());
    out.u32(spec.frame_size() as u32);
    let data_start = out.0.len();
    let count = sections.len() as u32;
    for (tag, body) in sections {
        out.0.extend_from_slice(tag);
        out.u32(body.len_u32("a section")?);
        out.0.extend_from_slice(&body.0);
    }
    let data_len = count_u32(out.0.len() - data_start, "section bytes")?;
    out.u32(data_len);
    out.u32(count);
    let crc = crc32fast::hash(&out.0);
    out.u32(crc);
    Ok(out.0)
}

/// The program form's writer in [`super::FORMATS`]: its bytes are made
/// before the frames, from the prepared show; it takes no frames.
pub struct ProgramFile {
    out: Option<Output>,
    bytes: Vec<u8>,
}

impl ProgramFile {
    /// A writer that writes `bytes` (from [`encode`]) to `out` when finished.
    pub fn new(out: Output, bytes: Vec<u8>) -> ProgramFile {
        ProgramFile {
            out: Some(out),
            bytes,
        }
    }
}

impl PropFile for ProgramFile {
    fn push_frames(&mut self, _: &[[u8; 3]], _: usize) -> Result<(), OutputError> {
        Ok(())
    }

    fn finish(mut self: Box<Self>) -> Result<Finished, OutputError> {
        let mut out = self
            .out
            .take()
            .ok_or_else(|| OutputError::BadSpec("the program form was finished twice".into()))?;
        out.write_all(&self.bytes)?;
        let header_bytes = out.finish()?;
        let n = self.bytes.len();
        let crc = u32::from_le_bytes(self.bytes[n - 4..].try_into().unwrap_or([0; 4]));
        Ok(Finished {
            stats: super::WriteStats {
                bytes_written: n as u64,
                frames: 0,
                table_bytes: Some(n as u64),
                crc32: Some(crc),
                segments: None,
            },
            header_bytes,
        })
    }
}
