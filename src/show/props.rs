//! `[prop.NAME]`: the props, their LEDs and strips, and their names (which
//! become file names and C identifiers).

use std::ops::Range;

use toml::de::{DeTable, DeValue};

use super::keys::*;
use super::reader::{Ctx, Tbl, describe, short};
use super::{
    DEFAULT_CHANNEL_CURRENT_A, DEFAULT_CLOCK_PPM, DEFAULT_DRIVER_CLOCK_HZ, DEFAULT_HEAD_RADIUS_M,
    DEFAULT_IDLE_CURRENT_A, MAX_LEDS, MAX_PROPS, MAX_STRIPS, named_tables, tables_in,
};
use crate::diag::Diagnostic;
use crate::geom::Vec3;
use crate::model::{End, LedDriver, Prop, PropKind, Strip, WireOrder, c_identifier};

/// The props of `[prop.NAME]`, in file order.
pub(super) fn props(ctx: &mut Ctx, root: Tbl<'_, '_>) -> Vec<Prop> {
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
    let mut seen: Vec<(String, Range<usize>)> = Vec::new();
    for (name, path, table, span) in tables {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        ctx.check_keys(t, PROP_KEYS);
        check_prop_name(ctx, &path, &name, span.clone());
        seen.push((name.clone(), span.clone()));
        let kind = ctx.choice(t, "kind", "prop kind", KINDS, Some(PropKind::Poi));
        let tether = ctx.required_number(t, "tether_m", LENGTH_M);
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
            (Some(PropKind::Staff), Some(_)) => ctx.required_number(t, "tail_m", LENGTH_M),
            (Some(PropKind::Staff), None) => tether,
            _ => Some(0.0),
        };
        let anchor = vector3(ctx, t, "anchor_m");
        let (leds, strips) = match kind {
            Some(kind) => leds_and_strips(ctx, t, kind, tether.zip(tail)),
            None => (None, None),
        };
        let mass = ctx
            .number_in(t, "head_mass_kg", HEAD_MASS_KG)
            .unwrap_or(0.15);
        let head_radius = ctx
            .number_in(t, "head_radius_m", HEAD_RADIUS_M)
            .unwrap_or(DEFAULT_HEAD_RADIUS_M);
        let brightness = ctx.number_in(t, "brightness", FRACTION).unwrap_or(1.0);
        let orders: Vec<(&str, WireOrder)> = WireOrder::names()
            .iter()
            .filter_map(|&n| Some((n, WireOrder::from_name(n)?)))
            .collect();
        let wire_order = ctx.choice(t, "wire_order", "wire order", &orders, Some(WireOrder::Rgb));
        // Long-exposure previews: glow size and the LED driver's PWM.
        let glow_sigma_mm = ctx.number_in(t, "glow_sigma_mm", GLOW_SIGMA_MM);
        let pwm_hz = ctx.number_in(t, "pwm_hz", PWM_HZ).unwrap_or(0.0);
        // LED current and battery (check).
        let channel_current_a = ctx
            .number_in(t, "channel_current_a", CHANNEL_CURRENT_A)
            .unwrap_or(DEFAULT_CHANNEL_CURRENT_A);
        let idle_current_a = ctx
            .number_in(t, "idle_current_a", IDLE_CURRENT_A)
            .unwrap_or(DEFAULT_IDLE_CURRENT_A);
        let battery_mah = ctx.number_in(t, "battery_mah", BATTERY_MAH);
        let max_current_a = ctx.number_in(t, "max_current_a", MAX_CURRENT_A);
        let brightness_limit = ctx.boolean(t, "brightness_limit").unwrap_or(false);
        // Hardware limits: driver family, line length, table memory, clock.
        let clock_hz = ctx.number_in(t, "driver_clock_hz", DRIVER_CLOCK_HZ);
        let led_driver = led_driver(ctx, t).map(|d| match d {
            LedDriver::DataClock { .. } => LedDriver::DataClock {
                clock_hz: clock_hz.unwrap_or(DEFAULT_DRIVER_CLOCK_HZ),
            },
            d => d,
        });
        let leds_per_line = ctx
            .integer_in(t, "leds_per_line", 1..=i64::from(MAX_LEDS))
            .map_or(leds.unwrap_or(1), |n| n as u32);
        let table_memory_kb = ctx.number_in(t, "table_memory_kb", TABLE_MEMORY_KB);
        let clock_ppm = ctx
            .number_in(t, "clock_ppm", CLOCK_PPM)
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
    refuse_clashes(ctx, &seen);
    out
}

/// `led_driver`, reading an old name with a deprecation warning.
fn led_driver(ctx: &mut Ctx, t: Tbl<'_, '_>) -> Option<LedDriver> {
    if let Some(v) = t.get("led_driver")
        && let DeValue::String(s) = v.get_ref()
        && let Some(&(old, new)) = OLD_LED_DRIVERS.iter().find(|o| o.0 == s.as_ref())
    {
        let d = Diagnostic::warning(format!(
            "`led_driver = \"{old}\"` is an old name, read as `\"{new}\"`"
        ))
        .key(t.key_path("led_driver"))
        .at(&ctx.src, v.span())
        .help(format!("write `led_driver = \"{new}\"`"));
        ctx.diags.push(d);
        return LED_DRIVERS.iter().find(|c| c.0 == new).map(|c| c.1);
    }
    ctx.choice(
        t,
        "led_driver",
        "LED driver",
        LED_DRIVERS,
        Some(LedDriver::DataOnly),
    )
}

/// Two props whose names would be one file on a case-insensitive file
/// system (`Left` and `left`), or one C identifier in the header
/// (`a-b` and `a_b`): an error at the later one, naming both.
fn refuse_clashes(ctx: &mut Ctx, names: &[(String, Range<usize>)]) {
    let mut by_ident: std::collections::HashMap<String, usize> = std::collections::HashMap::new();
    for (i, (name, span)) in names.iter().enumerate() {
        let ident = c_identifier(name);
        let Some(&first) = by_ident.get(&ident) else {
            by_ident.insert(ident, i);
            continue;
        };
        let other = &names[first].0;
        let (line, _) = ctx.src.line_col(names[first].1.start);
        let how = if other.eq_ignore_ascii_case(name) {
            "as file names on a file system that ignores case".to_string()
        } else {
            format!("as the C identifier `{ident}`")
        };
        ctx.error_help(
            &format!("prop.{name}"),
            span.clone(),
            format!("the props `{other}` (line {line}) and `{name}` would be the same {how}"),
            "rename one of them",
        );
    }
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
        let n = ctx.integer_in(t, "leds", 1..=i64::from(most));
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
    ctx.refuse_keys(
        t,
        &["leds"],
        |_| "give either `leds` or `strip`, not both".into(),
        "with a strip, the LEDs are counted by its `leds`",
    );
    let path = t.key_path("strip");
    let tables: Vec<(String, &DeTable<'_>, Range<usize>)> = match v.get_ref() {
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
        let leds = ctx.required_integer(st, "leds", 1..=i64::from(MAX_LEDS));
        let from = ctx.required_number(st, "from_m", STRIP_M);
        let to = ctx.required_number(st, "to_m", STRIP_M);
        let default: &[End] = match kind {
            PropKind::Poi => &[End::Head],
            PropKind::Staff => &[End::Head, End::Tail],
        };
        let ends = match ctx.choice(st, "end", "strip end", ENDS, Some(default)) {
            Some(e) if kind == PropKind::Poi && e != [End::Head] => {
                let sp = tb.get("end").map_or(span.clone(), |x| x.span());
                ctx.error_help(
                    &st.key_path("end"),
                    sp,
                    format!(
                        "a poi's strip runs along its tether to the head: `end = \"{}\"` is for staffs",
                        ENDS.iter().find(|c| c.1 == e).map_or("", |c| c.0)
                    ),
                    "leave `end` out, or write `end = \"head\"`",
                );
                None
            }
            e => e.map(<[End]>::to_vec),
        };
        let (Some(leds), Some(from), Some(to), Some(ends)) = (leds, from, to, ends) else {
            ok = false;
            continue;
        };
        if to < from {
            ctx.error_help(
                &st.key_path("to_m"),
                tb.get("to_m").map_or(span.clone(), |x| x.span()),
                format!(
                    "the strip ends at {} m, nearer the grip than its start at {} m",
                    short(to),
                    short(from)
                ),
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
                    format!(
                        "the strip reaches {} m from the grip, beyond the prop's end at {} m",
                        short(to),
                        short(length)
                    ),
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

/// Names of devices on Windows, which no file may take, whatever its case
/// or extension (Microsoft's documentation, "Naming Files, Paths, and
/// Namespaces").
const DEVICE_NAMES: &[&str] = &[
    "con", "prn", "aux", "nul", "com1", "com2", "com3", "com4", "com5", "com6", "com7", "com8",
    "com9", "lpt1", "lpt2", "lpt3", "lpt4", "lpt5", "lpt6", "lpt7", "lpt8", "lpt9",
];

/// True when `name`, before any extension, is a Windows device name.
fn is_device_name(name: &str) -> bool {
    let stem = name.split('.').next().unwrap_or(name);
    DEVICE_NAMES.iter().any(|d| d.eq_ignore_ascii_case(stem))
}

/// A prop's name becomes file names: besides [`check_name`], it may not be
/// the name of a Windows device.
fn check_prop_name(ctx: &mut Ctx, path: &str, name: &str, span: Range<usize>) {
    if is_device_name(name) {
        ctx.error_help(
            path,
            span,
            format!("the name `{name}` cannot be used: it names a device on Windows"),
            "con, prn, aux, nul, com1 to com9 and lpt1 to lpt9 cannot be file names, in any case",
        );
        return;
    }
    if super::keys::SECTION_KEYS.contains(&name) {
        ctx.error_help(
            path,
            span,
            format!("a prop cannot be called `{name}`"),
            "`bars` and `join` are a section's own keys; choose another name",
        );
        return;
    }
    check_name(ctx, path, name, span);
}

/// Names become file names and keys: keep them to letters, digits, `_`
/// and `-`.
pub(super) fn check_name(ctx: &mut Ctx, path: &str, name: &str, span: Range<usize>) {
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
    let nums: Vec<Option<f64>> = arr
        .iter()
        .map(|v| super::reader::as_number(v.get_ref()))
        .collect();
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
