//! Reading show files: TOML text to a validated [`Show`].
//!
//! The text is parsed into a spanned TOML tree (syntax errors are recovered
//! from, so several are reported at once), then every table is read with
//! its keys checked against the ones it accepts. All errors are collected
//! and returned together, each with file, line, column and key path.

pub mod reader;

use std::path::Path;
use std::sync::Arc;

use crate::geom::Vec3;
use toml::de::{DeTable, DeValue};

use crate::diag::{Diagnostic, Diagnostics, Source, did_you_mean};
use crate::model::{
    Along, Cue, End, EventKind, FixedTo, LedDriver, Look, Painting, Pattern, Picture,
    PicturePlacement, Placement, Plane, Prop, PropKind, Section, Show, Steps, Strip, Term,
};
use crate::model::{TempoMap, WireOrder};
use reader::{Ctx, Tbl, describe, join, list};

/// Data clock of a clocked (two-wire) LED line when `driver_clock_hz` is not
/// given, hertz: a conservative figure that long lines usually manage
/// (common practice).
pub const DEFAULT_DRIVER_CLOCK_HZ: f64 = 4.0e6;
/// Clock tolerance when `clock_ppm` is not given: a plain quartz crystal,
/// parts per million (common practice).
pub const DEFAULT_CLOCK_PPM: f64 = 50.0;

/// The largest bar number a show may use.
pub const MAX_BAR: i64 = 100_000;
/// Head radius when a prop leaves out `head_radius_m`, metres: a typical
/// LED poi head is 4 to 6 cm across... (see below).
/// Head radius when a prop leaves out `head_radius_m`, metres: a head 10 cm
/// across, on the generous side for LED poi (common practice).
pub const DEFAULT_HEAD_RADIUS_M: f64 = 0.05;
/// The largest show file read, bytes.
pub const MAX_FILE_BYTES: u64 = 16 << 20;

/// Current of one LED channel at full brightness when a prop leaves out
/// `channel_current_a`, amperes: 20 mA, a common figure for small addressable
/// RGB LEDs (from memory; the LED's data sheet takes precedence).
pub const DEFAULT_CHANNEL_CURRENT_A: f64 = 0.020;
/// Current of a prop with every LED dark when it leaves out `idle_current_a`,
/// amperes: 50 mA for a small controller board (an assumption, not a measurement).
pub const DEFAULT_IDLE_CURRENT_A: f64 = 0.05;

const TOP_KEYS: &[&str] = &["show", "tempo", "prop", "pattern", "section", "cue"];
const SHOW_KEYS: &[&str] = &["title", "frame_rate", "bpm", "beats_per_bar", "start_s"];
const TEMPO_KEYS: &[&str] = &["bar", "bpm"];
const PROP_KEYS: &[&str] = &[
    "kind",
    "tether_m",
    "tail_m",
    "anchor_m",
    "leds",
    "strip",
    "head_mass_kg",
    "head_radius_m",
    "brightness",
    "wire_order",
    // Long-exposure previews:
    "glow_sigma_mm",
    "pwm_hz",
    // LED current and battery (check):
    "channel_current_a",
    "idle_current_a",
    "battery_mah",
    "max_current_a",
    "brightness_limit",
    // Hardware limits:
    "led_driver",
    "driver_clock_hz",
    "leds_per_line",
    "table_memory_kb",
    "clock_ppm",
];
const PATTERN_KEYS: &[&str] = &[
    "plane",
    "beats",
    "hand_radius_m",
    "hand",
    "head_turns",
    "hand_start_deg",
    "head_start_deg",
    "reverse",
];
const TERM_KEYS: &[&str] = &["radius_m", "turns", "start_deg"];
const PLACEMENT_KEYS: &[&str] = &["pattern", "mirror", "delay_beats"];
const STRIP_KEYS: &[&str] = &["leds", "from_m", "to_m", "end"];
const CUE_KEYS: &[&str] = &[
    "prop",
    "bars",
    "at",
    "angle_deg",
    "colours",
    "fade_beats",
    "along",
    "chase_leds_per_beat",
    "chase_width_leds",
    // Painting a picture:
    "image",
    "image_centre_m",
    "image_width_m",
    "image_height_m",
    "image_rotation_deg",
    "image_fixed_to",
];
/// Cue keys that go with stepped colours, not with `image`.
const STEP_KEYS: &[&str] = &[
    "at",
    "angle_deg",
    "colours",
    "fade_beats",
    "along",
    "chase_leds_per_beat",
    "chase_width_leds",
];
/// Cue keys that go with `image` only.
const IMAGE_KEYS: &[&str] = &[
    "image_centre_m",
    "image_width_m",
    "image_height_m",
    "image_rotation_deg",
    "image_fixed_to",
];
const PLANES: &[&str] = &["wall", "wheel", "floor"];
const KINDS: &[&str] = &["poi", "staff"];
const ENDS: &[&str] = &["head", "tail", "both"];
const ALONGS: &[&str] = &["solid", "gradient", "chase"];
const FIXED_TO: &[&str] = &["stage", "hand"];
/// Most LEDs on one prop.
pub const MAX_LEDS: u32 = 4096;
/// Most props in one show (each has four table files open while it compiles).
pub const MAX_PROPS: usize = 256;
/// Most strips on one prop.
pub const MAX_STRIPS: usize = 16;
/// Band width of a chase when `chase_width_leds` is left out, LEDs.
pub const DEFAULT_CHASE_WIDTH_LEDS: f64 = 4.0;
const AT_KINDS: &[&str] = &["tip", "inner", "stall", "beat", "bar", "angle"];

/// Reads and validates the show file at `path`.
pub fn load(path: &Path) -> Result<Show, Diagnostics> {
    let name = path.display().to_string();
    let meta = std::fs::metadata(path)
        .map_err(|e| Diagnostic::error(format!("cannot read `{name}`: {e}")))?;
    if !meta.is_file() {
        return Err(Diagnostic::error(format!("`{name}` is not a file")).into());
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err(Diagnostic::error(format!(
            "`{name}` is {} bytes; show files larger than {MAX_FILE_BYTES} bytes are refused",
            meta.len()
        ))
        .into());
    }
    let bytes =
        std::fs::read(path).map_err(|e| Diagnostic::error(format!("cannot read `{name}`: {e}")))?;
    let text = String::from_utf8(bytes).map_err(|e| {
        Diagnostic::error(format!(
            "`{name}` is not UTF-8 text (byte {})",
            e.utf8_error().valid_up_to()
        ))
    })?;
    parse(&name, text)
}

/// Parses and validates show-file text; `name` is used in messages.
pub fn parse(name: &str, text: String) -> Result<Show, Diagnostics> {
    let src = Arc::new(Source {
        name: name.to_string(),
        text,
    });
    let text = src.text.as_str();
    let (doc, errors) = DeTable::parse_recoverable(text);
    let mut ctx = Ctx {
        src: src.clone(),
        diags: Diagnostics::default(),
    };
    if !errors.is_empty() {
        for e in errors {
            let span = e.span().unwrap_or(0..0);
            let msg = e.message().trim().to_string();
            ctx.diags
                .push(Diagnostic::error(format!("TOML syntax: {msg}")).at(&src, span));
        }
        return Err(ctx.diags);
    }
    let root = Tbl {
        path: "",
        table: doc.get_ref(),
        at: (doc.span().start, doc.span().end),
    };
    let show = build(&mut ctx, root);
    match show {
        Some(show) if !ctx.diags.has_errors() => Ok(show),
        _ => Err(ctx.diags),
    }
}

fn build(ctx: &mut Ctx, root: Tbl<'_, '_>) -> Option<Show> {
    ctx.check_keys(root, TOP_KEYS);
    let header = ctx.table(root, "show", "show");
    let Some(header) = header else {
        if root.get("show").is_none() {
            ctx.error_help(
                "show",
                0..0,
                "missing table `[show]`",
                "add `[show]` with `frame_rate` and `bpm`",
            );
        }
        return None;
    };
    ctx.check_keys(header, SHOW_KEYS);
    let title = ctx
        .string(header, "title", false)
        .map(|s| s.0)
        .unwrap_or_default();
    let frame_rate = ctx.integer_in(header, "frame_rate", true, 1, 100_000);
    let bpm = ctx.number_in(header, "bpm", true, 0.0, true, 1000.0);
    let beats_per_bar = ctx
        .integer_in(header, "beats_per_bar", false, 1, 64)
        .unwrap_or(4) as u32;
    let start_s = ctx
        .number_in(header, "start_s", false, 0.0, false, 3600.0)
        .unwrap_or(0.0);

    let changes = tempo_changes(ctx, root);
    let props = props(ctx, root);
    let patterns = patterns(ctx, root);
    // Names declared in the file, valid or not: a table with an error is
    // still known by name, so that uses of it raise no second error.
    let declared = |key: &str| -> Vec<String> {
        match root.get(key).map(|v| v.get_ref()) {
            Some(DeValue::Table(t)) => t.iter().map(|(k, _)| k.get_ref().to_string()).collect(),
            _ => Vec::new(),
        }
    };
    let names = Declared {
        props: declared("prop"),
        patterns: declared("pattern"),
    };
    let sections = sections(ctx, root, &props, &patterns, &names);
    let cues = cues(ctx, root, &props, &names);

    let tempo = TempoMap::new(start_s, beats_per_bar, bpm?, &changes);
    let show = Show {
        title,
        frame_rate_hz: frame_rate? as u32,
        tempo,
        props,
        patterns,
        sections,
        cues,
        source: ctx.src.clone(),
    };
    check_work(ctx, &show);
    Some(show)
}

/// The most turns of the fastest relative rotation, over all props and
/// sections, that the event search is asked to resolve.
pub const MAX_RELATIVE_TURNS: f64 = 2.0e6;

/// Refuses a show whose motion is too long or too fast to search for
/// events in reasonable time (a sane show has a few thousand turns).
fn check_work(ctx: &mut Ctx, show: &Show) {
    let bpb = f64::from(show.tempo.beats_per_bar());
    let mut turns = 0.0;
    for sec in &show.sections {
        let beats = f64::from(sec.last_bar - sec.first_bar + 1) * bpb;
        for pl in sec.placements.iter().flatten() {
            let pat = &show.patterns[pl.pattern];
            let rates: Vec<f64> = pat
                .hand
                .iter()
                .map(|t| t.turns)
                .chain([pat.head_turns])
                .collect();
            let finest = rates
                .iter()
                .flat_map(|a| rates.iter().map(move |b| (a - b).abs().max(a.abs())))
                .fold(1.0, f64::max);
            turns += beats / pat.beats * finest;
        }
    }
    if turns > MAX_RELATIVE_TURNS {
        ctx.diags.push(
            Diagnostic::error(format!(
                "the show asks for {turns:.0} turns of spin in all, more than the {MAX_RELATIVE_TURNS:.0} glowscore \
                 simulates (a long show is a few thousand)"
            ))
            .key("section")
            .at(&ctx.src, 0..0)
            .help("check the sections' bars and the patterns' `beats` and turns"),
        );
    }
}

/// The prop and pattern names declared in the file.
struct Declared {
    props: Vec<String>,
    patterns: Vec<String>,
}

/// The entries of an array of tables at `key` (`[[section]]`), with paths.
fn table_array<'a, 'i>(
    ctx: &mut Ctx,
    root: Tbl<'a, 'i>,
    key: &str,
) -> Vec<(String, &'a DeTable<'i>, std::ops::Range<usize>)> {
    let Some((arr, _)) = ctx.array(root, key, false) else {
        return Vec::new();
    };
    tables_in(ctx, key, arr, &format!("a table (`[[{key}]]`)"))
}

/// The tables of the array `arr` at key path `path`, each with its path
/// (`path[i]`); any other entry is an error saying `expected {what}`.
fn tables_in<'a, 'i>(
    ctx: &mut Ctx,
    path: &str,
    arr: &'a toml::de::DeArray<'i>,
    what: &str,
) -> Vec<(String, &'a DeTable<'i>, std::ops::Range<usize>)> {
    let mut out = Vec::new();
    for (i, v) in arr.iter().enumerate() {
        let p = format!("{path}[{i}]");
        match v.get_ref() {
            DeValue::Table(t) => out.push((p, t, v.span())),
            other => {
                ctx.error(
                    &p,
                    v.span(),
                    format!("expected {what}, got {}", describe(other)),
                );
            }
        }
    }
    out
}

/// The entries of a table of named tables at `key` (`[prop.NAME]`).
fn named_tables<'a, 'i>(
    ctx: &mut Ctx,
    root: Tbl<'a, 'i>,
    key: &'a str,
) -> Vec<(String, String, &'a DeTable<'i>, std::ops::Range<usize>)> {
    let Some(outer) = ctx.table(root, key, key) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for (k, v) in outer.table.iter() {
        let name = k.get_ref().to_string();
        let path = join(key, &name);
        match v.get_ref() {
            DeValue::Table(t) => out.push((name, path, t, v.span())),
            other => {
                ctx.error_help(
                    &path,
                    v.span(),
                    format!("expected a table, got {}", describe(other)),
                    format!("write `[{key}.NAME]` and its keys on the lines below"),
                );
            }
        }
    }
    out
}

fn tempo_changes(ctx: &mut Ctx, root: Tbl<'_, '_>) -> Vec<(u32, f64)> {
    let mut changes: Vec<(u32, f64, std::ops::Range<usize>)> = Vec::new();
    for (path, table, span) in table_array(ctx, root, "tempo") {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        ctx.check_keys(t, TEMPO_KEYS);
        let bar = ctx.integer_in(t, "bar", true, 1, MAX_BAR);
        let bpm = ctx.number_in(t, "bpm", true, 0.0, true, 1000.0);
        if let (Some(bar), Some(bpm)) = (bar, bpm) {
            if let Some(prev) = changes.iter().find(|c| c.0 == bar as u32) {
                let (line, _) = ctx.src.line_col(prev.2.start);
                ctx.error(
                    &join(&path, "bar"),
                    span.clone(),
                    format!("a tempo change at bar {bar} is already given on line {line}"),
                );
            }
            changes.push((bar as u32, bpm, span));
        }
    }
    changes.sort_by_key(|c| c.0);
    changes.into_iter().map(|(b, bpm, _)| (b, bpm)).collect()
}

fn props(ctx: &mut Ctx, root: Tbl<'_, '_>) -> Vec<Prop> {
    let mut out = Vec::new();
    let tables = named_tables(ctx, root, "prop");
    if tables.len() > MAX_PROPS {
        let span = tables[MAX_PROPS].3.clone();
        ctx.error_help(
            "prop",
            span,
            format!(
                "the show has {} props, more than the {MAX_PROPS} glowscore compiles",
                tables.len()
            ),
            "split the show into several files",
        );
        return out;
    }
    for (name, path, table, span) in tables {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        ctx.check_keys(t, PROP_KEYS);
        check_name(ctx, &path, &name, span.clone());
        let kind = match ctx.string(t, "kind", false) {
            None => Some(PropKind::Poi),
            Some((k, _)) if k == "poi" => Some(PropKind::Poi),
            Some((k, _)) if k == "staff" => Some(PropKind::Staff),
            Some((k, sp)) => {
                unknown_name(ctx, &t.key_path("kind"), sp, "prop kind", &k, KINDS);
                None
            }
        };
        let tether = ctx.number_in(t, "tether_m", true, 0.0, true, 10.0);
        let tail = match (kind, t.get("tail_m")) {
            (Some(PropKind::Poi), Some(v)) => {
                ctx.error_help(
                    &t.key_path("tail_m"),
                    v.span(),
                    "`tail_m` is for staffs: a poi has no tail end",
                    "write `kind = \"staff\"`, or leave `tail_m` out",
                );
                Some(0.0)
            }
            (Some(PropKind::Staff), Some(_)) => ctx.number_in(t, "tail_m", true, 0.0, true, 10.0),
            (Some(PropKind::Staff), None) => tether,
            _ => Some(0.0),
        };
        let anchor = vector3(ctx, t, "anchor_m");
        let (leds, strips) = match kind {
            Some(kind) => leds_and_strips(ctx, t, kind, tether.zip(tail)),
            None => (None, None),
        };
        let mass = ctx
            .number_in(t, "head_mass_kg", false, 0.0, true, 20.0)
            .unwrap_or(0.15);
        let head_radius = ctx
            .number_in(t, "head_radius_m", false, 0.0, true, 1.0)
            .unwrap_or(DEFAULT_HEAD_RADIUS_M);
        let brightness = ctx
            .number_in(t, "brightness", false, 0.0, false, 1.0)
            .unwrap_or(1.0);
        let wire_order = match ctx.string(t, "wire_order", false) {
            None => Some(WireOrder::Rgb),
            Some((w, sp)) => {
                let order = WireOrder::from_name(&w);
                if order.is_none() {
                    unknown_name(
                        ctx,
                        &t.key_path("wire_order"),
                        sp,
                        "wire order",
                        &w,
                        WireOrder::names(),
                    );
                }
                order
            }
        };
        // Long-exposure previews: glow size and the LED driver's PWM.
        let glow_sigma_mm = ctx.number_in(t, "glow_sigma_mm", false, 0.0, true, 500.0);
        let pwm_hz = ctx
            .number_in(t, "pwm_hz", false, 0.0, false, 1_000_000.0)
            .unwrap_or(0.0);
        // LED current and battery (check).
        let channel_current_a = ctx
            .number_in(t, "channel_current_a", false, 0.0, false, 10.0)
            .unwrap_or(DEFAULT_CHANNEL_CURRENT_A);
        let idle_current_a = ctx
            .number_in(t, "idle_current_a", false, 0.0, false, 100.0)
            .unwrap_or(DEFAULT_IDLE_CURRENT_A);
        let battery_mah = ctx.number_in(t, "battery_mah", false, 0.0, true, 1e7);
        let max_current_a = ctx.number_in(t, "max_current_a", false, 0.0, true, 1000.0);
        let brightness_limit = ctx.boolean(t, "brightness_limit").unwrap_or(false);
        // Hardware limits: driver family, line length, table memory, clock.
        let clock_hz = ctx.number_in(t, "driver_clock_hz", false, 0.0, true, 1e9);
        let led_driver = match ctx.string(t, "led_driver", false) {
            None => Some(LedDriver::OneWire),
            Some((d, _)) if d == "one_wire" => Some(LedDriver::OneWire),
            Some((d, _)) if d == "clocked" => Some(LedDriver::Clocked {
                clock_hz: clock_hz.unwrap_or(DEFAULT_DRIVER_CLOCK_HZ),
            }),
            Some((d, sp)) => {
                unknown_name(
                    ctx,
                    &t.key_path("led_driver"),
                    sp,
                    "LED driver",
                    &d,
                    &["one_wire", "clocked"],
                );
                None
            }
        };
        let leds_per_line = ctx
            .integer_in(t, "leds_per_line", false, 1, i64::from(MAX_LEDS))
            .map_or(leds.unwrap_or(1), |n| n as u32);
        let table_memory_kb = ctx.number_in(t, "table_memory_kb", false, 0.0, true, 1e9);
        let clock_ppm = ctx
            .number_in(t, "clock_ppm", false, 0.0, false, 1e6)
            .unwrap_or(DEFAULT_CLOCK_PPM);
        if let (
            Some(kind),
            Some(tether_m),
            Some(tail_m),
            Some(anchor_m),
            Some(leds),
            Some(strips),
            Some(wire_order),
            Some(led_driver),
        ) = (
            kind, tether, tail, anchor, leds, strips, wire_order, led_driver,
        ) {
            out.push(Prop {
                offset: span.start,
                name,
                kind,
                tether_m,
                tail_m,
                anchor_m,
                leds,
                strips,
                head_mass_kg: mass,
                head_radius_m: head_radius,
                brightness,
                wire_order,
                glow_sigma_mm,
                pwm_hz,
                channel_current_a,
                idle_current_a,
                battery_mah,
                max_current_a,
                brightness_limit,
                led_driver,
                leds_per_line,
                table_memory_kb,
                clock_ppm,
            });
        }
    }
    out
}

/// The LEDs of a prop: `leds` at the head (and, on a staff, at each end), or
/// the strips of `strip`, a table or an array of tables. Returns the number
/// of LEDs and the strips. `lengths` are the head and tail halves, metres
/// (`None` when they are in error: the strips are then read, not placed).
fn leds_and_strips(
    ctx: &mut Ctx,
    t: Tbl<'_, '_>,
    kind: PropKind,
    lengths: Option<(f64, f64)>,
) -> (Option<u32>, Option<Vec<Strip>>) {
    let (tether_m, tail_m) = lengths.unwrap_or((f64::INFINITY, f64::INFINITY));
    let Some(v) = t.get("strip") else {
        let most = match kind {
            PropKind::Poi => MAX_LEDS,
            PropKind::Staff => MAX_LEDS / 2,
        };
        let n = ctx.integer_in(t, "leds", false, 1, i64::from(most));
        let n = match (n, t.get("leds")) {
            (Some(n), _) => n as u32,
            (None, Some(_)) => return (None, None),
            (None, None) => 1,
        };
        if lengths.is_none() {
            return (None, None);
        }
        let at = |end: End, d: f64| Strip {
            end,
            leds: n,
            from_m: d,
            to_m: d,
        };
        return match kind {
            PropKind::Poi => (Some(n), Some(vec![at(End::Head, tether_m)])),
            PropKind::Staff => (
                Some(2 * n),
                Some(vec![at(End::Head, tether_m), at(End::Tail, tail_m)]),
            ),
        };
    };
    refuse_keys(
        ctx,
        t,
        &["leds"],
        |_| "give either `leds` or `strip`, not both".into(),
        "with a strip, the LEDs are counted by its `leds`",
    );
    let path = t.key_path("strip");
    let tables: Vec<(String, &DeTable<'_>, std::ops::Range<usize>)> = match v.get_ref() {
        DeValue::Table(tb) => vec![(path.clone(), tb, v.span())],
        DeValue::Array(arr) if !arr.is_empty() && arr.len() <= MAX_STRIPS => {
            tables_in(ctx, &path, arr, "a table")
        }
        other => {
            ctx.error_help(
                &path,
                v.span(),
                format!(
                    "expected a table or an array of 1 to {MAX_STRIPS} tables, got {}",
                    describe(other)
                ),
                "write `strip = { leds = 36, from_m = 0.12, to_m = 0.58 }`",
            );
            return (None, None);
        }
    };
    let mut strips = Vec::new();
    let mut ok = true;
    for (p, tb, span) in &tables {
        let st = Tbl {
            path: p,
            table: tb,
            at: (span.start, span.end),
        };
        ctx.check_keys(st, STRIP_KEYS);
        let leds = ctx.integer_in(st, "leds", true, 1, i64::from(MAX_LEDS));
        let from = ctx.number_in(st, "from_m", true, 0.0, false, 10.0);
        let to = ctx.number_in(st, "to_m", true, 0.0, false, 10.0);
        let ends: Option<Vec<End>> = match (ctx.string(st, "end", false), kind) {
            (None, PropKind::Poi) => Some(vec![End::Head]),
            (None, PropKind::Staff) => Some(vec![End::Head, End::Tail]),
            (Some((e, _)), _) if e == "head" => Some(vec![End::Head]),
            (Some((e, _)), PropKind::Staff) if e == "tail" => Some(vec![End::Tail]),
            (Some((e, _)), PropKind::Staff) if e == "both" => Some(vec![End::Head, End::Tail]),
            (Some((e, sp)), PropKind::Poi) if ENDS.contains(&e.as_str()) => {
                ctx.error_help(
                    &st.key_path("end"),
                    sp,
                    format!("a poi's strip runs along its tether to the head: `end = \"{e}\"` is for staffs"),
                    "leave `end` out, or write `end = \"head\"`",
                );
                None
            }
            (Some((e, sp)), _) => {
                unknown_name(ctx, &st.key_path("end"), sp, "strip end", &e, ENDS);
                None
            }
        };
        let (Some(leds), Some(from), Some(to), Some(ends)) = (leds, from, to, ends) else {
            ok = false;
            continue;
        };
        if to < from {
            ctx.error_help(
                &st.key_path("to_m"),
                tb.get("to_m").map_or(span.clone(), |x| x.span()),
                format!("the strip ends at {to} m, nearer the grip than its start at {from} m"),
                "LED 0 is the one nearest the grip: `from_m` is its distance, `to_m` the far LED's",
            );
            ok = false;
            continue;
        }
        for end in ends {
            let (length, what) = match end {
                End::Head => (tether_m, "tether_m"),
                End::Tail => (tail_m, "tail_m"),
            };
            if to > length + 1e-9 {
                ctx.error_help(
                    &st.key_path("to_m"),
                    tb.get("to_m").map_or(span.clone(), |x| x.span()),
                    format!("the strip reaches {to} m from the grip, beyond the prop's end at {length} m"),
                    format!("`to_m` is at most `{what}`"),
                );
                ok = false;
            }
            strips.push(Strip {
                end,
                leds: leds as u32,
                from_m: from,
                to_m: to,
            });
        }
    }
    let total: u64 = strips.iter().map(|s| u64::from(s.leds)).sum();
    if total > u64::from(MAX_LEDS) {
        ctx.error(
            &path,
            v.span(),
            format!(
                "the strips hold {total} LEDs in all, more than the {MAX_LEDS} a prop may have"
            ),
        );
        ok = false;
    }
    if !ok || strips.is_empty() {
        return (None, None);
    }
    (Some(total as u32), Some(strips))
}

/// Names become file names: keep them to letters, digits, `_` and `-`.
fn check_name(ctx: &mut Ctx, path: &str, name: &str, span: std::ops::Range<usize>) {
    let ok = !name.is_empty()
        && name.len() <= 64
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
        && !name.starts_with('-');
    if !ok {
        ctx.error_help(
            path,
            span,
            format!("the name `{name}` cannot be used"),
            "names are 1 to 64 ASCII letters, digits, `_` or `-`, not starting with `-` (they become file names)",
        );
    }
}

fn vector3(ctx: &mut Ctx, t: Tbl<'_, '_>, key: &str) -> Option<Vec3> {
    let (arr, span) = ctx.array(t, key, true)?;
    let nums: Vec<Option<f64>> = arr.iter().map(|v| reader::as_number(v.get_ref())).collect();
    match nums.as_slice() {
        [Some(x), Some(y), Some(z)]
            if [x, y, z].iter().all(|v| v.is_finite() && v.abs() <= 1000.0) =>
        {
            Some(Vec3::new(*x, *y, *z))
        }
        _ => {
            ctx.error_help(
                &t.key_path(key),
                span,
                "expected three numbers [x, y, z] in metres (each within 1000 m)",
                "x to the audience's right, y up, z toward the audience",
            );
            None
        }
    }
}

fn unknown_name(
    ctx: &mut Ctx,
    path: &str,
    span: std::ops::Range<usize>,
    what: &str,
    value: &str,
    known: &[&str],
) {
    let help = match did_you_mean(value, known.iter().copied()) {
        Some(s) => format!("did you mean `{s}`?"),
        None if known.is_empty() => format!("no {what} is defined"),
        None => format!("expected one of {}", list(known)),
    };
    ctx.error_help(path, span, format!("unknown {what} `{value}`"), help);
}

fn patterns(ctx: &mut Ctx, root: Tbl<'_, '_>) -> Vec<Pattern> {
    let mut out = Vec::new();
    for (name, path, table, span) in named_tables(ctx, root, "pattern") {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        ctx.check_keys(t, PATTERN_KEYS);
        check_name(ctx, &path, &name, span.clone());
        let plane = match ctx.string(t, "plane", true) {
            Some((p, sp)) => match p.as_str() {
                "wall" => Some(Plane::Wall),
                "wheel" => Some(Plane::Wheel),
                "floor" => Some(Plane::Floor),
                _ => {
                    unknown_name(ctx, &t.key_path("plane"), sp, "plane", &p, PLANES);
                    None
                }
            },
            None => None,
        };
        let beats = ctx.number_in(t, "beats", true, 0.0, true, 10_000.0);
        let hand_start = ctx
            .number_in(t, "hand_start_deg", false, -36_000.0, false, 36_000.0)
            .unwrap_or(0.0);
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
            (Some(_), None) => ctx
                .number_in(t, "hand_radius_m", true, 0.0, false, 10.0)
                .map(|r| {
                    vec![Term {
                        radius_m: r,
                        turns: 1.0,
                        start_deg: hand_start,
                    }]
                }),
            (None, Some(_)) => {
                refuse_keys(
                    ctx,
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
        let head_turns = ctx.number_in(t, "head_turns", true, -64.0, false, 64.0);
        let head_start = ctx
            .number_in(t, "head_start_deg", false, -36_000.0, false, 36_000.0)
            .unwrap_or(0.0);
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
        let radius = ctx.number_in(term, "radius_m", true, 0.0, false, 10.0);
        let turns = ctx.number_in(term, "turns", true, -64.0, false, 64.0);
        let start = ctx
            .number_in(term, "start_deg", false, -36_000.0, false, 36_000.0)
            .unwrap_or(0.0);
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

fn sections(
    ctx: &mut Ctx,
    root: Tbl<'_, '_>,
    props: &[Prop],
    patterns: &[Pattern],
    names: &Declared,
) -> Vec<Section> {
    let prop_names: Vec<&str> = names.props.iter().map(String::as_str).collect();
    let pattern_names: Vec<&str> = patterns.iter().map(|p| p.name.as_str()).collect();
    let mut keys = vec!["bars"];
    keys.extend(prop_names.iter().copied());
    let mut out: Vec<(Section, std::ops::Range<usize>)> = Vec::new();
    for (path, table, span) in table_array(ctx, root, "section") {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        let bars = ctx.bar_range(t, "bars", MAX_BAR);
        let mut placements = vec![None; props.len()];
        for (k, v) in table.iter() {
            let key: &str = k.get_ref();
            if key == "bars" {
                continue;
            }
            let kpath = join(&path, key);
            let Some(prop) = props.iter().position(|p| p.name == key) else {
                if names.props.iter().any(|n| n == key) {
                    // The prop has errors of its own; still check the pattern.
                    placement(ctx, &kpath, v, &pattern_names, &names.patterns);
                    continue;
                }
                let help = match did_you_mean(key, keys.iter().copied()) {
                    Some(s) => format!("did you mean `{s}`?"),
                    None => format!("a section takes `bars` and prop names: {}", list(&keys)),
                };
                ctx.error_help(&kpath, k.span(), format!("`{key}` is not a prop"), help);
                continue;
            };
            placements[prop] = placement(ctx, &kpath, v, &pattern_names, &names.patterns);
        }
        if let Some((first_bar, last_bar, bspan)) = bars {
            out.push((
                Section {
                    offset: span.start,
                    first_bar,
                    last_bar,
                    placements,
                },
                bspan,
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

fn placement(
    ctx: &mut Ctx,
    path: &str,
    v: &reader::Val<'_>,
    patterns: &[&str],
    declared: &[String],
) -> Option<Placement> {
    let find = |ctx: &mut Ctx, name: &str, span: std::ops::Range<usize>| {
        let i = patterns.iter().position(|p| *p == name);
        if i.is_none() && !declared.iter().any(|d| d == name) {
            let known: Vec<&str> = declared.iter().map(String::as_str).collect();
            unknown_name(ctx, path, span, "pattern", name, &known);
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
            let delay = ctx
                .number_in(t, "delay_beats", false, -10_000.0, false, 10_000.0)
                .unwrap_or(0.0);
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

fn cues(ctx: &mut Ctx, root: Tbl<'_, '_>, props: &[Prop], names: &Declared) -> Vec<Cue> {
    let prop_names: Vec<&str> = names.props.iter().map(String::as_str).collect();
    let mut out = Vec::new();
    let mut pictures = Pictures::new();
    for (path, table, span) in table_array(ctx, root, "cue") {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        ctx.check_keys(t, CUE_KEYS);
        let prop = ctx.string(t, "prop", true).and_then(|(name, sp)| {
            let i = props.iter().position(|p| p.name == name);
            if i.is_none() && !names.props.contains(&name) {
                unknown_name(ctx, &t.key_path("prop"), sp, "prop", &name, &prop_names);
            }
            i
        });
        let bars = ctx.bar_range(t, "bars", MAX_BAR);
        let look = if t.get("image").is_some() {
            painting(ctx, t, &mut pictures).map(Look::Image)
        } else {
            steps(ctx, t).map(Look::Steps)
        };
        if let (Some(prop), Some((first_bar, last_bar, _)), Some(look)) = (prop, bars, look) {
            out.push(Cue {
                offset: span.start,
                prop,
                first_bar,
                last_bar,
                look,
            });
        }
    }
    out
}

/// An error at each of `keys` that `t` holds, as they do not go with what
/// else it holds: `message(key)`, with `help`.
fn refuse_keys(
    ctx: &mut Ctx,
    t: Tbl<'_, '_>,
    keys: &[&str],
    message: impl Fn(&str) -> String,
    help: &str,
) {
    for key in keys {
        if let Some(v) = t.get(key) {
            ctx.error_help(&t.key_path(key), v.span(), message(key), help);
        }
    }
}

/// The stepped colours of a cue without `image`.
fn steps(ctx: &mut Ctx, t: Tbl<'_, '_>) -> Option<Steps> {
    refuse_keys(
        ctx,
        t,
        IMAGE_KEYS,
        |key| format!("`{key}` goes with `image`"),
        "add `image = \"picture.png\"`, or leave the key out",
    );
    let at = ctx.string(t, "at", true).and_then(|(name, sp)| {
        let k = EventKind::from_name(&name);
        if k.is_none() {
            unknown_name(ctx, &t.key_path("at"), sp, "event kind", &name, AT_KINDS);
        }
        k
    });
    let angle = ctx
        .number_in(t, "angle_deg", false, -36_000.0, false, 36_000.0)
        .map(|a| a.rem_euclid(360.0));
    match (at, t.get("angle_deg")) {
        (Some(EventKind::Angle), None) => {
            ctx.error_help(
                &t.key_path("angle_deg"),
                t.span(),
                "`at = \"angle\"` needs `angle_deg`",
                "clock angle in degrees: 0 is 12 o'clock, 90 is 3 o'clock",
            );
        }
        (Some(k), Some(v)) if k != EventKind::Angle => {
            ctx.error(
                &t.key_path("angle_deg"),
                v.span(),
                format!(
                    "`angle_deg` only goes with `at = \"angle\"`, not `{}`",
                    k.name()
                ),
            );
        }
        _ => {}
    }
    let colours = colours(ctx, t);
    let fade = ctx
        .number_in(t, "fade_beats", false, 0.0, false, 10_000.0)
        .unwrap_or(0.0);
    let along = along(ctx, t);
    Some(Steps {
        at: at?,
        angle_deg: angle,
        colours: colours?,
        fade_beats: fade,
        along: along?,
    })
}

/// `along` and the chase keys.
fn along(ctx: &mut Ctx, t: Tbl<'_, '_>) -> Option<Along> {
    let kind = match ctx.string(t, "along", false) {
        None => Some("solid".to_string()),
        Some((a, _)) if ALONGS.contains(&a.as_str()) => Some(a),
        Some((a, sp)) => {
            unknown_name(ctx, &t.key_path("along"), sp, "spread", &a, ALONGS);
            None
        }
    };
    if kind.as_deref() != Some("chase") {
        refuse_keys(
            ctx,
            t,
            &["chase_leds_per_beat", "chase_width_leds"],
            |key| format!("`{key}` goes with `along = \"chase\"`"),
            "add `along = \"chase\"`, or leave the key out",
        );
    }
    match kind?.as_str() {
        "solid" => Some(Along::Solid),
        "gradient" => Some(Along::Gradient),
        _ => {
            let speed = ctx.number_in(t, "chase_leds_per_beat", true, -10_000.0, false, 10_000.0);
            let width = ctx
                .number_in(t, "chase_width_leds", false, 0.0, true, f64::from(MAX_LEDS))
                .or(t
                    .get("chase_width_leds")
                    .is_none()
                    .then_some(DEFAULT_CHASE_WIDTH_LEDS));
            Some(Along::Chase {
                leds_per_beat: speed?,
                width_leds: width?,
            })
        }
    }
}

/// The pictures the cues have read, by path: each file is read once, and
/// the cues that name it share it.
type Pictures = std::collections::HashMap<std::path::PathBuf, Result<Arc<Picture>, String>>;

/// The picture of a cue with `image`, read from a file beside the show (or
/// found in `pictures`, when an earlier cue read it).
fn painting(ctx: &mut Ctx, t: Tbl<'_, '_>, pictures: &mut Pictures) -> Option<Painting> {
    refuse_keys(
        ctx,
        t,
        STEP_KEYS,
        |key| {
            format!(
                "`{key}` does not go with `image`: a painting takes its colours from the picture"
            )
        },
        "paint the picture in one cue and step colours in another",
    );
    let (file, file_span) = ctx.string(t, "image", true)?;
    let width = ctx.number_in(t, "image_width_m", true, 0.0, true, 100.0);
    let height = ctx.number_in(t, "image_height_m", false, 0.0, true, 100.0);
    let rotation = ctx
        .number_in(t, "image_rotation_deg", false, -36_000.0, false, 36_000.0)
        .unwrap_or(0.0);
    let centre = match t.get("image_centre_m") {
        None => Some([0.0, 0.0]),
        Some(v) => {
            let nums: Option<Vec<f64>> = match v.get_ref() {
                DeValue::Array(a) => a.iter().map(|x| reader::as_number(x.get_ref())).collect(),
                _ => None,
            };
            match nums.as_deref() {
                Some(&[r, u])
                    if r.is_finite() && u.is_finite() && r.abs() <= 100.0 && u.abs() <= 100.0 =>
                {
                    Some([r, u])
                }
                _ => {
                    ctx.error_help(
                        &t.key_path("image_centre_m"),
                        v.span(),
                        "expected two numbers [right, up] in metres (each within 100 m)",
                        "the picture's centre in the plane, measured from the prop's anchor",
                    );
                    None
                }
            }
        }
    };
    let fixed_to = match ctx.string(t, "image_fixed_to", false) {
        None => Some(FixedTo::Stage),
        Some((f, _)) if f == "stage" => Some(FixedTo::Stage),
        Some((f, _)) if f == "hand" => Some(FixedTo::Hand),
        Some((f, sp)) => {
            unknown_name(
                ctx,
                &t.key_path("image_fixed_to"),
                sp,
                "picture mount",
                &f,
                FIXED_TO,
            );
            None
        }
    };
    let base = Path::new(&ctx.src.name)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    let path = base.join(&file);
    let loaded = pictures
        .entry(path)
        .or_insert_with_key(|path| Picture::load(path).map(Arc::new));
    let picture = match loaded {
        Ok(p) => Some(Arc::clone(p)),
        Err(e) => {
            ctx.error_help(
                &t.key_path("image"),
                file_span,
                format!("`{file}`: {e}"),
                "the path is read from the show file's folder; PNG and JPEG are read",
            );
            None
        }
    };
    let picture = picture?;
    let width_m = width?;
    let height_m =
        height.unwrap_or(width_m * f64::from(picture.height()) / f64::from(picture.width()));
    Some(Painting {
        file,
        picture,
        placement: PicturePlacement {
            centre_m: centre?,
            width_m,
            height_m,
            rotation_deg: rotation,
            fixed_to: fixed_to?,
        },
    })
}

fn colours(ctx: &mut Ctx, t: Tbl<'_, '_>) -> Option<Vec<[u8; 3]>> {
    let (arr, span) = ctx.array(t, "colours", true)?;
    if arr.is_empty() {
        ctx.error(&t.key_path("colours"), span, "needs at least one colour");
        return None;
    }
    let mut out = Vec::new();
    for (i, v) in arr.iter().enumerate() {
        let path = format!("{}[{i}]", t.key_path("colours"));
        let DeValue::String(s) = v.get_ref() else {
            ctx.error(
                &path,
                v.span(),
                format!("expected a colour string, got {}", describe(v.get_ref())),
            );
            continue;
        };
        match crate::colour::parse_colour(s) {
            Ok(c) => out.push([c.red, c.green, c.blue]),
            Err(e) => {
                // The message names the accepted forms and any close match.
                ctx.error(&path, v.span(), e.to_string());
            }
        }
    }
    (out.len() == arr.len()).then_some(out)
}
