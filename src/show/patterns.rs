//! `[pattern.NAME]`: the spin patterns, a hand path and the head's turns.

use super::keys::*;
use super::named_tables;
use super::props::check_name;
use super::reader::{Ctx, Tbl, describe};
use crate::model::{Figure, Pattern, Term};
use std::ops::Range;
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
        let head = head(ctx, t, span.clone());
        let stall = head.as_ref().is_some_and(|h| h.stall);
        let hand = match (t.get("hand_radius_m"), t.get("hand")) {
            (Some(v), _) | (None, Some(v)) if stall => {
                let turns = head.as_ref().map_or(0.0, |h| h.turns.abs());
                ctx.error_help(
                    &t.key_path(if t.get("hand_radius_m").is_some() {
                        "hand_radius_m"
                    } else {
                        "hand"
                    }),
                    v.span(),
                    "give either `stall = true` or the hand path, not both",
                    format!(
                        "`stall = true` sets `hand_radius_m = tether_m * {turns}` for the prop that plays it"
                    ),
                );
                None
            }
            (None, None) if stall => Some(vec![Term {
                radius_m: 0.0,
                turns: 1.0,
                start_deg: hand_start,
            }]),
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
        let reverse = ctx.boolean(t, "reverse").unwrap_or(false);
        if let (Some(plane), Some(beats), Some(hand), Some(head)) = (plane, beats, hand, head) {
            // A figure's tether starts along the hand's radius (an isolation's
            // across it) unless `head_start_deg` says otherwise.
            let first = hand.first().map_or(0.0, |h| h.start_deg);
            let head_start = head
                .start_deg
                .unwrap_or_else(|| head.figure.map_or(0.0, |f| first + f.head_offset_deg()));
            out.push(Pattern {
                name,
                plane,
                beats,
                hand,
                head_turns: head.turns,
                head_start_deg: head_start,
                reverse,
                figure: head.figure,
                stall: head.stall,
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

/// What a pattern's tether does, from its figure or its raw keys.
struct Head {
    /// Tether turns per hand revolution.
    turns: f64,
    /// `head_start_deg` as written, if it was.
    start_deg: Option<f64>,
    figure: Option<Figure>,
    stall: bool,
}

/// The raw keys a figure stands for, for help lines.
fn raw_keys(f: Figure) -> String {
    let start = match f {
        Figure::Isolation => "hand_start_deg + 180",
        _ => "hand_start_deg",
    };
    format!("head_turns = {}, head_start_deg = {start}", f.head_turns())
}

/// The tether's turns and start: from `figure` (with `petals`, `stall`), or
/// from `head_turns` and `head_start_deg`. The figures' rules are common
/// practice (docs/conventions.md, "Figures").
fn head(ctx: &mut Ctx, t: Tbl<'_, '_>, span: Range<usize>) -> Option<Head> {
    let start_deg = ctx.number_in(t, "head_start_deg", ANGLE_DEG);
    if t.get("figure").is_none() {
        ctx.refuse_keys(
            t,
            &["petals", "stall"],
            |key| format!("`{key}` goes with `figure`"),
            "write `figure = \"antispin\", petals = 4` (that is `head_turns = -3`) or `figure = \"inspin\", petals = 3` (`head_turns = 4`)",
        );
        if t.get("head_turns").is_none() {
            ctx.error_help(
                t.path,
                span,
                "missing the head's turns: `figure` or `head_turns`",
                "write `figure = \"antispin\", petals = 4` (that is `head_turns = -3`), or `head_turns` itself",
            );
            return None;
        }
        let turns = ctx.required_number(t, "head_turns", TURNS)?;
        return Some(Head {
            turns,
            start_deg,
            figure: None,
            stall: false,
        });
    }
    let name = ctx.choice(t, "figure", "figure", FIGURES, None)?;
    let figure_span = t.get("figure").map_or(span.clone(), |v| v.span());
    let figure = match name {
        FigureName::Extension | FigureName::Isolation => {
            let f = if name == FigureName::Extension {
                Figure::Extension
            } else {
                Figure::Isolation
            };
            ctx.refuse_keys(
                t,
                &["petals"],
                |_| format!("an {} has no petals", f.name()),
                "`petals` goes with `figure = \"inspin\"` or `\"antispin\"`",
            );
            ctx.refuse_keys(
                t,
                &["head_start_deg"],
                |_| format!("an {} sets `head_start_deg` itself", f.name()),
                &format!(
                    "an {} is `{}`; for another start write `head_turns = 1` and `head_start_deg`",
                    f.name(),
                    raw_keys(f)
                ),
            );
            f
        }
        FigureName::Inspin | FigureName::Antispin => {
            let inspin = name == FigureName::Inspin;
            let (least, what, rule) = if inspin {
                (1, "an inspin flower", "head_turns = petals + 1")
            } else {
                (2, "an antispin flower", "head_turns = 1 - petals")
            };
            let make = |n: u32| {
                if inspin {
                    Figure::Inspin { petals: n }
                } else {
                    Figure::Antispin { petals: n }
                }
            };
            let example = make(4);
            let Some(v) = t.get("petals") else {
                ctx.error_help(
                    &t.key_path("petals"),
                    figure_span,
                    format!("{what} needs `petals`, {least} or more"),
                    format!(
                        "`petals = 4` makes four petals: `{}` ({rule})",
                        raw_keys(example)
                    ),
                );
                return None;
            };
            let n = ctx.integer_in(t, "petals", i64::MIN..=i64::MAX)?;
            if n < least || n > MAX_PETALS {
                let message = if n < least {
                    format!("petals must be {least} or more, got {n}")
                } else {
                    format!("petals must be {MAX_PETALS} or fewer, got {n}")
                };
                let help = if !inspin && n == 1 {
                    "one antispin petal would be `head_turns = 0` (the tether never turns); an antispin flower has 2 or more".to_string()
                } else if inspin && n == 0 {
                    "no inspin petals is an extension: `figure = \"extension\"` (`head_turns = 1`)"
                        .to_string()
                } else {
                    format!(
                        "{what} of N petals is `{rule}`: `petals = 4` is `{}`",
                        raw_keys(example)
                    )
                };
                ctx.error_help(&t.key_path("petals"), v.span(), message, help);
                return None;
            }
            make(n as u32)
        }
    };
    if let Some(v) = t.get("head_turns") {
        ctx.error_help(
            &t.key_path("head_turns"),
            v.span(),
            "give either `figure` or `head_turns`, not both",
            format!("this figure is `{}`", raw_keys(figure)),
        );
        return None;
    }
    let stall = ctx.boolean(t, "stall").unwrap_or(false);
    if stall && !matches!(figure, Figure::Antispin { .. }) {
        let v = t.get("stall").map_or(span, |v| v.span());
        ctx.error_help(
            &t.key_path("stall"),
            v,
            "`stall = true` goes with `figure = \"antispin\"`",
            "an antispin flower stops at its tips when `hand_radius_m = tether_m * |head_turns|`; `stall = true` sets that for each prop",
        );
        return None;
    }
    Some(Head {
        turns: figure.head_turns(),
        start_deg,
        figure: Some(figure),
        stall,
    })
}
