//! `[[cue]]`: what each prop shows over a range of bars, stepped colours
//! or a painted picture.

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use toml::de::DeValue;

use super::keys::*;
use super::reader::{Ctx, Tbl, as_number, describe};
use super::{DEFAULT_CHASE_WIDTH_LEDS, Declared, MAX_BAR, table_array};
use crate::model::{Along, Cue, EventKind, Look, Painting, Picture, PicturePlacement, Prop, Steps};

/// The cues of `[[cue]]` free of errors, in file order. `last_bar`, the
/// show's last bar (when it has sections), bounds their bars.
pub(super) fn cues(
    ctx: &mut Ctx,
    root: Tbl<'_, '_>,
    props: &[Prop],
    names: &Declared,
    last_bar: Option<u32>,
) -> Vec<Cue> {
    let prop_names: Vec<&str> = names.props.iter().map(String::as_str).collect();
    let declared_props: std::collections::HashSet<&str> = prop_names.iter().copied().collect();
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
            if i.is_none() && !declared_props.contains(name.as_str()) {
                ctx.unknown_name(&t.key_path("prop"), sp, "prop", &name, &prop_names);
            }
            i
        });
        let bars = ctx.bar_range(t, "bars", MAX_BAR);
        let bars = match (bars, last_bar) {
            (Some((_, last, span)), Some(end)) if last > end => {
                ctx.error_help(
                    &t.key_path("bars"),
                    span,
                    format!("the cue runs to bar {last}, past the show's end at bar {end}"),
                    "the last section ends the show: end the cue there, or add a section",
                );
                None
            }
            (bars, _) => bars,
        };
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

/// The stepped colours of a cue without `image`.
fn steps(ctx: &mut Ctx, t: Tbl<'_, '_>) -> Option<Steps> {
    ctx.refuse_keys(
        t,
        IMAGE_KEYS,
        |key| format!("`{key}` goes with `image`"),
        "add `image = \"picture.png\"`, or leave the key out",
    );
    let kinds: Vec<(&str, EventKind)> = EventKind::ALL.iter().map(|k| (k.name(), *k)).collect();
    let at = ctx.choice(t, "at", "event kind", &kinds, None);
    let angle = ctx
        .number_in(t, "angle_deg", ANGLE_DEG)
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
    let fade = ctx.number_in(t, "fade_beats", FADE_BEATS).unwrap_or(0.0);
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
    let kind = ctx.choice(t, "along", "spread", ALONGS, Some(Spread::Solid));
    if kind != Some(Spread::Chase) {
        ctx.refuse_keys(
            t,
            &["chase_leds_per_beat", "chase_width_leds"],
            |key| format!("`{key}` goes with `along = \"chase\"`"),
            "add `along = \"chase\"`, or leave the key out",
        );
    }
    match kind? {
        Spread::Solid => Some(Along::Solid),
        Spread::Gradient => Some(Along::Gradient),
        Spread::Chase => {
            let speed = ctx.required_number(t, "chase_leds_per_beat", CHASE_LEDS_PER_BEAT);
            let width = ctx.number_in(t, "chase_width_leds", CHASE_WIDTH_LEDS).or(t
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
type Pictures = HashMap<PathBuf, Result<Arc<Picture>, String>>;

/// The picture of a cue with `image`, read from a file beside the show (or
/// found in `pictures`, when an earlier cue read it).
fn painting(ctx: &mut Ctx, t: Tbl<'_, '_>, pictures: &mut Pictures) -> Option<Painting> {
    ctx.refuse_keys(
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
    let width = ctx.required_number(t, "image_width_m", IMAGE_SIZE_M);
    let height = ctx.number_in(t, "image_height_m", IMAGE_SIZE_M);
    let rotation = ctx
        .number_in(t, "image_rotation_deg", ANGLE_DEG)
        .unwrap_or(0.0);
    let centre = match t.get("image_centre_m") {
        None => Some([0.0, 0.0]),
        Some(v) => {
            let nums: Option<Vec<f64>> = match v.get_ref() {
                DeValue::Array(a) => a.iter().map(|x| as_number(x.get_ref())).collect(),
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
    let fixed_to = ctx.choice(
        t,
        "image_fixed_to",
        "picture mount",
        FIXED_TO,
        Some(crate::model::FixedTo::Stage),
    );
    let base = Path::new(&ctx.src.name)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    let path = base.join(&file);
    if !super::pictures_from_anywhere()
        && let Some(why) = outside(&base, &path)
    {
        ctx.error_help(
            &t.key_path("image"),
            file_span,
            format!("`{file}` {why}: pictures are read from the show file's folder and the folders in it"),
            "move the picture beside the show file, or give --allow-outside-pictures to read it where it is",
        );
        return None;
    }
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

/// Why the picture at `path` is not inside the show's folder `base`, if it
/// is not: an absolute path, or one that leaves the folder (through `..`
/// or a symbolic link). A picture that does not exist is not refused here:
/// reading it says so.
fn outside(base: &Path, path: &Path) -> Option<&'static str> {
    use std::path::Component;
    if path
        .strip_prefix(base)
        .map_or(true, |rel| rel.is_absolute() || rel.has_root())
    {
        return Some("is an absolute path");
    }
    let rel = path.strip_prefix(base).ok()?;
    if rel.components().any(|c| {
        matches!(
            c,
            Component::ParentDir | Component::Prefix(_) | Component::RootDir
        )
    }) {
        return Some("leaves the show file's folder (`..`)");
    }
    let folder = if base.as_os_str().is_empty() {
        Path::new(".")
    } else {
        base
    };
    let (Ok(folder), Ok(real)) = (folder.canonicalize(), path.canonicalize()) else {
        return None;
    };
    (!real.starts_with(&folder)).then_some("leads outside the show file's folder (a symbolic link)")
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
