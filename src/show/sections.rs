//! `[[tempo]]` and `[[section]]`: the tempo changes, and which pattern
//! each prop plays in each range of bars.

use std::collections::{HashMap, HashSet};
use std::ops::Range;

use toml::de::DeValue;

use super::keys::*;
use super::reader::{Ctx, Tbl, Val, describe, join, list};
use super::{Declared, MAX_BAR, table_array};
use crate::diag::did_you_mean;
use crate::model::{Join, Pattern, Placement, Prop, Section, stall_radius_m};

/// The tempo changes of `[[tempo]]`, sorted by bar.
pub(super) fn tempo_changes(ctx: &mut Ctx, root: Tbl<'_, '_>) -> Vec<(u32, f64)> {
    let mut changes: Vec<(u32, f64, Range<usize>)> = Vec::new();
    // Where the first change at each bar is written.
    let mut first_at: HashMap<i64, usize> = HashMap::new();
    for (path, table, span) in table_array(ctx, root, "tempo") {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        ctx.check_keys(t, TEMPO_KEYS);
        let bar = ctx.required_integer(t, "bar", 1..=MAX_BAR);
        let bpm = ctx.required_number(t, "bpm", BPM);
        if let (Some(bar), Some(bpm)) = (bar, bpm) {
            if let Some(&prev) = first_at.get(&bar) {
                let (line, _) = ctx.src.line_col(prev);
                ctx.error(
                    &join(&path, "bar"),
                    span.clone(),
                    format!("a tempo change at bar {bar} is already given on line {line}"),
                );
            }
            first_at.entry(bar).or_insert(span.start);
            changes.push((bar as u32, bpm, span));
        }
    }
    changes.sort_by_key(|c| c.0);
    changes.into_iter().map(|(b, bpm, _)| (b, bpm)).collect()
}

/// A section as read, with the span of its `bars`, and its `join`'s key
/// path and span.
type Read = (Section, Range<usize>, (String, Range<usize>));

/// The sections of `[[section]]`, sorted by bar.
pub(super) fn sections(
    ctx: &mut Ctx,
    root: Tbl<'_, '_>,
    props: &[Prop],
    patterns: &[Pattern],
    names: &Declared,
) -> Vec<Section> {
    let prop_names: Vec<&str> = names.props.iter().map(String::as_str).collect();
    let declared_props: HashSet<&str> = prop_names.iter().copied().collect();
    let known = Patterns {
        index: patterns
            .iter()
            .enumerate()
            .map(|(i, p)| (p.name.as_str(), i))
            .collect(),
        declared: names.patterns.iter().map(String::as_str).collect(),
        names: names.patterns.iter().map(String::as_str).collect(),
    };
    let prop_index: HashMap<&str, usize> = props
        .iter()
        .enumerate()
        .map(|(i, p)| (p.name.as_str(), i))
        .collect();
    let mut keys = SECTION_KEYS.to_vec();
    keys.extend(prop_names.iter().copied());
    let mut out: Vec<Read> = Vec::new();
    for (path, table, span) in table_array(ctx, root, "section") {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        let bars = ctx.bar_range(t, "bars", MAX_BAR);
        let how = ctx
            .choice(t, "join", "join", JOINS, Some(Join::Restart))
            .unwrap_or_default();
        let mut placements = vec![None; props.len()];
        for (k, v) in table.iter() {
            let key: &str = k.get_ref();
            if SECTION_KEYS.contains(&key) {
                continue;
            }
            let kpath = join(&path, key);
            let Some(&prop) = prop_index.get(key) else {
                if declared_props.contains(key) {
                    // The prop has errors of its own; still check the pattern.
                    placement(ctx, &kpath, v, &known);
                    continue;
                }
                let help = match did_you_mean(key, keys.iter().copied()) {
                    Some(s) => format!("did you mean `{s}`?"),
                    None => format!(
                        "a section takes `bars`, `join` and prop names: {}",
                        list(&keys)
                    ),
                };
                ctx.error_help(&kpath, k.span(), format!("`{key}` is not a prop"), help);
                continue;
            };
            placements[prop] = placement(ctx, &kpath, v, &known);
            if let Some(pl) = placements[prop] {
                check_stall(ctx, &kpath, v.span(), &props[prop], &patterns[pl.pattern]);
            }
        }
        if let Some((first_bar, last_bar, bspan)) = bars {
            out.push((
                Section {
                    offset: span.start,
                    first_bar,
                    last_bar,
                    placements,
                    join: how,
                },
                bspan,
                (
                    t.key_path("join"),
                    t.get("join").map_or(span.clone(), |v| v.span()),
                ),
            ));
        }
    }
    out.sort_by_key(|s| s.0.first_bar);
    for w in out.windows(2) {
        let (a, b) = (&w[0].0, &w[1].0);
        if b.first_bar <= a.last_bar {
            let (line, _) = ctx.src.line_col(w[0].1.start);
            ctx.error(
                "section.bars",
                w[1].1.clone(),
                format!(
                    "bars {}-{} overlap the section of bars {}-{} (line {line})",
                    b.first_bar, b.last_bar, a.first_bar, a.last_bar
                ),
            );
        }
    }
    if let Some((first, _, (join_path, join_span))) = out.first()
        && first.join == Join::Continue
    {
        ctx.error_help(
            join_path,
            join_span.clone(),
            "the first section has no section before it to continue from",
            "remove `join` here: the show starts each prop where its first pattern starts",
        );
    }
    if out.is_empty() && !ctx.diags.has_errors() {
        ctx.error_help(
            "section",
            root.at.0..root.at.0,
            "the show has no sections",
            "add `[[section]]` with `bars = [1, 8]` and `PROP = \"PATTERN\"`",
        );
    }
    out.into_iter().map(|s| s.0).collect()
}

/// The patterns a placement may name: those free of errors by name, and
/// every declared one (a pattern with errors raises no second error).
struct Patterns<'a> {
    index: HashMap<&'a str, usize>,
    declared: HashSet<&'a str>,
    names: Vec<&'a str>,
}

fn placement(ctx: &mut Ctx, path: &str, v: &Val<'_>, patterns: &Patterns<'_>) -> Option<Placement> {
    let find = |ctx: &mut Ctx, name: &str, span: Range<usize>| {
        let i = patterns.index.get(name).copied();
        if i.is_none() && !patterns.declared.contains(name) {
            ctx.unknown_name(path, span, "pattern", name, &patterns.names);
        }
        i
    };
    match v.get_ref() {
        DeValue::String(s) => {
            let pattern = find(ctx, s, v.span())?;
            Some(Placement {
                pattern,
                mirror: false,
                delay_beats: 0.0,
            })
        }
        DeValue::Table(table) => {
            let t = Tbl {
                path,
                table,
                at: (v.span().start, v.span().end),
            };
            ctx.check_keys(t, PLACEMENT_KEYS);
            let (name, span) = ctx.string(t, "pattern", true)?;
            let pattern = find(ctx, &name, span);
            let mirror = ctx.boolean(t, "mirror").unwrap_or(false);
            let delay = ctx.number_in(t, "delay_beats", DELAY_BEATS).unwrap_or(0.0);
            Some(Placement {
                pattern: pattern?,
                mirror,
                delay_beats: delay,
            })
        }
        other => {
            ctx.error_help(
                path,
                v.span(),
                format!("expected a pattern name or a table, got {}", describe(other)),
                "write `left = \"four_petal\"` or `left = { pattern = \"four_petal\", mirror = true }`",
            );
            None
        }
    }
}

/// Refuses a stall whose hand circle (`tether_m * |head_turns|` of the prop
/// that plays it) would be larger than any `hand_radius_m` may be.
fn check_stall(ctx: &mut Ctx, path: &str, span: Range<usize>, prop: &Prop, pattern: &Pattern) {
    if !pattern.stall {
        return;
    }
    let r = stall_radius_m(prop.tether_m, pattern.head_turns);
    if !RADIUS_M.contains(r) {
        ctx.error_help(
            path,
            span,
            format!(
                "`{}` is a stall: on `{}` it needs `hand_radius_m = {r}` (tether_m {} x {}), more than a hand radius may be",
                pattern.name,
                prop.name,
                prop.tether_m,
                pattern.head_turns.abs()
            ),
            format!("a hand radius is {}: give this prop fewer petals or a shorter tether", RADIUS_M.describe()),
        );
    }
}
