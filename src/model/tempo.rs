//! The tempo map: beats since bar 1 beat 1 against seconds from frame 0.
//!
//! Beats are counted from 0 at bar 1 beat 1 ("global beats"); tempo changes
//! fall on bar starts, so every segment starts on a whole beat.

/// One stretch of constant tempo.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Segment {
    /// Global beat where it starts (a whole number).
    beat: f64,
    /// Seconds from frame 0 where it starts.
    time_s: f64,
    /// Tempo, beats per minute.
    bpm: f64,
}

/// Piecewise-constant tempo: converts beats to seconds and back.
#[derive(Clone, Debug, PartialEq)]
pub struct TempoMap {
    start_s: f64,
    beats_per_bar: u32,
    segments: Vec<Segment>,
}

impl TempoMap {
    /// A map starting at `start_s` with `bpm`, then `changes` as
    /// (bar, bpm) pairs; bars must be 1 or more, strictly increasing.
    pub fn new(start_s: f64, beats_per_bar: u32, bpm: f64, changes: &[(u32, f64)]) -> Self {
        let mut segments = vec![Segment {
            beat: 0.0,
            time_s: start_s,
            bpm,
        }];
        for &(bar, bpm) in changes {
            let beat = f64::from(bar - 1) * f64::from(beats_per_bar);
            let last = *segments.last().expect("at least one segment");
            if beat <= last.beat {
                segments.last_mut().expect("at least one segment").bpm = bpm;
                continue;
            }
            let time_s = last.time_s + (beat - last.beat) * 60.0 / last.bpm;
            segments.push(Segment { beat, time_s, bpm });
        }
        TempoMap {
            start_s,
            beats_per_bar,
            segments,
        }
    }

    /// Time of bar 1, beat 1, seconds.
    pub fn start_s(&self) -> f64 {
        self.start_s
    }

    /// Beats in every bar.
    pub fn beats_per_bar(&self) -> u32 {
        self.beats_per_bar
    }

    fn segment_for_beat(&self, beat: f64) -> &Segment {
        let i = self.segments.partition_point(|s| s.beat <= beat);
        &self.segments[i.saturating_sub(1)]
    }

    fn segment_for_time(&self, t: f64) -> &Segment {
        let i = self.segments.partition_point(|s| s.time_s <= t);
        &self.segments[i.saturating_sub(1)]
    }

    /// Seconds from frame 0 at global beat `beat` (0 = bar 1 beat 1).
    /// Before bar 1 the first tempo is extended backwards.
    pub fn time_at_beat(&self, beat: f64) -> f64 {
        let s = self.segment_for_beat(beat);
        s.time_s + (beat - s.beat) * 60.0 / s.bpm
    }

    /// Global beat at `t` seconds from frame 0 (fractional; negative before bar 1).
    pub fn beat_at_time(&self, t: f64) -> f64 {
        let s = self.segment_for_time(t);
        s.beat + (t - s.time_s) * s.bpm / 60.0
    }

    /// Tempo in force at global beat `beat`, beats per minute (the new tempo
    /// exactly at a change).
    pub fn bpm_at_beat(&self, beat: f64) -> f64 {
        self.segment_for_beat(beat).bpm
    }

    /// Global beat where bar `bar` (from 1) starts.
    pub fn beat_of_bar(&self, bar: u32) -> f64 {
        f64::from(bar.saturating_sub(1)) * f64::from(self.beats_per_bar)
    }

    /// Seconds from frame 0 where bar `bar` (from 1) starts.
    pub fn time_at_bar(&self, bar: u32) -> f64 {
        self.time_at_beat(self.beat_of_bar(bar))
    }

    /// Bar (from 1) and beat within it (from 1, fractional) of a global beat.
    /// Values a hair below a whole beat (rounding noise under 1e-9 beats)
    /// count as that beat.
    pub fn bar_beat(&self, beat: f64) -> (i64, f64) {
        let bpb = f64::from(self.beats_per_bar);
        let snapped = if (beat - beat.round()).abs() < 1e-9 {
            beat.round()
        } else {
            beat
        };
        let bar = (snapped / bpb).floor();
        let within = (snapped - bar * bpb).max(0.0);
        (bar as i64 + 1, within + 1.0)
    }

    /// The tempo changes after the first tempo, as (global beat, bpm).
    pub fn changes(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.segments.iter().skip(1).map(|s| (s.beat, s.bpm))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constant_tempo_is_linear() {
        let m = TempoMap::new(0.5, 4, 120.0, &[]);
        assert_eq!(m.time_at_beat(0.0), 0.5);
        assert_eq!(m.time_at_beat(4.0), 2.5);
        assert_eq!(m.beat_at_time(2.5), 4.0);
        assert_eq!(m.bar_beat(5.5), (2, 2.5));
    }

    #[test]
    fn change_moves_later_beats_only() {
        let flat = TempoMap::new(0.0, 4, 100.0, &[]);
        let m = TempoMap::new(0.0, 4, 100.0, &[(3, 120.0)]);
        // Before bar 3 (beat 8) nothing moves.
        assert_eq!(m.time_at_beat(7.5), flat.time_at_beat(7.5));
        // Bar 3 starts at 8 beats x 0.6 s = 4.8 s; then 0.5 s per beat.
        assert!((m.time_at_bar(3) - 4.8).abs() < 1e-12);
        assert!((m.time_at_beat(10.0) - 5.8).abs() < 1e-12);
        assert!((m.beat_at_time(5.8) - 10.0).abs() < 1e-12);
        assert_eq!(m.bpm_at_beat(8.0), 120.0);
        assert_eq!(m.bpm_at_beat(7.99), 100.0);
    }
}
