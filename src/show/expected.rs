//! `[[expected]]`: a warning the show's author knows of and means, so that
//! `check` reports it as expected (never hides it) and `--deny-warnings`
//! passes over it.

use super::reader::{Ctx, Tbl};
use super::table_array;
use crate::model::{Expected, Prop, WARNING_KINDS};

/// What an `[[expected]]` table may hold.
pub(super) const EXPECTED_KEYS: &[&str] = &["kind", "prop", "bars", "why"];

/// The expectations of `[[expected]]` free of errors, in file order.
pub(super) fn expected(ctx: &mut Ctx, root: Tbl<'_, '_>, props: &[Prop]) -> Vec<Expected> {
    let mut out = Vec::new();
    for (path, table, span) in table_array(ctx, root, "expected") {
        let t = Tbl {
            path: &path,
            table,
            at: (span.start, span.end),
        };
        ctx.check_keys(t, EXPECTED_KEYS);
        let kinds: Vec<(&str, &'static str)> = WARNING_KINDS.iter().map(|k| (*k, *k)).collect();
        let kind = ctx.choice(t, "kind", "warning kind", &kinds, None);
        let prop = match ctx.string(t, "prop", false) {
            Some((name, sp)) if name != "(stage)" && !props.iter().any(|p| p.name == name) => {
                let names: Vec<&str> = props.iter().map(|p| p.name.as_str()).collect();
                ctx.unknown_name(&t.key_path("prop"), sp, "prop", &name, &names);
                None
            }
            Some((name, _)) => Some(Some(name)),
            None => Some(None),
        };
        let bars = if t.get("bars").is_some() {
            ctx.bar_range(t, "bars", i64::from(u32::MAX))
                .map(|(a, b, _)| Some((a, b)))
        } else {
            Some(None)
        };
        let why = ctx.string(t, "why", true).map(|(w, _)| w);
        if let (Some(kind), Some(prop), Some(bars), Some(why)) = (kind, prop, bars, why) {
            out.push(Expected {
                offset: span.start,
                kind,
                prop,
                bars,
                why,
            });
        }
    }
    out
}
