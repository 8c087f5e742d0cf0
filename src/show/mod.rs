//! Reading show files: TOML text to a validated [`Show`].
//!
//! The text is parsed into a spanned TOML tree (syntax errors are recovered
//! from, so several are reported at once), then every table is read with
//! its keys checked against the ones it accepts, one file per table:
//! `props`, `patterns`, `sections` (with the tempo changes), `cues`, and
//! `keys` for the accepted keys, the named choices and every number key's
//! range. All errors are collected and returned together, each with file,
//! line, column and key path.

mod cues;
mod expected;
mod keys;
mod patterns;
mod props;
pub mod reader;
mod sections;

use std::path::Path;
use std::sync::Arc;

use toml::de::{DeTable, DeValue};

use crate::diag::{Diagnostic, Diagnostics, Source, escape, io_phrase};
use crate::model::{Music, Show, TempoMap};
use keys::{BPM, SHOW_KEYS, START_S, TOP_KEYS};
use reader::{Ctx, Tbl, describe, join};

/// Data clock of a data-and-clock LED line when `driver_clock_hz` is not
/// given, hertz: a conservative figure that long lines usually manage
/// (common practice).
pub const DEFAULT_DRIVER_CLOCK_HZ: f64 = 4.0e6;
/// Clock tolerance when `clock_ppm` is not given: a plain quartz crystal,
/// parts per million (common practice).
pub const DEFAULT_CLOCK_PPM: f64 = 50.0;

/// The largest bar number a show may use.
pub const MAX_BAR: i64 = 100_000;
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
/// Most LEDs on one prop.
pub const MAX_LEDS: u32 = 4096;
/// Most props in one show (each has four table files open while it compiles).
pub const MAX_PROPS: usize = 256;
/// Most strips on one prop.
pub const MAX_STRIPS: usize = 16;
/// Band width of a chase when `chase_width_leds` is left out, LEDs.
pub const DEFAULT_CHASE_WIDTH_LEDS: f64 = 4.0;

/// Whether pictures may be read from outside the show file's folder.
static PICTURES_FROM_ANYWHERE: std::sync::atomic::AtomicBool =
    std::sync::atomic::AtomicBool::new(false);

/// Lets shows read cue pictures from anywhere (`--allow-outside-pictures`):
/// absolute paths and paths through `..` or symbolic links out of the show
/// file's folder. Off by default, and meant for one person's command line:
/// a program that reads shows sent by others (a server) never turns it on.
pub fn allow_pictures_from_anywhere(on: bool) {
    PICTURES_FROM_ANYWHERE.store(on, std::sync::atomic::Ordering::Relaxed);
}

/// Whether [`allow_pictures_from_anywhere`] is on.
pub fn pictures_from_anywhere() -> bool {
    PICTURES_FROM_ANYWHERE.load(std::sync::atomic::Ordering::Relaxed)
}

/// Reads and validates the show file at `path`. The reader's warnings (the
/// show's `notes`) are printed to stderr here, so that every command shows
/// them the same way.
pub fn load(path: &Path) -> Result<Show, Diagnostics> {
    let name = path.display().to_string();
    let cannot = |e: std::io::Error| {
        Diagnostic::error(format!("cannot read {}: {}", escape(&name), io_phrase(&e)))
    };
    let meta = std::fs::metadata(path).map_err(cannot)?;
    if !meta.is_file() {
        let what = if meta.is_dir() {
            "it is a folder, not a show file"
        } else {
            "it is not a plain file"
        };
        return Err(Diagnostic::error(format!("cannot read {}: {what}", escape(&name))).into());
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err(Diagnostic::error(format!(
            "`{}` is {} bytes; show files larger than {MAX_FILE_BYTES} bytes are refused",
            escape(&name),
            meta.len()
        ))
        .into());
    }
    let bytes = std::fs::read(path).map_err(cannot)?;
    let show = parse_bytes(&name, bytes)?;
    for note in &show.notes {
        eprintln!("{note}");
    }
    Ok(show)
}

/// Parses and validates the bytes of a show file: text that is not UTF-8 is
/// refused at the line and column of its first bad byte.
pub fn parse_bytes(name: &str, bytes: Vec<u8>) -> Result<Show, Diagnostics> {
    let text = match String::from_utf8(bytes) {
        Ok(text) => text,
        Err(e) => {
            let at = e.utf8_error().valid_up_to();
            let byte = e.as_bytes()[at];
            // The text before the bad byte is kept as it is, so the span of
            // its replacement character is where the byte was.
            let lossy = String::from_utf8_lossy(e.as_bytes()).into_owned();
            let src = Arc::new(Source::new(name, lossy));
            let end = at + src.text[at..].chars().next().map_or(0, char::len_utf8);
            return Err(Diagnostic::error(format!(
                "the show file is not UTF-8 text: byte 0x{byte:02x} cannot start or continue a character here"
            ))
            .at(&src, at..end)
            .help("save the file as UTF-8")
            .into());
        }
    };
    parse(name, text)
}

/// Tables that are arrays of tables, each entry opened with `[[KEY]]`.
const TABLE_ARRAYS: &[&str] = &["tempo", "section", "cue"];

/// `[cue]` (and `[section]`, `[tempo]`) written for `[[cue]]`: one error
/// for each such key, at its first header, instead of the TOML parser's
/// duplicate-table errors or a type error.
fn single_brackets(src: &Arc<Source>) -> Diagnostics {
    let mut found: Vec<(&str, usize, Vec<usize>)> = Vec::new();
    let mut offset = 0;
    for (i, line) in src.text.split('\n').enumerate() {
        let here = offset;
        offset += line.len() + 1;
        let body = line.split('#').next().unwrap_or("").trim();
        let Some(name) = body
            .strip_prefix('[')
            .and_then(|b| b.strip_suffix(']'))
            .filter(|n| !n.starts_with('[') && !n.ends_with(']'))
            .map(str::trim)
        else {
            continue;
        };
        let Some(&key) = TABLE_ARRAYS.iter().find(|k| **k == name) else {
            continue;
        };
        let start = here + line.find('[').unwrap_or(0);
        match found.iter_mut().find(|f| f.0 == key) {
            Some(f) => f.2.push(i + 1),
            None => found.push((key, start, Vec::new())),
        }
    }
    let mut diags = Diagnostics::default();
    for (key, start, more) in found {
        let also = if more.is_empty() {
            String::new()
        } else {
            let lines: Vec<String> = more.iter().map(ToString::to_string).collect();
            format!(" (here and on line {})", lines.join(", "))
        };
        diags.push(
            Diagnostic::error(format!(
                "`[{key}]` opens one table, but each {key} is an entry of a list{also}"
            ))
            .key(key)
            .at(src, start..start + key.len() + 2)
            .help(format!(
                "write `[[{key}]]` (double brackets) above each {key}"
            )),
        );
    }
    diags
}

/// Parses and validates show-file text; `name` is used in messages.
pub fn parse(name: &str, text: String) -> Result<Show, Diagnostics> {
    let src = Arc::new(Source::new(name, text));
    let hints = single_brackets(&src);
    if !hints.is_empty() {
        return Err(hints);
    }
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
        Some(mut show) if !ctx.diags.has_errors() => {
            show.notes = ctx.diags.0;
            Ok(show)
        }
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
    let frame_rate = ctx.required_integer(header, "frame_rate", 1..=100_000);
    let bpm = ctx.required_number(header, "bpm", BPM);
    let beats_per_bar = ctx.integer_in(header, "beats_per_bar", 1..=64).unwrap_or(4) as u32;
    let start_s = ctx.number_in(header, "start_s", START_S).unwrap_or(0.0);
    let music = music(ctx, header);

    let changes = sections::tempo_changes(ctx, root);
    let props = props::props(ctx, root);
    let patterns = patterns::patterns(ctx, root);
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
    let sections = sections::sections(ctx, root, &props, &patterns, &names);
    let last_bar = sections.iter().map(|s| s.last_bar).max();
    let cues = cues::cues(ctx, root, &props, &names, last_bar);
    let expected = expected::expected(ctx, root, &props);

    let resync_bars = resync_bars(ctx, header, last_bar.unwrap_or(1));
    let tempo = TempoMap::new(start_s, beats_per_bar, bpm?, &changes);
    let show = Show {
        title,
        frame_rate_hz: frame_rate? as u32,
        tempo,
        music: music?,
        props,
        patterns,
        sections,
        cues,
        expected,
        resync_bars,
        source: ctx.src.clone(),
        notes: Vec::new(),
    };
    check_work(ctx, root, &show);
    Some(show)
}

/// `resync_bars`: whole bar numbers from 1 to the show's last bar, each
/// once, sorted on the way.
fn resync_bars(ctx: &mut Ctx, header: Tbl<'_, '_>, last_bar: u32) -> Vec<u32> {
    let Some((a, span)) = ctx.array(header, "resync_bars", false) else {
        return Vec::new();
    };
    let path = header.key_path("resync_bars");
    let mut bars = Vec::new();
    for v in a.iter() {
        let n = match v.get_ref() {
            DeValue::Integer(i) => i64::from_str_radix(i.as_str(), i.radix()).ok(),
            _ => None,
        };
        match n {
            Some(b) if (1..=i64::from(last_bar)).contains(&b) => bars.push(b as u32),
            _ => {
                ctx.error_help(
                    &path,
                    span.clone(),
                    format!("each resync bar must be a whole bar number from 1 to {last_bar}"),
                    "write e.g. `resync_bars = [1, 9, 17]`",
                );
                return Vec::new();
            }
        }
    }
    bars.sort_unstable();
    bars.dedup();
    if bars.len() > crate::model::MAX_RESYNC_BARS {
        ctx.error_help(
            &path,
            span,
            format!(
                "{} resync bars are more than a table can mark ({})",
                bars.len(),
                crate::model::MAX_RESYNC_BARS
            ),
            "mark fewer bars: every eighth bar is plenty to re-align to",
        );
        return Vec::new();
    }
    bars
}

/// `[show] music`: the song's file, read from the show file's folder, its
/// header checked (it exists, is audio glowscore reads, within the limits);
/// a bad file is an error at the key's value. `Some(None)` without the key.
fn music(ctx: &mut Ctx, header: Tbl<'_, '_>) -> Option<Option<Music>> {
    if header.get("music").is_none() {
        return Some(None);
    }
    let (file, span) = ctx.string(header, "music", false)?;
    let base = Path::new(&ctx.src.name)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    let path = base.join(&file);
    let help =
        "the path is read from the show file's folder; WAV, FLAC, Ogg Vorbis and MP3 are read";
    if file.trim().is_empty() {
        ctx.error_help(
            "show.music",
            span,
            "expected the name of a song file, got an empty string",
            help,
        );
        return None;
    }
    match crate::music::probe_file(&path) {
        Ok(_) => Some(Some(Music {
            file,
            path,
            offset: span.start,
        })),
        Err(e) => {
            // The message names the file as the show writes it.
            let why = e.to_string();
            let shown = path.display().to_string();
            let why = why.strip_prefix(&format!("{shown}: ")).unwrap_or(&why);
            ctx.error_help("show.music", span, format!("`{file}`: {why}"), help);
            None
        }
    }
}

/// The most turns of the fastest relative rotation, over all props and
/// sections, that the event search is asked to resolve.
pub const MAX_RELATIVE_TURNS: f64 = 2.0e6;

/// Refuses a show whose motion is too long or too fast to search for
/// events in reasonable time (a sane show has a few thousand turns).
fn check_work(ctx: &mut Ctx, root: Tbl<'_, '_>, show: &Show) {
    let bpb = f64::from(show.tempo.beats_per_bar());
    let mut turns = 0.0;
    // The section asking for the most, to point at: (turns, bars).
    let mut most = (0.0, (0, 0));
    for sec in &show.sections {
        let beats = f64::from(sec.last_bar - sec.first_bar + 1) * bpb;
        let mut here = 0.0;
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
            here += beats / pat.beats * finest;
        }
        turns += here;
        if here > most.0 {
            most = (here, (sec.first_bar, sec.last_bar));
        }
    }
    if turns <= MAX_RELATIVE_TURNS {
        return;
    }
    let (first, last) = most.1;
    // Where that section's `bars` is written.
    let written = match root.get("section").map(|v| v.get_ref()) {
        Some(DeValue::Array(a)) => a.iter().enumerate().find_map(|(i, v)| {
            let DeValue::Table(t) = v.get_ref() else {
                return None;
            };
            let bars = t.get("bars")?;
            let DeValue::Array(b) = bars.get_ref() else {
                return None;
            };
            let n: Vec<Option<f64>> = b.iter().map(|x| reader::as_number(x.get_ref())).collect();
            (n == [Some(f64::from(first)), Some(f64::from(last))])
                .then(|| (format!("section[{i}].bars"), bars.span()))
        }),
        _ => None,
    };
    let (key, span) = written.unwrap_or_else(|| ("section".into(), 0..0));
    ctx.diags.push(
        Diagnostic::error(format!(
            "the show asks for {} turns of spin in all, more than the {} glowscore simulates \
             (a long show is a few thousand); bars {first}-{last} alone ask for {}",
            reader::short(turns.round()),
            reader::short(MAX_RELATIVE_TURNS),
            reader::short(most.0.round()),
        ))
        .key(key)
        .at(&ctx.src, span)
        .help("check the sections' bars and the patterns' `beats` and turns"),
    );
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
