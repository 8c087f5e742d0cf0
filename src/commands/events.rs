//! `glowscore events`: every event of a show, as JSON or a readable table.

use std::io::Write;
use std::path::Path;

use serde::Serialize;

use super::Failure;
use crate::events::Event;
use crate::model::Show;
use crate::num::round_to;

/// One event as `docs/conventions.md` ("Event JSON") gives it.
#[derive(Serialize)]
pub struct EventJson<'a> {
    /// Prop name.
    pub prop: &'a str,
    /// Event kind name.
    pub kind: &'static str,
    /// Seconds from frame 0.
    pub time_s: f64,
    /// Bar number, from 1.
    pub bar: i64,
    /// Beat within the bar, from 1, fractional.
    pub beat: f64,
    /// Head position, stage coordinates, metres.
    pub position_m: [f64; 3],
    /// Head speed, m/s.
    pub speed_m_s: f64,
    /// The clock angle, for angle events.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub angle_deg: Option<f64>,
}

impl<'a> EventJson<'a> {
    /// The JSON form of `e` in `show`.
    pub fn new(show: &'a Show, e: &Event) -> Self {
        let (bar, beat) = show.tempo.bar_beat(e.beat);
        EventJson {
            prop: &show.props[e.prop].name,
            kind: e.kind.name(),
            time_s: round_to(e.time_s, 9),
            bar,
            beat: round_to(beat, 9),
            position_m: [0, 1, 2].map(|k| round_to(e.position_m[k], 9)),
            speed_m_s: round_to(e.speed_m_s, 9),
            angle_deg: e.angle_deg,
        }
    }
}

/// Which events to print; every field left empty lets all through.
#[derive(Clone, Debug, Default)]
pub struct EventFilter {
    /// Only these props (names).
    pub props: Vec<String>,
    /// Only these kinds (`tip`, `inner`, `stall`, `angle`, `beat`, `bar`).
    pub kinds: Vec<String>,
    /// Only events in these bars, inclusive.
    pub bars: Option<(u32, u32)>,
}

impl EventFilter {
    /// Refuses a prop or kind name the show does not know, with the choices.
    fn validate(&self, show: &Show) -> Result<(), Failure> {
        for p in &self.props {
            if show.prop_index(p).is_none() {
                let names: Vec<&str> = show.props.iter().map(|p| p.name.as_str()).collect();
                return Err(Failure::Option(format!(
                    "--prop `{}`: the show has no such prop (it has {})",
                    crate::diag::escape(p),
                    names.join(", ")
                )));
            }
        }
        const KINDS: [&str; 6] = ["tip", "inner", "stall", "angle", "beat", "bar"];
        for k in &self.kinds {
            if !KINDS.contains(&k.as_str()) {
                return Err(Failure::Option(format!(
                    "--kind `{}` is not an event kind (one of {})",
                    crate::diag::escape(k),
                    KINDS.join(", ")
                )));
            }
        }
        Ok(())
    }

    fn keeps(&self, show: &Show, e: &Event) -> bool {
        let (bar, _) = show.tempo.bar_beat(e.beat);
        (self.props.is_empty() || self.props.contains(&show.props[e.prop].name))
            && (self.kinds.is_empty() || self.kinds.iter().any(|k| k == e.kind.name()))
            && self
                .bars
                .is_none_or(|(a, b)| i64::from(a) <= bar && bar <= i64::from(b))
    }
}

/// Prints the events of the show at `path` that `filter` keeps to `out`,
/// sorted by time.
pub fn run(
    path: &Path,
    json: bool,
    filter: &EventFilter,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let prepared = super::prepare(path)?;
    let show = prepared.show();
    filter.validate(show)?;
    let events: Vec<&Event> = prepared
        .events()
        .iter()
        .filter(|e| filter.keeps(show, e))
        .collect();
    let io = Failure::output("the events");
    if json {
        // One event per line: valid JSON that diffs well.
        write!(out, "[").map_err(&io)?;
        for (i, e) in events.iter().enumerate() {
            let line = serde_json::to_string(&EventJson::new(show, e)).map_err(|e| io(e.into()))?;
            let sep = if i == 0 { "" } else { "," };
            write!(out, "{sep}\n  {line}").map_err(&io)?;
        }
        writeln!(out, "{}]", if events.is_empty() { "" } else { "\n" }).map_err(&io)?;
    } else {
        writeln!(
            out,
            "{:>12}  {:>10}  {:<10} {:<6} {:>24}  {:>8}",
            "time_s", "bar:beat", "prop", "kind", "position_m (x, y, z)", "m/s"
        )
        .map_err(&io)?;
        for e in &events {
            let (bar, beat) = show.tempo.bar_beat(e.beat);
            let kind = match e.angle_deg {
                Some(a) => format!("{}@{a}", e.kind.name()),
                None => e.kind.name().to_string(),
            };
            let p = e.position_m;
            writeln!(
                out,
                "{:>12.6}  {:>10}  {:<10} {:<6} {:>7.3} {:>7.3} {:>7.3}  {:>8.3}",
                e.time_s,
                format!("{bar}:{beat:.3}"),
                show.props[e.prop].name,
                kind,
                p.x + 0.0,
                p.y + 0.0,
                p.z + 0.0,
                e.speed_m_s
            )
            .map_err(&io)?;
        }
    }
    Ok(())
}
