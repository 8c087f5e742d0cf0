//! The check report as readable text: what `glowscore check` prints without
//! `--json`. The report's fields are in [`super::report`]; this file only
//! renders them.

use std::io::{self, Write};

use super::coverage::PaintingCoverage;
use super::landing::{CueLanding, LandingSummary};
use super::light::FlashFigures;
use super::music::MusicFigures;
use super::report::{CheckReport, PairFigures, PropFigures, Rect, Stage, When};

impl CheckReport {
    /// Writes the report as readable text, ending with the cautions.
    pub fn write_text(&self, out: &mut dyn Write) -> io::Result<()> {
        if !self.valid {
            writeln!(out, "The show is invalid ({} errors).", self.errors.len())?;
            return Ok(());
        }
        writeln!(
            out,
            "Check of \"{}\": {:.3} s long (from frame 0 to the end of the last section)",
            crate::diag::escape(&self.title),
            self.duration_s
        )?;
        for p in &self.props {
            write_prop(out, p)?;
        }
        if !self.pairs.is_empty() {
            writeln!(out, "\nPairs")?;
        }
        for p in &self.pairs {
            write_pair(out, p)?;
        }
        if let Some(s) = &self.stage {
            write_stage(out, s)?;
        }
        if let Some(f) = &self.stage_flash {
            write_flash(out, "  flashes        whole stage ", f)?;
        }
        if self.props.iter().any(|p| p.flash.is_some()) {
            writeln!(
                out,
                "  (flash limits: W3C WCAG 2.x, written for screens, applied here as a conservative guide)"
            )?;
        }
        if let Some(l) = &self.landing {
            write_landing(out, &self.cues, l)?;
        }
        if !self.paintings.is_empty() {
            write_paintings(out, &self.paintings)?;
        }
        if let Some(m) = &self.music {
            write_music(out, m)?;
        }
        let expected = self.warnings.len() - self.unexpected_warnings();
        if expected > 0 {
            writeln!(
                out,
                "\nWarnings: {} ({expected} expected by the show)",
                self.warnings.len()
            )?;
        } else {
            writeln!(out, "\nWarnings: {}", self.warnings.len())?;
        }
        for w in &self.warnings {
            let line = w
                .line
                .map_or_else(String::new, |l| format!(" (show line {l})"));
            let line = match &w.expected {
                Some(why) => format!("{line} [expected: {}]", crate::diag::escape(why)),
                None => line,
            };
            writeln!(
                out,
                "  {:>10.3} s  bar {} beat {:.3}  {:<9}  {}{line}",
                w.at.time_s,
                w.at.bar,
                w.at.beat,
                w.kind.name(),
                crate::diag::escape(&w.message)
            )?;
        }
        writeln!(out, "\nCautions")?;
        for c in &self.cautions {
            writeln!(out, "  - {c}")?;
        }
        Ok(())
    }
}

fn at(w: &Option<When>) -> String {
    match w {
        Some(w) => format!("at {w}"),
        None => String::new(),
    }
}

fn write_prop(out: &mut dyn Write, p: &PropFigures) -> io::Result<()> {
    let staff = !p.ends.is_empty();
    if staff {
        writeln!(out, "\nProp {} (staff: the worst of both ends)", p.name)?;
    } else {
        writeln!(out, "\nProp {}", p.name)?;
    }
    writeln!(
        out,
        "  {}     up to {:.3} m/s {}",
        if staff { "end speed " } else { "head speed" },
        p.max_speed_m_s,
        at(&p.max_speed_at)
    )?;
    writeln!(
        out,
        "  acceleration   up to {:.2} g {}",
        p.max_acc_g,
        at(&p.max_acc_at)
    )?;
    let (force, weight) = if staff {
        ("rod force ", "end weight")
    } else {
        ("tension   ", "head weight")
    };
    writeln!(
        out,
        "  {force}     from {:.3} N ({:.2} x {weight}) {}",
        p.min_tension_n,
        p.min_tension_weights,
        at(&p.min_tension_at)
    )?;
    writeln!(
        out,
        "                 to {:.3} N ({:.2} x {weight}) {}",
        p.max_tension_n,
        p.max_tension_weights,
        at(&p.max_tension_at)
    )?;
    if staff {
        writeln!(
            out,
            "                 (the rod's axial force at each end: negative pushes; a staff is never slack)"
        )?;
        for e in &p.ends {
            writeln!(
                out,
                "  {} end{:w$} {:.3} m/s, {:.3} to {:.3} N, reach {:.3} m",
                e.end,
                "",
                e.max_speed_m_s,
                e.min_tension_n,
                e.max_tension_n,
                e.reach_m,
                w = 10 - e.end.len()
            )?;
        }
    } else {
        writeln!(out, "  slack          {:.3} s in all", p.slack_s)?;
    }
    writeln!(
        out,
        "  spin           hand up to {:.2} turns/s, head up to {:.2} turns/s",
        p.max_hand_turns_per_s, p.max_head_turns_per_s
    )?;
    writeln!(
        out,
        "  reach          {:.3} m from the anchor {}",
        p.reach_m,
        at(&p.reach_at)
    )?;
    writeln!(
        out,
        "                 {:.3} m from the centre line {}",
        p.reach_from_centre_m,
        at(&p.reach_from_centre_at)
    )?;
    for (i, j) in p.joins.iter().enumerate() {
        let lead = if i == 0 {
            "  joins       "
        } else {
            "              "
        };
        writeln!(
            out,
            "{lead}   bar {:<4} {:<8} jump {:>8.1} mm (hand {:.1} mm), speed {:.3} -> {:.3} m/s, kink {:.3} m/s ({} to {})",
            j.at.bar,
            j.join,
            j.jump_mm,
            j.hand_jump_mm,
            j.speed_before_m_s,
            j.speed_after_m_s,
            j.kink_m_s,
            super::jumps::playing(&j.from),
            super::jumps::playing(&j.to)
        )?;
    }
    if let Some(a) = p.peak_current_a {
        writeln!(
            out,
            "  LED current    peak {a:.3} A {}",
            at(&p.peak_current_at)
        )?;
    }
    if let Some(a) = p.mean_current_a {
        writeln!(out, "                 mean {a:.3} A")?;
    }
    if let Some(h) = p.battery_hours {
        writeln!(out, "  battery        {h:.2} h at the mean current")?;
    }
    if let Some(k) = p.brightness_scale {
        writeln!(
            out,
            "  brightness     scale by {k:.3} to keep the peak within max_current_a"
        )?;
    }
    if let Some(h) = &p.hardware {
        writeln!(
            out,
            "  LED line       refreshes at most {:.0} frames/s",
            h.max_frame_rate_hz
        )?;
        let memory = h.memory_phrase();
        let sep = if memory.is_empty() { "" } else { "; " };
        writeln!(
            out,
            "  tables         full {} B, compact {} B, program {} B{sep}{memory}",
            h.full_table_bytes, h.compact_table_bytes, h.program_bytes
        )?;
        writeln!(
            out,
            "  clock drift    up to {:.1} ms ({:.3} beats) by the end",
            h.drift_ms, h.drift_beats
        )?;
    }
    if let Some(f) = &p.flash {
        write_flash(out, "  flashes        ", f)?;
    }
    Ok(())
}

fn write_flash(out: &mut dyn Write, lead: &str, f: &FlashFigures) -> io::Result<()> {
    writeln!(
        out,
        "{lead}up to {} general ({:.3} s) and {} red ({:.3} s) in one second, limit {}: {}",
        f.max_general,
        f.max_general_at_s,
        f.max_red,
        f.max_red_at_s,
        f.limit,
        if f.passes { "within" } else { "over" }
    )
}

fn write_landing(out: &mut dyn Write, cues: &[CueLanding], l: &LandingSummary) -> io::Result<()> {
    writeln!(
        out,
        "\nLanding (tolerance {} mm; needed rate = half a frame at the fastest event)",
        l.tolerance_mm
    )?;
    for c in cues {
        match (c.worst_ms, c.worst_mm, c.worst_deg) {
            (Some(ms), Some(mm), Some(deg)) => writeln!(
                out,
                "  cue {} {} {} bars {}-{}: {} changes, worst {ms:.2} ms {mm:.1} mm {deg:.1} deg, needs {} Hz",
                c.cue,
                c.prop,
                c.at,
                c.bars[0],
                c.bars[1],
                c.changes,
                c.needed_frame_rate_hz
                    .map_or_else(|| "?".to_string(), |f| f.to_string())
            )?,
            _ => writeln!(
                out,
                "  cue {} {} {} bars {}-{}: no event-driven changes",
                c.cue, c.prop, c.at, c.bars[0], c.bars[1]
            )?,
        }
    }
    Ok(())
}

fn write_paintings(out: &mut dyn Write, paintings: &[PaintingCoverage]) -> io::Result<()> {
    writeln!(
        out,
        "\nPaintings (texels some LED comes within one texel width of, at a frame's midpoint)"
    )?;
    for c in paintings {
        let share = c.covered_fraction.map_or_else(
            || "no visible texels".to_string(),
            |f| format!("{:.1} %", 100.0 * f),
        );
        let travel = c
            .max_frame_travel_texels
            .map_or_else(String::new, |t| format!(", up to {t:.2} texels per frame"));
        writeln!(
            out,
            "  cue {} {} `{}` bars {}-{}: {share} of {} texels ({:.1} mm) in {:.3} s of painting{travel}",
            c.cue,
            c.prop,
            crate::diag::escape(&c.file),
            c.bars[0],
            c.bars[1],
            c.texels,
            c.texel_m * 1000.0,
            c.painting_s
        )?;
    }
    Ok(())
}

fn write_music(out: &mut dyn Write, m: &MusicFigures) -> io::Result<()> {
    let file = crate::diag::escape(&m.file);
    let song = match (m.song_bpm, m.song_start_s) {
        (Some(bpm), Some(start)) => format!(", {bpm:.2} bpm from {start:.3} s"),
        _ => ", no steady beat".to_string(),
    };
    writeln!(out, "\nMusic `{file}`: {:.3} s{song}", m.duration_s)?;
    match (m.max_offset_ms, m.max_offset_at) {
        (Some(ms), Some(at)) => writeln!(
            out,
            "  show beats off the song's  {ms:.1} ms at most, at {at} ({} beats compared; limit {} ms)",
            m.beats_compared, m.limit_ms
        ),
        _ => writeln!(out, "  show beats off the song's  none compared"),
    }
}

fn write_pair(out: &mut dyn Write, p: &PairFigures) -> io::Result<()> {
    let [a, b] = &p.props;
    match (p.min_head_distance_m, p.min_tether_distance_m) {
        (Some(h), Some(t)) => {
            writeln!(
                out,
                "  {a} and {b}: heads within {h:.3} m {}",
                at(&p.min_head_distance_at)
            )?;
            writeln!(
                out,
                "  {:w$}  tethers within {t:.3} m {} (contact at {:.3} m)",
                "",
                at(&p.min_tether_distance_at),
                p.contact_m,
                w = a.len() + b.len() + 5
            )
        }
        _ => writeln!(out, "  {a} and {b}: never move at the same time"),
    }
}

fn write_stage(out: &mut dyn Write, s: &Stage) -> io::Result<()> {
    let r = |r: &Rect| {
        format!(
            "x {:.3} to {:.3} m, z {:.3} to {:.3} m ({:.3} m wide, {:.3} m deep)",
            r.x_min_m, r.x_max_m, r.z_min_m, r.z_max_m, r.width_m, r.depth_m
        )
    };
    writeln!(out, "\nStage")?;
    writeln!(
        out,
        "  centre line    x = {:.3} m, z = {:.3} m",
        s.centre_line_m[0], s.centre_line_m[1]
    )?;
    writeln!(out, "  swept          {}", r(&s.swept_m))?;
    writeln!(
        out,
        "  clear space    {} with a {:.2} m margin",
        r(&s.clear_space_m),
        s.margin_m
    )?;
    writeln!(
        out,
        "  head height    y = {:.3} to {:.3} m",
        s.lowest_head_m, s.highest_head_m
    )
}
