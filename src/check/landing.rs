//! How far each cue's colour changes land from their events, and the frame
//! rate that would bring them within a tolerance.
//!
//! A change for an event at time t starts on the frame whose start is
//! nearest t ([`crate::cues::frame_of`]), so it is off by at most half a
//! frame: at a head speed v (m/s) and frame rate f (Hz) the head travels at
//! most about `v / (2 f)` metres in that time. The frame rate that keeps a
//! cue within a tolerance of `tol` millimetres is therefore
//! `ceil(1000 v / (2 tol))` Hz, taking v as the highest head speed at any of
//! the cue's events. This is the worst case of half a frame; the errors
//! actually found ([`crate::cues::Landing`]) are reported beside it and may
//! be smaller. A `landing` warning marks every cue whose worst error found
//! exceeds the tolerance.

use serde::Serialize;

use super::report::{Warning, WarningKind, When, r9, r9_opt};
use crate::cues::Landing;
use crate::model::Show;

/// Landing tolerance when none is given, millimetres.
pub const DEFAULT_TOLERANCE_MM: f64 = 10.0;

/// The landing figures of one cue.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CueLanding {
    /// Index into the show's cues, from 0 in file order.
    pub cue: usize,
    /// The prop's name.
    pub prop: String,
    /// The event kind that steps the cue (`tip`, `beat`, ...).
    pub at: &'static str,
    /// First and last bar, inclusive.
    pub bars: [u32; 2],
    /// Event-driven colour changes placed.
    pub changes: usize,
    /// Largest |frame start - event time|, milliseconds (null without changes).
    #[serde(serialize_with = "r9_opt")]
    pub worst_ms: Option<f64>,
    /// Mean |frame start - event time|, milliseconds.
    #[serde(serialize_with = "r9_opt")]
    pub mean_ms: Option<f64>,
    /// Largest distance the head travels between event and frame start, mm.
    #[serde(serialize_with = "r9_opt")]
    pub worst_mm: Option<f64>,
    /// Mean of that distance, mm.
    #[serde(serialize_with = "r9_opt")]
    pub mean_mm: Option<f64>,
    /// Largest angle the tether turns between event and frame start, degrees.
    #[serde(serialize_with = "r9_opt")]
    pub worst_deg: Option<f64>,
    /// Frame rate that keeps the worst case (half a frame at the fastest
    /// event) within the tolerance, Hz.
    pub needed_frame_rate_hz: Option<u64>,
}

/// The landing figures of the whole show.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LandingSummary {
    /// The tolerance used, millimetres.
    #[serde(serialize_with = "r9")]
    pub tolerance_mm: f64,
    /// Largest error of any cue, mm (null without changes).
    #[serde(serialize_with = "r9_opt")]
    pub worst_mm: Option<f64>,
    /// Frame rate that keeps every cue within the tolerance, Hz.
    pub needed_frame_rate_hz: Option<u64>,
}

/// Frame rate (Hz) at which half a frame of travel at `speed_m_s` stays within `tolerance_mm`.
pub fn needed_frame_rate_hz(speed_m_s: f64, tolerance_mm: f64) -> Option<u64> {
    let f = (speed_m_s * 1000.0 / (2.0 * tolerance_mm)).ceil();
    (f.is_finite() && f >= 0.0).then_some(f as u64)
}

/// Per-cue and show landing figures from `landings`, with `landing` warnings.
pub fn scan(
    show: &Show,
    landings: &[Landing],
    tolerance_mm: f64,
) -> (Vec<CueLanding>, LandingSummary, Vec<Warning>) {
    let mut cues = Vec::with_capacity(show.cues.len());
    let mut warnings = Vec::new();
    let rate = show.frame_rate_hz;
    for (ci, cue) in show.cues.iter().enumerate() {
        if cue.painting().is_some() {
            // A painting has no events to land on (its coverage is reported instead).
            continue;
        }
        let mut n = 0usize;
        let (mut sum_ms, mut sum_mm) = (0.0, 0.0);
        let (mut worst_ms, mut worst_deg, mut speed) = (0.0f64, 0.0f64, 0.0f64);
        let mut worst: Option<&Landing> = None;
        for l in landings.iter().filter(|l| l.cue == ci) {
            n += 1;
            sum_ms += l.error_ms.abs();
            sum_mm += l.error_mm;
            worst_ms = worst_ms.max(l.error_ms.abs());
            worst_deg = worst_deg.max(l.error_deg);
            speed = speed.max(l.speed_m_s);
            if worst.is_none_or(|w| l.error_mm > w.error_mm) {
                worst = Some(l);
            }
        }
        let some = |x: f64| (n > 0).then_some(x);
        let entry = CueLanding {
            cue: ci,
            prop: show.props[cue.prop].name.clone(),
            at: cue.at_name(),
            bars: [cue.first_bar, cue.last_bar],
            changes: n,
            worst_ms: some(worst_ms),
            mean_ms: some(sum_ms / n.max(1) as f64),
            worst_mm: worst.map(|w| w.error_mm),
            mean_mm: some(sum_mm / n.max(1) as f64),
            worst_deg: some(worst_deg),
            needed_frame_rate_hz: if n > 0 {
                needed_frame_rate_hz(speed, tolerance_mm)
            } else {
                None
            },
        };
        if let Some(w) = worst.filter(|w| w.error_mm > tolerance_mm) {
            let need = entry
                .needed_frame_rate_hz
                .map_or_else(|| "a higher frame rate".to_string(), |f| format!("{f} Hz"));
            warnings.push(Warning {
                kind: WarningKind::Landing,
                count: 1,
                bars: [0, 0],
                line: None,
                cue: None,
            each: Vec::new(),
            expected: None,
                prop: entry.prop.clone(),
                other_prop: None,
                at: When::at_beat(show, show.tempo.beat_at_time(w.event_s)),
                duration_s: None,
                value: Some(w.error_mm),
                limit: Some(tolerance_mm),
                unit: Some("mm"),
                message: format!(
                    "cue {ci} ({} on {}) lands up to {:.1} mm ({:.2} ms) from its event at {rate} Hz, \
                     more than the {tolerance_mm} mm tolerance; {need} would keep it within",
                    entry.at, entry.prop, w.error_mm, worst_ms
                ),
            });
        }
        cues.push(entry);
    }
    let worst_mm = cues
        .iter()
        .filter_map(|c| c.worst_mm)
        .fold(None, |a: Option<f64>, x| Some(a.map_or(x, |a| a.max(x))));
    let needed = cues.iter().filter_map(|c| c.needed_frame_rate_hz).max();
    let summary = LandingSummary {
        tolerance_mm,
        worst_mm,
        needed_frame_rate_hz: needed,
    };
    (cues, summary, warnings)
}
