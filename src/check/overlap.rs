//! Cues that later cues hide: where cues overlap on a prop the later one in
//! the file wins, so the earlier one's frames there never play. Each such
//! cue gets an `overlap` warning; the landing figures count only the
//! changes that play.

use super::report::{Warning, WarningKind, When};
use crate::cues::Lights;
use crate::model::Show;

/// One `overlap` warning per cue that a later cue hides, in part or whole.
pub(crate) fn scan(show: &Show, lights: &Lights) -> Vec<Warning> {
    let rate = f64::from(show.frame_rate_hz.max(1));
    let when = |k: u64| When::at_beat(show, show.tempo.beat_at_time(k as f64 / rate));
    let mut out = Vec::new();
    for pl in &lights.props {
        for h in pl.hidden() {
            let cue = &show.cues[h.cue];
            let (a, b) = (when(h.first.0), when(h.first.1.saturating_sub(1)));
            let share = h.frames as f64 / h.of_frames.max(1) as f64;
            let how = if h.frames == h.of_frames {
                "none of it plays".to_string()
            } else {
                format!("{:.0} % of its frames do not play", share * 100.0)
            };
            out.push(Warning {
                kind: WarningKind::Overlap,
                count: 1,
                bars: [a.bar, b.bar],
                line: None,
                cue: Some(h.cue),
                each: Vec::new(),
                expected: None,
                prop: show.props[pl.prop].name.clone(),
                other_prop: None,
                at: a,
                duration_s: Some((h.first.1 - h.first.0) as f64 / rate),
                value: Some(share * 100.0),
                limit: Some(0.0),
                unit: Some("%"),
                message: format!(
                    "cue {} (`{}` on {}, bars {}-{}) is hidden by the later cue {} from bar {} beat {:.3}: {how} \
                     (where cues overlap on a prop the later one wins; shorten the earlier cue's bars if that is not meant)",
                    h.cue,
                    cue.at_name(),
                    show.props[pl.prop].name,
                    cue.first_bar,
                    cue.last_bar,
                    h.by,
                    a.bar,
                    a.beat
                ),
            });
        }
    }
    out
}
