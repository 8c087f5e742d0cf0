//! Resync marks: the first frame of each bar the show names in
//! `resync_bars`, the same in every binary form.
//!
//! The full and compact tables carry them in a version-2 header
//! (`firmware-formats/full-table.md`, "Resync marks"), the program form in
//! its `MARK` section (`program-form.md`). A bar that starts at `t` seconds
//! begins on frame `ceil(t * rate - 1/2)` (`docs/conventions.md`, frame
//! placement: [`crate::cues::frame_of`]), the frame a cue starting on that
//! bar starts on.

use super::OutputError;
use crate::model::Show;

/// Bytes of one mark: its frame and its bar, two little-endian `u32`.
pub const MARK_LEN: usize = 8;
/// Header bytes of a version-2 table before its marks: the version-1
/// fields (36) and the mark count.
pub const MARKS_AT: usize = 40;
/// Most marks a table holds: as many resync bars as a show may name
/// (`header_len`, a `u16`, counts them).
pub const MAX_MARKS: usize = crate::model::MAX_RESYNC_BARS;
const _: () = assert!(MARKS_AT + MAX_MARKS * MARK_LEN <= u16::MAX as usize);

/// One resync mark.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Mark {
    /// The bar's first frame.
    pub frame: u32,
    /// The bar, from 1.
    pub bar: u32,
}

/// The marks of `show`'s `resync_bars` in a table of `frame_count` frames:
/// one per bar that starts inside the table, in bar order.
pub fn resync_marks(show: &Show, frame_count: u32) -> Vec<Mark> {
    show.resync_bars
        .iter()
        .filter_map(|&bar| {
            let k = crate::cues::frame_of(show.tempo.time_at_bar(bar), show.frame_rate_hz);
            (k < u64::from(frame_count)).then_some(Mark {
                frame: k as u32,
                bar,
            })
        })
        .collect()
}

/// Checks that `marks` can be stored for a table of `frame_count` frames:
/// at most [`MAX_MARKS`], frames below `frame_count` and not decreasing
/// (two bars shorter than a frame may begin on the same one), bars from 1
/// and increasing.
pub fn check_marks(marks: &[Mark], frame_count: u32) -> Result<(), OutputError> {
    if marks.len() > MAX_MARKS {
        return Err(OutputError::BadSpec(format!(
            "{} resync marks do not fit in a table header (at most {MAX_MARKS})",
            marks.len()
        )));
    }
    let mut prev: Option<Mark> = None;
    for m in marks {
        if m.frame >= frame_count || m.bar == 0 {
            return Err(OutputError::BadSpec(format!(
                "resync mark of bar {} on frame {} is outside the table ({frame_count} frames)",
                m.bar, m.frame
            )));
        }
        if prev.is_some_and(|p| p.frame > m.frame || p.bar >= m.bar) {
            return Err(OutputError::BadSpec(
                "resync marks must increase in bar and not decrease in frame".into(),
            ));
        }
        prev = Some(*m);
    }
    Ok(())
}
