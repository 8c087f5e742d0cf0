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

/// Prints every event of the show at `path` to `out`, sorted by time.
pub fn run(path: &Path, json: bool, out: &mut dyn Write) -> Result<(), Failure> {
    let prepared = super::prepare(path)?;
    let (show, events) = (prepared.show(), prepared.events());
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
        for e in events {
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
