//! The show against its song (`[show] music`): does the show's beat grid
//! (its tempo map from bar 1 beat 1 to the end of the last section) fall on
//! the song's beats, and does the show end before the song does?
//!
//! The song is heard once, by [`Prepared::song`] (decoded, its beats found
//! by the analysis of [`crate::music`], the same as `glowscore tempo`
//! prints). Every beat of the show within the song's tracked beats is
//! placed on the song's beat grid: between the song's beats b_i and b_i+1,
//! of local period p = b_i+1 - b_i, its offset is the distance to the
//! nearest beat, `(f - round(f)) p` with f = (t - b_i) / p. A show at two
//! (or three, ...) times the song's tempo is compared with the song's beats
//! divided as many times (k = round(p / q) for a show beat period q, when
//! p / q is within 15 % of k), so a show in double time is not taken for
//! one between the beats. A `music` warning is raised at the first show beat
//! where two beats in a row stray more than [`MAX_OFFSET_MS`] (one beat
//! alone is more likely a beat the analysis placed badly than a grid that
//! strays: a tempo map is a straight line between tempo changes), and
//! another where the show runs past the song's end.

use serde::Serialize;

use super::CheckError;
use super::light::STAGE;
use super::report::{Warning, WarningKind, When, r9, r9_opt};
use crate::model::Show;
use crate::music::{BeatError, Song};
use crate::prepared::Prepared;

/// A show beat further than this from the song's beat grid warns, ms.
pub const MAX_OFFSET_MS: f64 = 30.0;
/// A show that ends within this of the song's end does not run past it,
/// seconds (the last frame may end a little after the last sample).
pub const END_SLACK_S: f64 = 0.001;

/// The show against its song, for the check report (`music` in the JSON).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct MusicFigures {
    /// The song's file, as the show names it.
    pub file: String,
    /// The song's length, seconds.
    #[serde(serialize_with = "r9")]
    pub duration_s: f64,
    /// The largest offset of a show beat from the song's beat grid,
    /// milliseconds (null when no beat could be compared: the song has no
    /// steady beat, or the show's beats all fall outside the song's).
    #[serde(serialize_with = "r9_opt")]
    pub max_offset_ms: Option<f64>,
    /// Where that is.
    pub max_offset_at: Option<When>,
    /// Beats of the show compared with the song's.
    pub beats_compared: usize,
    /// The offset above which a show beat warns, milliseconds.
    #[serde(serialize_with = "r9")]
    pub limit_ms: f64,
    /// The song's tempo at its bar 1, as `glowscore tempo` finds it (null
    /// without a steady beat).
    #[serde(serialize_with = "r9_opt")]
    pub song_bpm: Option<f64>,
    /// The song's first downbeat, seconds, as `glowscore tempo` finds it.
    #[serde(serialize_with = "r9_opt")]
    pub song_start_s: Option<f64>,
}

/// The music figures and warnings of a show.
#[derive(Clone, Debug)]
pub(crate) struct MusicScan {
    pub figures: MusicFigures,
    pub warnings: Vec<Warning>,
}

/// Compares the prepared show with its song; `None` for a show without
/// `music`. A song that cannot be read or decoded fails the check.
pub(crate) fn scan(prepared: &Prepared) -> Result<Option<MusicScan>, CheckError> {
    let (Some(music), Some(song)) = (prepared.show().music.as_ref(), prepared.song()) else {
        return Ok(None);
    };
    let song = song.map_err(|e| CheckError::Music(e.clone()))?;
    Ok(Some(compare(prepared.show(), &music.file, song)))
}

/// One show beat on the song's grid.
#[derive(Clone, Copy, Debug)]
struct Offset {
    /// Global beat of the show (0 = bar 1 beat 1).
    beat: f64,
    /// Show time minus the nearest song beat (or subdivision), seconds.
    offset_s: f64,
    /// That song beat, seconds.
    song_s: f64,
}

/// The offset of the show beat at `t` (show beat period `q`) from the
/// song's beat grid `beats`, if `t` is within the song's tracked beats
/// (half a period beyond the first and last included).
fn offset_at(beats: &[f64], t: f64, q: f64) -> Option<(f64, f64)> {
    let n = beats.len();
    if n < 2 {
        return None;
    }
    // The beat interval [b_i, b_i+1] holding t, the first or last one
    // stretched by half its period.
    let i = beats
        .partition_point(|&b| b <= t)
        .saturating_sub(1)
        .min(n - 2);
    let (a, b) = (beats[i], beats[i + 1]);
    let p = b - a;
    if p.is_nan() || p <= 0.0 || t < a - p / 2.0 || t > b + p / 2.0 {
        return None;
    }
    let ratio = p / q;
    let k = ratio.round().max(1.0);
    let k = if (ratio / k - 1.0).abs() < 0.15 {
        k
    } else {
        1.0
    };
    let g = (t - a) / p * k;
    let nearest = g.round();
    Some(((g - nearest) / k * p, a + nearest / k * p))
}

/// The figures and warnings of `show` against `song`.
pub(crate) fn compare(show: &Show, file: &str, song: &Song) -> MusicScan {
    let tempo = &show.tempo;
    let end = show.end_s();
    let mut warnings = Vec::new();
    let (offsets, song_bpm, song_start_s) = match &song.beats {
        Ok(a) => {
            let mut offsets = Vec::new();
            let mut k = 0.0;
            loop {
                let t = tempo.time_at_beat(k);
                if !(t.is_finite() && t < end) {
                    break;
                }
                let q = 60.0 / tempo.bpm_at_beat(k);
                if let Some((offset_s, song_s)) = offset_at(&a.beats, t, q) {
                    offsets.push(Offset {
                        beat: k,
                        offset_s,
                        song_s,
                    });
                }
                k += 1.0;
            }
            (offsets, Some(a.bpm), Some(a.start_s))
        }
        Err(why) => {
            warnings.push(Warning {
                kind: WarningKind::Music,
                prop: STAGE.to_string(),
                at: When::at_beat(show, 0.0),
                message: match why {
                    BeatError::NoSteadyBeat(reason) => format!(
                        "the song `{file}` has no steady beat ({reason}): the show's beats \
                         cannot be compared with it; listen to them with `glowscore rehearse`"
                    ),
                    other => format!("the song `{file}` was not analysed: {other}"),
                },
                ..Warning::UNGATHERED
            });
            (Vec::new(), None, None)
        }
    };
    let limit_s = MAX_OFFSET_MS / 1000.0;
    let strays = offsets
        .windows(2)
        .find(|w| w.iter().all(|o| o.offset_s.abs() > limit_s) && w[1].beat - w[0].beat == 1.0);
    let worst = offsets
        .iter()
        .copied()
        .max_by(|a, b| a.offset_s.abs().total_cmp(&b.offset_s.abs()));
    if let (Some(w), Some(worst)) = (strays, worst) {
        let first = w[0];
        let at = When::at_beat(show, first.beat);
        let worst_at = When::at_beat(show, worst.beat);
        let side = if first.offset_s > 0.0 {
            "after"
        } else {
            "before"
        };
        warnings.push(Warning {
            kind: WarningKind::Music,
            prop: STAGE.to_string(),
            at,
            value: Some(first.offset_s * 1000.0),
            limit: Some(MAX_OFFSET_MS),
            unit: Some("ms"),
            message: format!(
                "the show's beats stray from the song's from bar {} beat {}: it falls {:.1} ms \
                 {side} the song's beat at {:.3} s (more than {MAX_OFFSET_MS} ms; the largest \
                 offset is {:.1} ms, at bar {} beat {}); run `glowscore tempo {file}` and paste \
                 its bpm, start_s and [[tempo]] entries into the show",
                at.bar,
                at.beat.round(),
                first.offset_s.abs() * 1000.0,
                first.song_s,
                worst.offset_s.abs() * 1000.0,
                worst_at.bar,
                worst_at.beat.round(),
            ),
            ..Warning::UNGATHERED
        });
    }
    if end > song.duration_s + END_SLACK_S {
        let beat = tempo.beat_at_time(song.duration_s);
        let past = end - song.duration_s;
        warnings.push(Warning {
            kind: WarningKind::Music,
            prop: STAGE.to_string(),
            at: When::at_beat(show, beat),
            duration_s: Some(past),
            value: Some(past),
            unit: Some("s"),
            message: format!(
                "the show runs {past:.3} s past the end of the song `{file}` (the song ends at \
                 {:.3} s, the show at {end:.3} s)",
                song.duration_s
            ),
            ..Warning::UNGATHERED
        });
    }
    let beats_compared = offsets.len();
    MusicScan {
        figures: MusicFigures {
            file: file.to_string(),
            duration_s: song.duration_s,
            max_offset_ms: worst.map(|w| w.offset_s.abs() * 1000.0),
            max_offset_at: worst.map(|w| When::at_beat(show, w.beat)),
            beats_compared,
            limit_ms: MAX_OFFSET_MS,
            song_bpm,
            song_start_s,
        },
        warnings,
    }
}

#[cfg(test)]
mod tests {
    use super::offset_at;

    #[test]
    fn offsets_on_an_even_grid() {
        // Beats every 0.5 s from 1 s: a show beat at 2.02 s is 20 ms late,
        // one at 1.97 s 30 ms early; at 0.6 s (more than half a period
        // before the first beat) and 4.8 s (after the last) nothing is
        // compared.
        let beats: Vec<f64> = (0..7).map(|i| 1.0 + 0.5 * f64::from(i)).collect();
        let (o, s) = offset_at(&beats, 2.02, 0.5).unwrap();
        assert!(
            (o - 0.02).abs() < 1e-12 && (s - 2.0).abs() < 1e-12,
            "{o} {s}"
        );
        let (o, s) = offset_at(&beats, 1.97, 0.5).unwrap();
        assert!(
            (o + 0.03).abs() < 1e-12 && (s - 2.0).abs() < 1e-12,
            "{o} {s}"
        );
        assert!(offset_at(&beats, 0.6, 0.5).is_none());
        assert!(offset_at(&beats, 4.8, 0.5).is_none());
        assert!(offset_at(&beats, 4.2, 0.5).is_some());
    }

    #[test]
    fn double_time_is_compared_with_halved_beats() {
        // A show at twice the song's tempo: its beat halfway between two
        // song beats is on the grid; at the song's own tempo it would be
        // half a beat (250 ms) off.
        let beats: Vec<f64> = (0..7).map(|i| 0.5 * f64::from(i)).collect();
        let (o, _) = offset_at(&beats, 1.25, 0.25).unwrap();
        assert!(o.abs() < 1e-12, "{o}");
        let (o, _) = offset_at(&beats, 1.25, 0.5).unwrap();
        assert!((o.abs() - 0.25).abs() < 1e-12, "{o}");
    }
}
