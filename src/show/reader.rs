//! Typed access to a spanned TOML tree, collecting every error with its
//! file position and key path instead of stopping at the first.

use std::ops::Range;
use std::sync::Arc;

use toml::Spanned;
use toml::de::{DeArray, DeTable, DeValue};

use crate::diag::{Diagnostic, Diagnostics, Source, did_you_mean};

/// A TOML value with its byte span.
pub type Val<'i> = Spanned<DeValue<'i>>;

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

/// A short rendering of a value for messages.
pub fn show_value(v: &DeValue<'_>) -> String {
    match v {
        DeValue::String(s) => format!("{s:?}"),
        DeValue::Integer(i) => i.as_str().to_string(),
        DeValue::Float(f) => f.as_str().to_string(),
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

/// The value of a TOML number as f64, if it is a number.
pub fn as_number(v: &DeValue<'_>) -> Option<f64> {
    match v {
        DeValue::Integer(i) => i64::from_str_radix(i.as_str(), i.radix())
            .ok()
            .map(|x| x as f64),
        DeValue::Float(f) => f.as_str().parse().ok(),
        _ => None,
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

    /// A finite number (integer or float) at `key`, with its span.
    pub fn number(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        required: bool,
    ) -> Option<(f64, Range<usize>)> {
        let Some(v) = t.get(key) else {
            if required {
                self.missing(t, key);
            }
            return None;
        };
        match as_number(v.get_ref()) {
            Some(x) if x.is_finite() => Some((x, v.span())),
            Some(_) => {
                self.error(
                    &t.key_path(key),
                    v.span(),
                    format!("must be a finite number, got {}", show_value(v.get_ref())),
                );
                None
            }
            None => {
                self.wrong_type(t, key, v, "a number");
                None
            }
        }
    }

    /// A number at `key` that must lie in `[lo, hi]` (or `(lo, hi]` when
    /// `lo_open`); errors name the range.
    pub fn number_in(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        required: bool,
        lo: f64,
        lo_open: bool,
        hi: f64,
    ) -> Option<f64> {
        let (x, span) = self.number(t, key, required)?;
        let ok_lo = if lo_open { x > lo } else { x >= lo };
        if ok_lo && x <= hi {
            return Some(x);
        }
        let range = if lo_open {
            format!("greater than {lo} and at most {hi}")
        } else {
            format!("between {lo} and {hi}")
        };
        self.error(&t.key_path(key), span, format!("must be {range}, got {x}"));
        None
    }

    /// An integer at `key` in `[lo, hi]`.
    pub fn integer_in(
        &mut self,
        t: Tbl<'_, '_>,
        key: &str,
        required: bool,
        lo: i64,
        hi: i64,
    ) -> Option<i64> {
        let Some(v) = t.get(key) else {
            if required {
                self.missing(t, key);
            }
            return None;
        };
        let x = match v.get_ref() {
            DeValue::Integer(i) => i64::from_str_radix(i.as_str(), i.radix()).ok(),
            _ => None,
        };
        match x {
            Some(x) if (lo..=hi).contains(&x) => Some(x),
            Some(x) => {
                self.error(
                    &t.key_path(key),
                    v.span(),
                    format!("must be a whole number between {lo} and {hi}, got {x}"),
                );
                None
            }
            None => {
                self.wrong_type(t, key, v, "a whole number");
                None
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
