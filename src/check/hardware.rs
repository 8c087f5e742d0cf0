//! Will it play on the prop: the LED line's refresh limit, whether the
//! tables fit the prop's memory, and how far the prop's clock drifts.
//!
//! Data-only timing (a line without a clock, the bits told apart by pulse
//! width) is the figure common LED data sheets give, recalled from memory:
//! 800 kbit/s (1.25 us per bit), 8 bits per colour channel, and a latch
//! (reset) gap of at least 50 us after each frame. A data-and-clock
//! line sends a 32-bit start frame, 32 bits per LED and an end frame of at
//! least half a bit per LED (rounded up to whole bytes), at the line's
//! clock (also from memory). Clock drift is the tolerance times the show's
//! length, counted from a sync at the start; it warns when it is larger than
//! both the performer's own spread about the beat ([`PERFORMER_SPREAD_S`])
//! and the time in which the fastest head travels the landing tolerance.

use serde::Serialize;

use super::report::{Warning, WarningKind, When, r9, r9_opt};
use crate::cues::Lights;
use crate::model::{LedDriver, Prop, Show};
use crate::output::{CompactTableWriter, TRAILER_LEN, TableSpec, header_len, resync_marks};

/// Data-only bit time, seconds (800 kbit/s; from memory of common data sheets).
pub const DATA_ONLY_BIT_S: f64 = 1.25e-6;
/// How far a performer's own moves spread about the beat they follow,
/// seconds: people who move to music land within a few tens of
/// milliseconds of the beat (from memory of studies of moving in time with
/// a beat; the spread is commonly 10 to 40 ms). The light's clock drift is
/// only worth a warning once it is larger than this: below it the light is
/// closer to the music than the performer is.
pub const PERFORMER_SPREAD_S: f64 = 0.020;

/// Data-only latch (reset) gap after each frame, seconds (from memory).
pub const DATA_ONLY_LATCH_S: f64 = 50e-6;

/// The hardware figures of one prop.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct HardwareFigures {
    /// Highest frame rate the LED line can refresh, frames per second.
    #[serde(serialize_with = "r9")]
    pub max_frame_rate_hz: f64,
    /// Size of the full binary table, bytes.
    pub full_table_bytes: u64,
    /// Size of the compact binary table, bytes.
    pub compact_table_bytes: u64,
    /// Size of the program form, bytes (0 where it could not be encoded).
    pub program_bytes: u64,
    /// Memory declared for tables, bytes (`table_memory_kb` x 1024).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub table_memory_bytes: Option<u64>,
    /// The smallest form that fits that memory: "program", "compact",
    /// "full" or none.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fits: Option<&'static str>,
    /// Every form that fits that memory, smallest first (empty when no
    /// memory is declared).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub forms_that_fit: Vec<&'static str>,
    /// Worst clock drift over the show, milliseconds.
    #[serde(serialize_with = "r9")]
    pub drift_ms: f64,
    /// The same in beats at the fastest tempo.
    #[serde(serialize_with = "r9")]
    pub drift_beats: f64,
    /// Landing error along the path at `max_frame_rate_hz`, worst case of
    /// half a frame at the fastest event, millimetres.
    #[serde(serialize_with = "r9_opt", skip_serializing_if = "Option::is_none")]
    pub landing_mm_at_max_rate: Option<f64>,
}

impl HardwareFigures {
    /// How the tables meet the declared memory, as a phrase ("" when none is declared).
    pub fn memory_phrase(&self) -> String {
        match (self.table_memory_bytes, self.fits) {
            (Some(m), Some(_)) => format!(
                "{} fit{} the {m} B declared",
                self.forms_that_fit.join(", "),
                if self.forms_that_fit.len() == 1 {
                    "s"
                } else {
                    ""
                }
            ),
            (Some(m), None) => format!("no form fits the {m} B declared"),
            _ => String::new(),
        }
    }
}

/// Highest refresh rate of `leds` LEDs on one line of `driver`, with
/// `bytes_per_led` colour bytes each (3 for RGB, 4 for RGBW).
pub fn max_frame_rate_hz(driver: LedDriver, leds: u32, bytes_per_led: usize) -> f64 {
    let leds = f64::from(leds);
    match driver {
        LedDriver::DataOnly => {
            1.0 / (8.0 * bytes_per_led as f64 * DATA_ONLY_BIT_S * leds + DATA_ONLY_LATCH_S)
        }
        LedDriver::DataClock { clock_hz } => {
            let end_bits = 8.0 * (leds / 16.0).ceil();
            clock_hz / (32.0 + 32.0 * leds + end_bits)
        }
    }
}

/// Worst drift of a clock off by `ppm` over `seconds`, seconds.
pub fn drift_s(ppm: f64, seconds: f64) -> f64 {
    ppm * 1e-6 * seconds
}

/// Size of the full table of `spec` with `marks` resync marks, bytes.
pub fn full_table_bytes(spec: &TableSpec, marks: usize) -> u64 {
    (header_len(marks) + TRAILER_LEN) as u64 + spec.frame_size() * u64::from(spec.frame_count)
}

/// A writer that only counts bytes.
pub struct Count;

impl std::io::Write for Count {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        Ok(buf.len())
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

/// A compact table encoder that only counts its bytes, for props of `show`
/// (with the show's resync marks, as compile writes it).
pub fn compact_counter(show: &Show, prop: usize) -> Option<CompactTableWriter<Count>> {
    let p = &show.props[prop];
    let spec = TableSpec {
        frame_rate_hz: show.frame_rate_hz,
        leds: p.leds,
        order: p.wire_order,
        frame_count: show.frame_count().min(u64::from(u32::MAX)) as u32,
    };
    CompactTableWriter::with_marks(Count, spec, &resync_marks(show, spec.frame_count)).ok()
}

/// The size of every prop's program form, bytes, in prop order (`None`
/// where it cannot be encoded).
pub fn program_bytes(prepared: &crate::prepared::Prepared) -> Vec<Option<u64>> {
    let show = prepared.show();
    (0..show.props.len())
        .map(|i| {
            let p = &show.props[i];
            let spec = TableSpec {
                frame_rate_hz: show.frame_rate_hz,
                leds: p.leds,
                order: p.wire_order,
                frame_count: show.frame_count().min(u64::from(u32::MAX)) as u32,
            };
            crate::output::program::encode(prepared, i, &spec)
                .ok()
                .map(|b| b.len() as u64)
        })
        .collect()
}

/// The hardware figures and warnings of every prop, in prop order.
/// `compact_bytes[i]` is the size of prop `i`'s compact table (as written,
/// or counted by [`compact_counter`]), `None` where it could not be encoded.
pub fn scan(
    show: &Show,
    lights: &Lights,
    compact_bytes: &[Option<u64>],
    program_bytes: &[Option<u64>],
    tolerance_mm: f64,
) -> (Vec<HardwareFigures>, Vec<Warning>) {
    let frames = show.frame_count().min(u64::from(u32::MAX)) as u32;
    let rate = f64::from(show.frame_rate_hz);
    let length_s = show.end_s();
    let fastest_bpm = std::iter::once(show.tempo.bpm_at_beat(0.0))
        .chain(show.tempo.changes().map(|c| c.1))
        .fold(0.0, f64::max);
    let start = When::at_beat(show, 0.0);
    let marks = resync_marks(show, frames).len();
    let mut figures = Vec::new();
    let mut warnings = Vec::new();
    for (i, prop) in show.props.iter().enumerate() {
        let spec = TableSpec {
            frame_rate_hz: show.frame_rate_hz,
            leds: prop.leds,
            order: prop.wire_order,
            frame_count: frames,
        };
        let v_max = lights
            .landings
            .iter()
            .filter(|l| l.prop == i)
            .map(|l| l.speed_m_s)
            .fold(0.0, f64::max);
        let max_rate = max_frame_rate_hz(
            prop.led_driver,
            prop.leds_per_line,
            prop.wire_order.bytes_per_led(),
        );
        let full = full_table_bytes(&spec, marks);
        let compact = compact_bytes.get(i).copied().flatten().unwrap_or(full);
        let memory = prop.table_memory_kb.map(|kb| (kb * 1024.0).floor() as u64);
        let program = program_bytes.get(i).copied().flatten();
        // Smallest first (the program form when it could be encoded).
        let mut forms: Vec<(&'static str, u64)> = program
            .map(|b| ("program", b))
            .into_iter()
            .chain([("compact", compact), ("full", full)])
            .collect();
        forms.sort_by_key(|f| f.1);
        let forms_that_fit: Vec<&'static str> = match memory {
            Some(m) => forms.iter().filter(|f| f.1 <= m).map(|f| f.0).collect(),
            None => Vec::new(),
        };
        let fits = forms_that_fit.first().copied();
        let drift = drift_s(prop.clock_ppm, length_s);
        let landing_at_max = (v_max > 0.0).then(|| v_max * 0.5 / max_rate * 1000.0);
        let warn = |kind, message: String, value: f64, limit: f64, unit| Warning {
            kind,
            prop: prop.name.clone(),
            other_prop: None,
            at: start,
            duration_s: None,
            value: Some(value),
            limit: Some(limit),
            unit: Some(unit),
            message,
            ..Warning::UNGATHERED
        };
        if rate > max_rate {
            let at = match landing_at_max {
                Some(mm) => format!("; at that rate a change lands up to {mm:.1} mm off"),
                None => String::new(),
            };
            warnings.push(warn(
                WarningKind::Refresh,
                format!(
                    "{} LEDs on one {} line refresh at most {max_rate:.0} times a second, below the show's {} frames/s{at}",
                    prop.leds_per_line,
                    driver_name(prop),
                    show.frame_rate_hz
                ),
                rate,
                max_rate,
                "frames/s",
            ));
        }
        if let (Some(m), None) = (memory, fits) {
            let smallest = forms[0].1.max(1);
            let seconds = length_s * m as f64 / smallest as f64;
            warnings.push(warn(
                WarningKind::Memory,
                format!(
                    "no form fits the {m} bytes of table memory (program {} B, compact {compact} B, full {full} B); \
                     about {seconds:.1} s of the show would",
                    program.map_or_else(|| "-".to_string(), |b| b.to_string())
                ),
                smallest as f64,
                m as f64,
                "bytes",
            ));
        }
        let drift_beats = drift * fastest_bpm / 60.0;
        // The show is synced to the music at its start (a button, a cue);
        // from then on the prop's clock drifts. A landing moves by the
        // drift times the head's speed; it matters once that is more than
        // the tolerance and the drift is more than the performer's own
        // spread about the beat.
        let tolerance_s = if v_max > 0.0 {
            tolerance_mm / 1000.0 / v_max
        } else {
            f64::INFINITY
        };
        let limit_s = tolerance_s.max(PERFORMER_SPREAD_S);
        if drift > limit_s {
            warnings.push(warn(
                WarningKind::Drift,
                format!(
                    "a clock off by {} ppm drifts up to {:.1} ms ({drift_beats:.3} beats) from a sync at the start to the end of the show, \
                     more than the {:.1} ms a performer's own timing spreads and enough to move a landing by {:.0} mm; \
                     use a tighter clock (or measure this one and give `clock_ppm`) or resync the prop to the music during the show",
                    prop.clock_ppm,
                    drift * 1000.0,
                    PERFORMER_SPREAD_S * 1000.0,
                    drift * v_max * 1000.0
                ),
                drift * 1000.0,
                limit_s * 1000.0,
                "ms",
            ));
        }
        figures.push(HardwareFigures {
            max_frame_rate_hz: max_rate,
            full_table_bytes: full,
            compact_table_bytes: compact,
            program_bytes: program.unwrap_or(0),
            table_memory_bytes: memory,
            fits,
            forms_that_fit,
            drift_ms: drift * 1000.0,
            drift_beats,
            landing_mm_at_max_rate: landing_at_max,
        });
    }
    (figures, warnings)
}

fn driver_name(prop: &Prop) -> &'static str {
    match prop.led_driver {
        LedDriver::DataOnly => "data-only",
        LedDriver::DataClock { .. } => "data-and-clock",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_hundred_data_only_leds_refresh_at_about_328_hz() {
        // Common data-only LED data sheets (from memory): 1.25 us per bit,
        // 24 bits per RGB LED, a latch of at least 50 us: 100 LEDs take
        // 3000 + 50 us, about 328 frames per second at most.
        let r = max_frame_rate_hz(LedDriver::DataOnly, 100, 3);
        assert!(
            (r - 1.0 / 3.05e-3).abs() < 1e-9 && (327.0..329.0).contains(&r),
            "{r}"
        );
        // RGBW takes 32 bits per LED.
        assert!((max_frame_rate_hz(LedDriver::DataOnly, 100, 4) - 1.0 / 4.05e-3).abs() < 1e-9);
    }

    #[test]
    fn data_and_clock_line_counts_start_led_and_end_frames() {
        // 64 LEDs at 1 MHz: 32 + 64 x 32 + 8 x 4 = 2112 bits per frame.
        let r = max_frame_rate_hz(LedDriver::DataClock { clock_hz: 1e6 }, 64, 3);
        assert!((r - 1e6 / 2112.0).abs() < 1e-9);
    }

    #[test]
    fn drift_of_common_clocks_over_four_minutes() {
        // Arithmetic; the tolerances are common practice: 50 ppm over 240 s
        // is 12 ms, a 0.5 % ceramic resonator over the same show is 1.2 s.
        assert!((drift_s(50.0, 240.0) - 0.012).abs() < 1e-15);
        assert!((drift_s(5000.0, 240.0) - 1.2).abs() < 1e-12);
    }
}
