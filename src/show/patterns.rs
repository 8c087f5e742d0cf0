//! `[pattern.NAME]`: the spin patterns, a hand path and the head's turns.

use super::keys::*;
use super::named_tables;
use super::props::check_name;
use super::reader::{Ctx, Tbl, describe};
use crate::model::{Pattern, Term};
use toml::de::DeValue;

/// The patterns of `[pattern.NAME]` that are free of errors, in file order.
pub(super) fn patterns(ctx: &mut Ctx, root: Tbl<'_, '_>) -> Vec<Pattern> {
    let mut out = Vec::new();
    for (name, path, table, span) in named_tables(ctx, root, "pattern") {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        ctx.check_keys(t, PATTERN_KEYS);
        check_name(ctx, &path, &name, span.clone());
        let plane = ctx.choice(t, "plane", "plane", PLANES, None);
        let beats = ctx.required_number(t, "beats", BEATS);
        let hand_start = ctx.number_in(t, "hand_start_deg", ANGLE_DEG).unwrap_or(0.0);
        let hand = match (t.get("hand_radius_m"), t.get("hand")) {
            (Some(_), Some(v)) => {
                ctx.error_help(
                    &t.key_path("hand"),
                    v.span(),
                    "give either `hand_radius_m` or `hand`, not both",
                    "`hand_radius_m = R` is short for `hand = [{ radius_m = R, turns = 1 }]`",
                );
                None
            }
            (Some(_), None) => ctx.required_number(t, "hand_radius_m", RADIUS_M).map(|r| {
                vec![Term {
                    radius_m: r,
                    turns: 1.0,
                    start_deg: hand_start,
                }]
            }),
            (None, Some(_)) => {
                ctx.refuse_keys(
                    t,
                    &["hand_start_deg"],
                    |key| format!("`{key}` goes with `hand_radius_m`"),
                    "with `hand = [...]`, give each term its own `start_deg`",
                );
                hand_terms(ctx, t)
            }
            (None, None) => {
                ctx.error_help(
                    &path,
                    span.clone(),
                    "missing the hand path: `hand_radius_m` or `hand`",
                    "write `hand_radius_m = 0.15` for a circle, or `hand = [{ radius_m = 0.2, turns = 1 }, ...]`",
                );
                None
            }
        };
        let head_turns = ctx.required_number(t, "head_turns", TURNS);
        let head_start = ctx.number_in(t, "head_start_deg", ANGLE_DEG).unwrap_or(0.0);
        let reverse = ctx.boolean(t, "reverse").unwrap_or(false);
        if let (Some(plane), Some(beats), Some(hand), Some(head_turns)) =
            (plane, beats, hand, head_turns)
        {
            out.push(Pattern {
                name,
                plane,
                beats,
                hand,
                head_turns,
                head_start_deg: head_start,
                reverse,
            });
        }
    }
    out
}

fn hand_terms(ctx: &mut Ctx, t: Tbl<'_, '_>) -> Option<Vec<Term>> {
    let (arr, span) = ctx.array(t, "hand", true)?;
    if arr.is_empty() || arr.len() > 16 {
        ctx.error(
            &t.key_path("hand"),
            span,
            format!("expected 1 to 16 terms, got {}", arr.len()),
        );
        return None;
    }
    let mut terms = Vec::new();
    let mut ok = true;
    for (i, v) in arr.iter().enumerate() {
        let path = format!("{}[{i}]", t.key_path("hand"));
        let DeValue::Table(table) = v.get_ref() else {
            ctx.error_help(
                &path,
                v.span(),
                format!("expected a table, got {}", describe(v.get_ref())),
                "write `{ radius_m = 0.2, turns = 1, start_deg = 0 }`",
            );
            ok = false;
            continue;
        };
        let term = Tbl {
            path: &path,
            table,
            at: (v.span().start, v.span().end),
        };
        ctx.check_keys(term, TERM_KEYS);
        let radius = ctx.required_number(term, "radius_m", RADIUS_M);
        let turns = ctx.required_number(term, "turns", TURNS);
        let start = ctx.number_in(term, "start_deg", ANGLE_DEG).unwrap_or(0.0);
        match (radius, turns) {
            (Some(radius_m), Some(turns)) => terms.push(Term {
                radius_m,
                turns,
                start_deg: start,
            }),
            _ => ok = false,
        }
    }
    ok.then_some(terms)
}
