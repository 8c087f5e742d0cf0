//! From the checks' raw findings to the warnings a performer reads.
//!
//! The checks report every instance (each slack stall tip, each close pass
//! of two props). [`gather`] groups repeats: one warning per kind, prop (and
//! second prop) and unbroken stretch of bars, with how many times it
//! happened and the worst value; then it points each warning at the line of
//! the show file that caused it (the section that plays the figure, the cue
//! that lights the prop, or the prop's own table).

use super::report::{Warning, WarningKind};
use crate::model::Show;

/// Groups repeats in `raw`, locates every warning in the show file and sorts
/// them by time, then kind and prop.
pub(crate) fn gather(show: &Show, mut raw: Vec<Warning>) -> Vec<Warning> {
    raw.sort_by(|a, b| {
        a.kind
            .cmp(&b.kind)
            .then(a.prop.cmp(&b.prop))
            .then(a.other_prop.cmp(&b.other_prop))
            .then(a.at.time_s.total_cmp(&b.at.time_s))
    });
    let mut out: Vec<Warning> = Vec::with_capacity(raw.len());
    for w in raw {
        match out.last_mut() {
            Some(g) if continues(g, &w) => merge(g, w),
            _ => out.push(w),
        }
    }
    for w in &mut out {
        if w.count > 1 {
            w.message = format!(
                "{}; {} times in bars {}-{}{}",
                w.message,
                w.count,
                w.bars[0],
                w.bars[1],
                match (w.value, w.unit) {
                    (Some(v), Some(u)) => format!(", worst {} {u}", short(v)),
                    _ => String::new(),
                }
            );
        }
        w.line = line_of(show, w);
        w.expected = show
            .expected
            .iter()
            .find(|e| {
                e.kind == w.kind.name()
                    && e.prop.as_ref().is_none_or(|p| *p == w.prop)
                    && e.bars
                        .is_none_or(|(a, b)| i64::from(a) <= w.bars[0] && w.bars[1] <= i64::from(b))
            })
            .map(|e| e.why.clone());
    }
    out.sort_by(|a, b| {
        a.at.time_s
            .total_cmp(&b.at.time_s)
            .then(a.kind.cmp(&b.kind))
            .then(a.prop.cmp(&b.prop))
            .then(a.other_prop.cmp(&b.other_prop))
    });
    out
}

/// Whether `w` repeats group `g`: the same kind and props, starting no later
/// than the bar after the group's last.
fn continues(g: &Warning, w: &Warning) -> bool {
    g.kind == w.kind
        && g.prop == w.prop
        && g.other_prop == w.other_prop
        && g.unit == w.unit
        && g.cue == w.cue
        && w.at.bar <= g.bars[1] + 1
}

/// Adds `w` to group `g`: the count, the bars, the time it lasts and the
/// worst value (furthest past the limit).
fn merge(g: &mut Warning, w: Warning) {
    if g.each.is_empty() {
        g.each.push(g.instance());
    }
    g.each.push(w.instance());
    let end = |x: &Warning| x.at.time_s + x.duration_s.unwrap_or(0.0);
    let last = end(g).max(end(&w));
    g.count += w.count;
    g.bars[1] = g.bars[1].max(w.bars[1]);
    if g.duration_s.is_some() || w.duration_s.is_some() {
        g.duration_s = Some(last - g.at.time_s);
    }
    if let (Some(a), Some(b)) = (g.value, w.value) {
        // Below the limit is worse for a figure that must stay above it
        // (tension), above it for the rest.
        let below = g.limit.is_some_and(|l| a < l);
        g.value = Some(if below { a.min(b) } else { a.max(b) });
    }
}

/// `x` in at most four significant digits, as a person writes it.
fn short(x: f64) -> String {
    let a = x.abs();
    if a != 0.0 && !(1e-3..1e5).contains(&a) {
        format!("{x:.3e}")
    } else {
        let digits = if a >= 100.0 {
            1
        } else if a >= 1.0 {
            3
        } else {
            4
        };
        let s = format!("{x:.digits$}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        s.to_string()
    }
}

/// The line of the show file behind `w`: the prop's table for the prop's
/// hardware, the cue that lights the prop at that bar for light and landing
/// warnings, the section that plays at that bar for the motion, the `music`
/// key for the song.
fn line_of(show: &Show, w: &Warning) -> Option<usize> {
    let prop = show.props.iter().position(|p| p.name == w.prop);
    let bar = w.at.bar.max(1) as u32;
    if let Some(cue) = w.cue.and_then(|c| show.cues.get(c)) {
        return Some(show.source.line_col(cue.offset).0);
    }
    let offset = match w.kind {
        WarningKind::Refresh | WarningKind::Memory | WarningKind::Drift => {
            prop.map(|i| show.props[i].offset)
        }
        WarningKind::Flash
        | WarningKind::Current
        | WarningKind::Landing
        | WarningKind::Coverage
        | WarningKind::Overlap => prop
            .and_then(|i| {
                show.cues
                    .iter()
                    .rev()
                    .find(|c| c.prop == i && c.first_bar <= bar && bar <= c.last_bar)
                    .map(|c| c.offset)
                    .or(Some(show.props[i].offset))
            })
            .or_else(|| section_at(show, bar)),
        WarningKind::Slack | WarningKind::SpinRate | WarningKind::Collision | WarningKind::Jump => {
            section_at(show, bar)
        }
        WarningKind::Music => show.music.as_ref().map(|m| m.offset),
    }?;
    Some(show.source.line_col(offset).0)
}

/// The offset of the section that plays bar `bar`.
fn section_at(show: &Show, bar: u32) -> Option<usize> {
    show.sections
        .iter()
        .find(|s| s.first_bar <= bar && bar <= s.last_bar)
        .map(|s| s.offset)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_show_reader_knows_every_warning_kind() {
        let all = [
            WarningKind::Slack,
            WarningKind::SpinRate,
            WarningKind::Collision,
            WarningKind::Jump,
            WarningKind::Flash,
            WarningKind::Current,
            WarningKind::Landing,
            WarningKind::Refresh,
            WarningKind::Memory,
            WarningKind::Drift,
            WarningKind::Coverage,
            WarningKind::Overlap,
            WarningKind::Music,
        ];
        let names: Vec<&str> = all.iter().map(|k| k.name()).collect();
        assert_eq!(names, crate::model::WARNING_KINDS);
    }

    #[test]
    fn short_numbers_read_as_written() {
        assert_eq!(short(-0.2834), "-0.2834");
        assert_eq!(short(12.5), "12.5");
        assert_eq!(short(1234.56), "1234.6");
        assert_eq!(short(5e-324), "4.941e-324");
        assert_eq!(short(0.0), "0");
    }
}
