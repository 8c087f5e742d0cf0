//! Typed access to a spanned TOML tree, collecting every error with its
//! file position and key path instead of stopping at the first.

use std::ops::{Range, RangeInclusive};
use std::sync::Arc;

use toml::Spanned;
use toml::de::{DeArray, DeTable, DeValue};

use crate::diag::{Diagnostic, Diagnostics, Source, did_you_mean};

/// A TOML value with its byte span.
pub type Val<'i> = Spanned<DeValue<'i>>;

/// The most names searched for the closest to a misspelt one.
pub const MAX_SUGGESTED_FROM: usize = 1000;

/// A table and the key path that leads to it (`prop.left`).
#[derive(Clone, Copy)]
pub struct Tbl<'a, 'i> {
    /// Dotted key path, empty for the document root.
    pub path: &'a str,
    /// The table.
    pub table: &'a DeTable<'i>,
    /// Where it is in the file (byte offsets, start and end).
    pub at: (usize, usize),
}

impl<'a, 'i> Tbl<'a, 'i> {
    /// The value at `key`, if present.
    pub fn get(&self, key: &str) -> Option<&'a Val<'i>> {
        self.table.get(key)
    }

    /// Where it is in the file, as a byte range.
    pub fn span(&self) -> Range<usize> {
        self.at.0..self.at.1
    }

    /// `path.key`.
    pub fn key_path(&self, key: &str) -> String {
        join(self.path, key)
    }
}

/// `a.b`, or `b` when `a` is empty.
pub fn join(path: &str, key: &str) -> String {
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

/// The reading context: the source file and the errors found so far.
pub struct Ctx {
    /// The file being read.
    pub src: Arc<Source>,
    /// Everything found wrong so far.
    pub diags: Diagnostics,
}

/// What kind of TOML value it is, for messages.
pub fn type_name(v: &DeValue<'_>) -> &'static str {
    match v {
        DeValue::String(_) => "a string",
        DeValue::Integer(_) => "an integer",
        DeValue::Float(_) => "a float",
        DeValue::Boolean(_) => "a boolean",
        DeValue::Datetime(_) => "a date-time",
        DeValue::Array(_) => "an array",
        DeValue::Table(_) => "a table",
    }
}

/// Characters of a value a message quotes as written; a longer number is
/// printed in short scientific notation, a longer string cut.
const QUOTED_CHARS: usize = 24;

/// A short rendering of a value for messages: numbers as written, or in
/// short scientific notation when long (never 300 digits); strings quoted,
/// cut after 60 characters.
pub fn show_value(v: &DeValue<'_>) -> String {
    let number = |text: &str| {
        if text.len() <= QUOTED_CHARS {
            return text.to_string();
        }
        match text.replace('_', "").parse::<f64>() {
            Ok(x) if x.is_finite() => short(x),
            _ => format!("{}...", &text[..12]),
        }
    };
    match v {
        DeValue::String(s) if s.chars().count() > 60 => {
            let cut: String = s.chars().take(60).collect();
            format!("{cut:?}...")
        }
        DeValue::String(s) => format!("{s:?}"),
        DeValue::Integer(i) => number(i.as_str()),
        DeValue::Float(f) => number(f.as_str()),
        DeValue::Boolean(b) => b.to_string(),
        DeValue::Datetime(d) => d.to_string(),
        DeValue::Array(_) => "an array".into(),
        DeValue::Table(_) => "a table".into(),
    }
}

/// A value's type and, for scalars, the value itself: `a string "x"`.
pub fn describe(v: &DeValue<'_>) -> String {
    match v {
        DeValue::Array(_) | DeValue::Table(_) => type_name(v).to_string(),
        _ => format!("{} {}", type_name(v), show_value(v)),
    }
}

/// The value of a TOML number as f64, if it is a number. An integer too
/// large for an i64 is read as a float (and so refused by any range).
pub fn as_number(v: &DeValue<'_>) -> Option<f64> {
    match v {
        DeValue::Integer(i) => Some(
            i64::from_str_radix(i.as_str(), i.radix())
                .map(|x| x as f64)
                .unwrap_or(f64::INFINITY),
        ),
        DeValue::Float(f) => f.as_str().parse().ok(),
        _ => None,
    }
}

/// A number for a message: Rust's shortest round-trip form when that is
/// short, else short scientific notation (`1e-300`, not 300 digits).
pub fn short(x: f64) -> String {
    let plain = format!("{x}");
    if plain.len() <= 12 {
        plain
    } else {
        let sci = format!("{x:.6e}");
        // Drop trailing zeros of the mantissa: 1.500000e3 -> 1.5e3.
        match sci.split_once('e') {
            Some((m, e)) if m.contains('.') => {
                format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.'))
            }
            _ => sci,
        }
    }
}

/// A value as written in the file when that is short, else [`short`].
fn as_written(v: &DeValue<'_>, x: f64) -> String {
    let written = show_value(v);
    if written.len() <= 24 {
        return written;
    }
    match v {
        // An integer too long for an i64: its value as a float.
        DeValue::Integer(i) if !x.is_finite() => i
            .as_str()
            .parse::<f64>()
            .map_or_else(|_| format!("{}...", &written[..12]), short),
        _ => short(x),
    }
}

/// The range a number key accepts: a lower and an upper bound, each open
/// or closed, and optionally an exact 0 besides (`0 (off) or at least 1`).
///
/// Written as `Bounds::at_least(1.0).at_most(1000.0)`,
/// `Bounds::above(0.0).at_most(10.0)` or `Bounds::within(36_000.0)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bounds {
    lo: f64,
    lo_open: bool,
    hi: f64,
    zero_too: bool,
}

impl Bounds {
    /// `lo` or more.
    pub const fn at_least(lo: f64) -> Self {
        Bounds {
            lo,
            lo_open: false,
            hi: f64::MAX,
            zero_too: false,
        }
    }

    /// More than `lo`.
    pub const fn above(lo: f64) -> Self {
        Bounds {
            lo_open: true,
            ..Bounds::at_least(lo)
        }
    }

    /// From `-m` to `m`.
    pub const fn within(m: f64) -> Self {
        Bounds::at_least(-m).at_most(m)
    }

    /// And at most `hi`.
    pub const fn at_most(self, hi: f64) -> Self {
        Bounds { hi, ..self }
    }

    /// And exactly 0 as well (an "off" value below the range).
    pub const fn or_zero(self) -> Self {
        Bounds {
            zero_too: true,
            ..self
        }
    }

    /// True when `x` is in range.
    pub fn contains(&self, x: f64) -> bool {
        let above_lo = if self.lo_open {
            x > self.lo
        } else {
            x >= self.lo
        };
        (above_lo && x <= self.hi) || (self.zero_too && x == 0.0)
    }

    /// "between 1 and 1000", "greater than 0 and at most 10", "0 or ...".
    pub fn describe(&self) -> String {
        let (lo, hi) = (short(self.lo), short(self.hi));
        let range = match (self.lo_open, self.hi == f64::MAX) {
            (false, false) => format!("between {lo} and {hi}"),
            (true, false) => format!("greater than {lo} and at most {hi}"),
            (false, true) => format!("at least {lo}"),
            (true, true) => format!("greater than {lo}"),
        };
        if self.zero_too {
            format!("0 or {range}")
        } else {
            range
        }
    }
}

impl Ctx {
    /// Records an error at `span` for key path `key`.
    pub fn error(
        &mut self,
        key: &str,
        span: Range<usize>,
        message: impl Into<String>,
    ) -> Diagnostic {
        let d = Diagnostic::error(message).key(key).at(&self.src, span);
        self.diags.push(d.clone());
        d
    }

    /// Records an error with a help line.
    pub fn error_help(
        &mut self,
        key: &str,
        span: Range<usize>,
        message: impl Into<String>,
        help: impl Into<String>,
    ) {
        let d = Diagnostic::error(message)
            .key(key)
            .at(&self.src, span)
            .help(help);
        self.diags.push(d);
    }

    /// Reports every key of `t` not in `allowed`, suggesting the closest.
    pub fn check_keys(&mut self, t: Tbl<'_, '_>, allowed: &[&str]) {
        for (k, _) in t.table.iter() {
            let name: &str = k.get_ref();
            if allowed.contains(&name) {
                continue;
            }
            let help = match did_you_mean(name, allowed.iter().copied()) {
                Some(s) => format!("did you mean `{s}`?"),
                None => format!("expected one of {}", list(allowed)),
            };
            let path = if t.path.is_empty() {
                "the top level".to_string()
            } else {
                format!("`{}`", t.path)
            };
            self.error_help(
                &t.key_path(name),
                k.span(),
                format!("unknown key `{name}` in {path}"),
                help,
            );
        }
    }

    /// Reports a missing required key.
    pub fn missing(&mut self, t: Tbl<'_, '_>, key: &str) {
        self.error(&t.key_path(key), t.span(), format!("missing key `{key}`"));
    }

    fn wrong_type(&mut self, t: Tbl<'_, '_>, key: &str, v: &Val<'_>, want: &str) {
        self.error(
            &t.key_path(key),
            v.span(),
            format!("expected {want}, got {}", describe(v.get_ref())),
        );
    }

    /// A number at `key` within `bounds`, if present; errors name the
    /// range and the value as written.
    pub fn number_in(&mut self, t: Tbl<'_, '_>, key: &str, bounds: Bounds) -> Option<f64> {
        self.bounded(t, key, false, bounds)
    }

    /// A number at `key` within `bounds`; an error when it is missing.
    pub fn required_number(&mut self, t: Tbl<'_, '_>, key: &str, bounds: Bounds) -> Option<f64> {
        self.bounded(t, key, true, bounds)
    }

    fn bounded(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        required: bool,
        bounds: Bounds,
    ) -> Option<f64> {
        let Some(v) = t.get(key) else {
            if required {
                self.missing(t, key);
            }
            return None;
        };
        let Some(x) = as_number(v.get_ref()) else {
            self.wrong_type(t, key, v, "a number");
            return None;
        };
        if bounds.contains(x) {
            return Some(x);
        }
        let got = as_written(v.get_ref(), x);
        self.error(
            &t.key_path(key),
            v.span(),
            format!("must be {}, got {got}", bounds.describe()),
        );
        None
    }

    /// A whole number at `key` in `range`, if present.
    pub fn integer_in(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        range: RangeInclusive<i64>,
    ) -> Option<i64> {
        self.whole(t, key, false, range)
    }

    /// A whole number at `key` in `range`; an error when it is missing.
    pub fn required_integer(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        range: RangeInclusive<i64>,
    ) -> Option<i64> {
        self.whole(t, key, true, range)
    }

    fn whole(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        required: bool,
        range: RangeInclusive<i64>,
    ) -> Option<i64> {
        let Some(v) = t.get(key) else {
            if required {
                self.missing(t, key);
            }
            return None;
        };
        let DeValue::Integer(i) = v.get_ref() else {
            self.wrong_type(t, key, v, "a whole number");
            return None;
        };
        match i64::from_str_radix(i.as_str(), i.radix()) {
            Ok(x) if range.contains(&x) => Some(x),
            _ => {
                self.error(
                    &t.key_path(key),
                    v.span(),
                    format!(
                        "must be a whole number between {} and {}, got {}",
                        range.start(),
                        range.end(),
                        as_written(v.get_ref(), f64::INFINITY)
                    ),
                );
                None
            }
        }
    }

    /// The value at `key` as one of the named `choices`: `default` when
    /// absent (an error when there is no default), an error naming the
    /// choices (and the closest) when it is none of them.
    pub fn choice<T: Copy>(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        what: &str,
        choices: &[(&str, T)],
        default: Option<T>,
    ) -> Option<T> {
        let Some((name, span)) = self.string(t, key, default.is_none()) else {
            return if t.get(key).is_none() { default } else { None };
        };
        let found = choices.iter().find(|c| c.0 == name).map(|c| c.1);
        if found.is_none() {
            let names: Vec<&str> = choices.iter().map(|c| c.0).collect();
            self.unknown_name(&t.key_path(key), span, what, &name, &names);
        }
        found
    }

    /// An error: `value` is not one of `known`, with the closest suggested
    /// (none among more than [`MAX_SUGGESTED_FROM`] names, so that a large
    /// show's errors stay fast to report).
    pub fn unknown_name(
        &mut self,
        path: &str,
        span: Range<usize>,
        what: &str,
        value: &str,
        known: &[&str],
    ) {
        let close = if known.len() <= MAX_SUGGESTED_FROM {
            did_you_mean(value, known.iter().copied())
        } else {
            None
        };
        let help = match close {
            None if known.len() > MAX_SUGGESTED_FROM => {
                format!("no {what} of that name is defined")
            }
            Some(s) => format!("did you mean `{s}`?"),
            None if known.is_empty() => format!("no {what} is defined"),
            None => format!("expected one of {}", list(known)),
        };
        self.error_help(path, span, format!("unknown {what} `{value}`"), help);
    }

    /// An error at each of `keys` that `t` holds, as they do not go with
    /// what else it holds: `message(key)`, with `help`.
    pub fn refuse_keys(
        &mut self,
        t: Tbl<'_, '_>,
        keys: &[&str],
        message: impl Fn(&str) -> String,
        help: &str,
    ) {
        for key in keys {
            if let Some(v) = t.get(key) {
                self.error_help(&t.key_path(key), v.span(), message(key), help);
            }
        }
    }

    /// A string at `key`, with its span.
    pub fn string<'a>(
        &mut self,
        t: Tbl<'a, '_>,
        key: &str,
        required: bool,
    ) -> Option<(String, Range<usize>)> {
        let Some(v) = t.get(key) else {
            if required {
                self.missing(t, key);
            }
            return None;
        };
        match v.get_ref() {
            DeValue::String(s) => Some((s.to_string(), v.span())),
            _ => {
                self.wrong_type(t, key, v, "a string");
                None
            }
        }
    }

    /// A boolean at `key`.
    pub fn boolean(&mut self, t: Tbl<'_, '_>, key: &str) -> Option<bool> {
        let v = t.get(key)?;
        match v.get_ref() {
            DeValue::Boolean(b) => Some(*b),
            _ => {
                self.wrong_type(t, key, v, "true or false");
                None
            }
        }
    }

    /// An array at `key`, with its span.
    pub fn array<'a, 'i>(
        &mut self,
        t: Tbl<'a, 'i>,
        key: &str,
        required: bool,
    ) -> Option<(&'a DeArray<'i>, Range<usize>)> {
        let Some(v) = t.get(key) else {
            if required {
                self.missing(t, key);
            }
            return None;
        };
        match v.get_ref() {
            DeValue::Array(a) => Some((a, v.span())),
            _ => {
                self.wrong_type(t, key, v, "an array");
                None
            }
        }
    }

    /// A sub-table at `key`.
    pub fn table<'a, 'i>(
        &mut self,
        t: Tbl<'a, 'i>,
        key: &str,
        path: &'a str,
    ) -> Option<Tbl<'a, 'i>> {
        let v = t.get(key)?;
        match v.get_ref() {
            DeValue::Table(table) => Some(Tbl {
                path,
                table,
                at: (v.span().start, v.span().end),
            }),
            _ => {
                self.wrong_type(t, key, v, "a table");
                None
            }
        }
    }

    /// `[first, last]` bars at `key`: two whole numbers from 1, first <= last.
    pub fn bar_range(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        max_bar: i64,
    ) -> Option<(u32, u32, Range<usize>)> {
        let (a, span) = self.array(t, key, true)?;
        let path = t.key_path(key);
        let nums: Vec<Option<i64>> = a
            .iter()
            .map(|v| match v.get_ref() {
                DeValue::Integer(i) => i64::from_str_radix(i.as_str(), i.radix()).ok(),
                _ => None,
            })
            .collect();
        match nums.as_slice() {
            [Some(f), Some(l)]
                if (1..=max_bar).contains(f) && (1..=max_bar).contains(l) && f <= l =>
            {
                Some((*f as u32, *l as u32, span))
            }
            [Some(f), Some(l)] if f > l => {
                self.error(
                    &path,
                    span,
                    format!("the first bar {f} comes after the last bar {l}"),
                );
                None
            }
            [Some(_), Some(_)] => {
                self.error(&path, span, format!("bars must be between 1 and {max_bar}"));
                None
            }
            _ => {
                self.error_help(
                    &path,
                    span,
                    "expected two bar numbers, first and last (inclusive)",
                    "write e.g. `bars = [1, 8]`",
                );
                None
            }
        }
    }
}

/// `a`, `b` and `c` as a readable list of backticked names.
pub fn list(names: &[&str]) -> String {
    let quoted: Vec<String> = names.iter().map(|n| format!("`{n}`")).collect();
    quoted.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bounds_take_their_ends_as_written() {
        let b = Bounds::at_least(1.0).at_most(1000.0);
        assert!(b.contains(1.0) && b.contains(1000.0));
        assert!(!b.contains(0.999) && !b.contains(1000.001) && !b.contains(f64::NAN));
        assert_eq!(b.describe(), "between 1 and 1000");
        let open = Bounds::above(0.0).at_most(10.0);
        assert!(!open.contains(0.0) && open.contains(f64::MIN_POSITIVE));
        assert_eq!(open.describe(), "greater than 0 and at most 10");
        let off = Bounds::at_least(1.0).at_most(1e6).or_zero();
        assert!(off.contains(0.0) && off.contains(-0.0) && !off.contains(0.5));
        assert_eq!(off.describe(), "0 or between 1 and 1000000");
        assert_eq!(Bounds::within(64.0).describe(), "between -64 and 64");
        assert_eq!(Bounds::at_least(0.001).describe(), "at least 0.001");
        assert!(!Bounds::at_least(0.0).contains(f64::INFINITY));
    }

    #[test]
    fn numbers_in_messages_are_short() {
        // 5e-324 is the smallest positive subnormal double (IEEE 754-2008,
        // binary64: 2^-1074, about 4.94e-324).
        assert_eq!(short(5e-324), "4.940656e-324");
        assert_eq!(short(1e-300), "1e-300");
        assert_eq!(short(1e29), "1e29");
        assert_eq!(short(0.015625), "0.015625");
        assert_eq!(short(2e6), "2000000");
        assert_eq!(short(-36_000.0), "-36000");
        assert_eq!(short(1.0 / 3.0), "3.333333e-1");
    }

    fn with_table<R>(text: &str, f: impl FnOnce(&mut Ctx, Tbl<'_, '_>) -> R) -> (R, Diagnostics) {
        let src = Arc::new(Source::new("t.toml", text.to_string()));
        let doc = DeTable::parse(&src.text).unwrap();
        let mut ctx = Ctx {
            src: src.clone(),
            diags: Diagnostics::default(),
        };
        let t = Tbl {
            path: "t",
            table: doc.get_ref(),
            at: (0, src.text.len()),
        };
        let r = f(&mut ctx, t);
        (r, ctx.diags)
    }

    #[test]
    fn a_number_out_of_range_is_printed_as_written() {
        let (x, d) = with_table("x = 5e-324\n", |c, t| {
            c.number_in(t, "x", Bounds::at_least(1.0).at_most(1000.0))
        });
        assert_eq!(x, None);
        assert_eq!(d.0[0].message, "must be between 1 and 1000, got 5e-324");
        // 2^53 + 1 is not a double: refused as written, never rounded.
        let (x, d) = with_table("x = 9007199254740993\n", |c, t| {
            c.number_in(t, "x", Bounds::at_least(0.0).at_most(1e9))
        });
        assert_eq!(x, None);
        assert!(d.0[0].message.ends_with("got 9007199254740993"), "{d}");
        let (x, _) = with_table("x = 12\n", |c, t| c.required_integer(t, "x", 1..=64));
        assert_eq!(x, Some(12));
        let (x, d) = with_table("", |c, t| c.required_number(t, "x", Bounds::within(1.0)));
        assert_eq!(x, None);
        assert_eq!(d.0[0].message, "missing key `x`");
    }

    #[test]
    fn a_choice_reads_one_of_its_names_or_suggests_the_closest() {
        let choices = [("wall", 1), ("wheel", 2), ("floor", 3)];
        let (x, d) = with_table("p = \"wheel\"\n", |c, t| {
            c.choice(t, "p", "plane", &choices, None)
        });
        assert_eq!((x, d.0.len()), (Some(2), 0));
        let (x, d) = with_table("", |c, t| c.choice(t, "p", "plane", &choices, Some(1)));
        assert_eq!((x, d.0.len()), (Some(1), 0));
        let (x, d) = with_table("", |c, t| c.choice(t, "p", "plane", &choices, None));
        assert_eq!((x, d.0[0].message.as_str()), (None, "missing key `p`"));
        let (x, d) = with_table("p = \"whel\"\n", |c, t| {
            c.choice(t, "p", "plane", &choices, Some(1))
        });
        assert_eq!(x, None);
        assert_eq!(d.0[0].message, "unknown plane `whel`");
        assert_eq!(d.0[0].help.as_deref(), Some("did you mean `wheel`?"));
    }
}
