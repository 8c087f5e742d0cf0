//! The main job: a show compiled into per-prop frame tables, previews and a
//! report, written so that a failed run leaves earlier outputs untouched.
//!
//! Everything is first written into a staging folder inside the output
//! folder; only when every file is complete are they renamed into place.
//! Tables are streamed frame by frame (one frame buffer per prop), one prop
//! per thread.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use rayon::prelude::*;
use serde::Serialize;

use crate::check::light::{LightScan, LightTally};
use crate::check::{CheckReport, CheckSettings, FrameFigures};
use crate::cues::Landing;
use crate::folder::Folder;
use crate::model::Show;
use crate::output::files::{FileError, Opening, PropFiles, PropTables};
use crate::output::{TableForm, TableSpec};
use crate::prepared::Prepared;
use crate::preview::{self, PreviewOptions};

/// Most frames a show may have.
pub const MAX_FRAMES: u64 = 100_000_000;
/// Most bytes all full binary tables of a show may take together (2 GiB).
pub const MAX_TABLE_BYTES: u64 = 2 << 30;
/// Most bytes everything a compile writes may take together (4 GiB), as
/// counted before writing by [`output_bytes`].
pub const MAX_OUTPUT_BYTES: u64 = 4 << 30;
/// The formats `--skip` may leave out: the text forms.
pub const SKIPPABLE: [&str; 2] = ["csv", "header"];

/// How to compile.
#[derive(Clone, Debug)]
pub struct CompileOptions {
    /// The folder the outputs go to (created if missing).
    pub out_dir: PathBuf,
    /// Landing tolerance along the head's path, millimetres.
    pub tolerance_mm: f64,
    /// Which binary form the C header embeds.
    pub header_form: TableForm,
    /// Whether to render previews (one per section and one of the whole show).
    pub previews: bool,
    /// How to render them.
    pub preview: PreviewOptions,
    /// Keys of the text forms not to write: `csv`, `header`.
    pub skip: Vec<String>,
}

impl CompileOptions {
    /// Defaults for output folder `out_dir`: 10 mm tolerance, compact C
    /// header, previews on.
    pub fn new(out_dir: PathBuf) -> Self {
        CompileOptions {
            out_dir,
            tolerance_mm: 10.0,
            header_form: TableForm::Compact,
            previews: true,
            preview: PreviewOptions::default(),
            skip: Vec::new(),
        }
    }
}

/// What a compile produced.
#[derive(Clone, Debug, Serialize)]
pub struct CompileSummary {
    /// Show title.
    pub title: String,
    /// Frames per second.
    pub frame_rate_hz: u32,
    /// Frames in every table.
    pub frames: u64,
    /// Length of the show, seconds.
    pub duration_s: f64,
    /// Tables per prop, in prop order.
    pub tables: Vec<(String, PropTables)>,
    /// Preview file names.
    pub previews: Vec<String>,
    /// What each preview shows, in the order of `previews`.
    pub preview_choices: Vec<PreviewChoice>,
    /// The landing furthest along the head's path, if any change was placed.
    #[serde(skip)]
    pub worst_landing: Option<Landing>,
    /// Warnings in the check report.
    pub warnings: usize,
    /// Props dimmed by `brightness_limit`, with the scale applied.
    pub dimmed: Vec<(String, f64)>,
    /// The song the tables belong to (a show with `music`).
    pub music: Option<SongRecord>,
}

/// What one preview shows and why: an entry of `compile.preview_choices`
/// in `report.json` (docs/conventions.md, "Section previews").
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PreviewChoice {
    /// The file's name.
    pub file: String,
    /// The section's first and last bar; `None` for the whole show.
    pub bars: Option<[u32; 2]>,
    /// `front`, `side` or `top`; `camera` for the pinhole the options gave.
    pub view: &'static str,
    /// `show` (the whole show), `section` (the whole section) or `figures`
    /// (whole figures from the section's start, fewer than it holds).
    pub exposure: &'static str,
    /// Whole figures in the exposure (0: the section is shorter than one
    /// figure, or no figure closes; `None` for the whole show).
    pub figures: Option<u32>,
    /// Beats one figure takes to close (`None`: no figure closes, or the
    /// whole show).
    #[serde(serialize_with = "opt_r9")]
    pub figure_beats: Option<f64>,
    /// Shutter open and close, seconds from frame 0.
    pub window_s: [f64; 2],
    /// `show` (exposed with the whole show, in its framing) or `own`.
    pub framing: &'static str,
    /// The choice in words, as the summary prints it.
    pub words: String,
}

impl PreviewChoice {
    /// The record of preview `w` of `show`.
    pub fn of(w: &preview::Written, show: &crate::model::Show) -> PreviewChoice {
        use preview::choice::Exposure;
        let r9 = |x: f64| crate::num::round_to(x, 9);
        let (exposure, figures, figure_beats, window_s) = match &w.choice {
            None => ("show", None, None, [0.0, r9(show.end_s())]),
            Some(c) => {
                let (kind, n, f) = match c.exposure {
                    Exposure::Figures {
                        count,
                        figure_beats,
                        covers_section,
                    } => (
                        if covers_section { "section" } else { "figures" },
                        count,
                        Some(figure_beats),
                    ),
                    Exposure::PartFigure { figure_beats } => ("section", 0, Some(figure_beats)),
                    Exposure::NoFigure => ("section", 0, None),
                };
                (kind, Some(n), f, [r9(c.window_s.0), r9(c.window_s.1)])
            }
        };
        PreviewChoice {
            file: w.file_name(),
            bars: w.choice.map(|c| {
                let sec = &show.sections[c.section];
                [sec.first_bar, sec.last_bar]
            }),
            view: w.view.map_or("camera", preview::View::name),
            exposure,
            figures,
            figure_beats,
            window_s,
            framing: if w.shared { "show" } else { "own" },
            words: w.words(show),
        }
    }
}

fn opt_r9<S: serde::Serializer>(x: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    match x {
        Some(v) => s.serialize_some(&crate::num::round_to(*v, 9)),
        None => s.serialize_none(),
    }
}

/// Which song a compile's tables belong to: `compile.music` in
/// `report.json`. The song itself is not copied.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SongRecord {
    /// The song's file name (without its folder).
    pub file: String,
    /// Its size, bytes.
    pub bytes: u64,
    /// Length of its audio, seconds.
    #[serde(serialize_with = "crate::check::report::r9")]
    pub duration_s: f64,
    /// CRC-32 (IEEE 802.3) of the file's bytes, eight lower-case hex digits.
    pub crc32: String,
}

/// Why a compile failed.
#[derive(Debug, thiserror::Error)]
pub enum CompileError {
    /// The tables would be larger than the limits.
    #[error(
        "the tables would be too large: {frames} frames ({seconds:.1} s at {rate} frames/s) x {leds} LEDs in all = {bytes} bytes; the limits are {MAX_FRAMES} frames and {MAX_TABLE_BYTES} bytes; they come from {drivers} (lower `show.frame_rate`, shorten the show or use fewer LEDs)"
    )]
    TooLarge {
        /// Frames in every table.
        frames: u64,
        /// The show's length, seconds.
        seconds: f64,
        /// Frames per second.
        rate: u32,
        /// LEDs of every prop together.
        leds: u32,
        /// Bytes of every full table together.
        bytes: u64,
        /// The keys that set the frames and LEDs, located.
        drivers: String,
    },
    /// Everything compile would write is larger than [`MAX_OUTPUT_BYTES`].
    #[error(
        "the outputs would take up to {} in all ({parts}), more than the limit of {}; they come from {drivers}: {advice}",
        size(*total), size(MAX_OUTPUT_BYTES)
    )]
    TooMuchOutput {
        /// Bytes of every output together, at most.
        total: u64,
        /// Each kind of output's share.
        parts: String,
        /// The keys that set the number of frames and LEDs, located.
        drivers: String,
        /// The options (or show changes) that bring it under the limit.
        advice: String,
    },
    /// The output folder could not be locked, prepared or updated.
    #[error("{0}")]
    Folder(#[from] crate::folder::FolderError),
    /// A file or folder could not be made, written or moved into place.
    #[error("cannot write `{}`: {}", path.display(), crate::diag::io_phrase(source))]
    Io {
        /// The file or folder.
        path: PathBuf,
        /// The cause.
        #[source]
        source: std::io::Error,
    },
    /// A table file could not be written.
    #[error("{0}")]
    File(#[from] FileError),
    /// The check could not run.
    #[error("{0}")]
    Check(#[from] crate::check::CheckError),
    /// A preview could not be rendered.
    #[error(
        "{0}; the tables were not written either: compile with --no-previews, and take pictures of parts of the show with `glowscore preview --bars A-B`"
    )]
    Preview(#[from] preview::PreviewError),
}

impl CompileError {
    /// A failure to write `path`.
    fn io(path: &Path) -> impl Fn(std::io::Error) -> CompileError + '_ {
        move |source| CompileError::Io {
            path: path.to_path_buf(),
            source,
        }
    }
}

/// Refuses a show whose tables would exceed [`MAX_FRAMES`] or
/// [`MAX_TABLE_BYTES`], before anything is allocated.
pub fn check_limits(show: &Show) -> Result<u32, CompileError> {
    let frames = show.frame_count();
    let bytes: u64 = show
        .props
        .iter()
        .map(|p| frames.saturating_mul(u64::from(p.leds) * p.wire_order.bytes_per_led() as u64))
        .sum();
    if frames > MAX_FRAMES || bytes > MAX_TABLE_BYTES {
        let leds: u32 = show.props.iter().map(|p| p.leds).sum();
        return Err(CompileError::TooLarge {
            frames,
            seconds: show.end_s(),
            rate: show.frame_rate_hz,
            leds,
            bytes,
            drivers: show.frame_cost_drivers(),
        });
    }
    Ok(frames as u32)
}

/// Where a compile has got to, for a progress display.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Step {
    /// Writing the tables: `done` of `frames` frames written.
    Tables {
        /// Frames written so far (of every prop).
        done: u64,
        /// Frames in the show.
        frames: u64,
    },
    /// Rendering the previews: the whole show and one per section.
    Previews {
        /// Pictures to render.
        count: usize,
    },
}

/// Bytes in words: `812 MB`, `8.80 GB` (decimal units).
fn size(bytes: u64) -> String {
    let b = bytes as f64;
    if b >= 1e9 {
        format!("{:.2} GB", b / 1e9)
    } else if b >= 1e6 {
        format!("{:.0} MB", b / 1e6)
    } else {
        format!("{bytes} B")
    }
}

/// The most bytes each kind of output of a compile with `opts` can take,
/// counted before anything is written: (`csv`, `full`, `compact`,
/// `program`, `header`, `previews`, `report`), every prop together.
/// `programs` are the props' program forms' sizes, in prop order (they are
/// made before the frames; a missing one counts as 0). Each figure is an
/// upper bound: a CSV row with every value three digits long, a compact
/// table no larger than the full one (its encoder stores a run only where
/// that saves bytes), previews as PNGs that did not compress; the full
/// table, the program form and the C header of either are exact.
pub fn output_bytes(
    show: &Show,
    opts: &CompileOptions,
    programs: &[u64],
) -> Vec<(&'static str, u64)> {
    let frames = show.frame_count();
    let digits = |n: u64| n.max(1).ilog10() as u64 + 1;
    let wanted = |k: &str| !opts.skip.iter().any(|s| s == k);
    let (mut csv, mut full, mut header) = (0u64, 0u64, 0u64);
    // The time column: whole seconds, a point and six decimals.
    let time_text = digits(show.end_s().ceil() as u64) + 7;
    let frame_count = frames.min(u64::from(u32::MAX)) as u32;
    let marks = crate::output::resync_marks(show, frame_count).len();
    for (i, p) in show.props.iter().enumerate() {
        let leds = u64::from(p.leds);
        let head: u64 = 12 + (0..leds).map(|i| 6 + 3 * digits(i)).sum::<u64>() + 1;
        let row = digits(frames) + 1 + time_text + 12 * leds + 1;
        csv = csv.saturating_add(head.saturating_add(frames.saturating_mul(row)));
        let table = frames.saturating_mul(leds * p.wire_order.bytes_per_led() as u64)
            + (crate::output::header_len(marks) + crate::output::TRAILER_LEN) as u64;
        full = full.saturating_add(table);
        let embedded = match opts.header_form {
            TableForm::Program => programs.get(i).copied().unwrap_or(0),
            TableForm::Full | TableForm::Compact => table,
        };
        let spec = TableSpec {
            frame_rate_hz: show.frame_rate_hz,
            leds: p.leds,
            order: p.wire_order,
            frame_count,
        };
        header = header.saturating_add(crate::output::c_header_bytes(
            &spec,
            &p.name,
            opts.header_form,
            embedded,
        ));
    }
    let previews = if opts.previews {
        let (w, h) = opts.preview.size.unwrap_or(preview::DEFAULT_SIZE);
        let png = u64::from(h) * (3 * u64::from(w) + 1);
        // zlib's stored blocks and the PNG chunks: well under 1 % and 4 kB.
        let one = png + png / 100 + 4096;
        one.saturating_mul(show.sections.len() as u64 + 1)
    } else {
        0
    };
    let report = 1 << 20;
    vec![
        ("csv", if wanted("csv") { csv } else { 0 }),
        ("full", full),
        ("compact", full),
        ("program", programs.iter().sum()),
        ("header", if wanted("header") { header } else { 0 }),
        ("previews", previews),
        ("report", report),
    ]
}

/// Refuses a compile whose outputs could take more than
/// [`MAX_OUTPUT_BYTES`], with each output's share, what drives it and the
/// options that avoid it.
pub fn check_output_size(
    show: &Show,
    opts: &CompileOptions,
    programs: &[u64],
) -> Result<(), CompileError> {
    let parts = output_bytes(show, opts, programs);
    let total = parts.iter().fold(0u64, |a, (_, b)| a.saturating_add(*b));
    if total <= MAX_OUTPUT_BYTES {
        return Ok(());
    }
    let share = |k: &str| parts.iter().find(|p| p.0 == k).map_or(0, |p| p.1);
    let mut advice = Vec::new();
    let mut left = total;
    // The largest saving first, until the rest fits.
    let mut options = [
        ("previews", "--no-previews"),
        ("csv", "--skip csv"),
        ("header", "--skip header"),
    ];
    options.sort_by_key(|(key, _)| std::cmp::Reverse(share(key)));
    for (key, option) in options {
        if share(key) > 0 && left > MAX_OUTPUT_BYTES {
            advice.push(format!("{option} (saves up to {})", size(share(key))));
            left -= share(key);
        }
    }
    let advice = if left <= MAX_OUTPUT_BYTES {
        format!("give {}", advice.join(" and "))
    } else {
        "lower `show.frame_rate`, shorten the show or use fewer LEDs".to_string()
    };
    let shown: Vec<String> = parts
        .iter()
        .filter(|p| p.1 > 0 && p.0 != "report")
        .map(|(k, b)| format!("{k} {}", size(*b)))
        .collect();
    Err(CompileError::TooMuchOutput {
        total,
        parts: shown.join(", "),
        drivers: show.frame_cost_drivers(),
        advice,
    })
}

/// Compiles the prepared show into `opts.out_dir`.
pub fn compile(
    prepared: &Prepared,
    opts: &CompileOptions,
) -> Result<(CompileSummary, CheckReport), CompileError> {
    compile_with_progress(prepared, opts, &|_| {})
}

/// [`compile`], telling `progress` where it has got to as it goes.
pub fn compile_with_progress(
    prepared: &Prepared,
    opts: &CompileOptions,
    progress: &(dyn Fn(Step) + Sync),
) -> Result<(CompileSummary, CheckReport), CompileError> {
    let show = prepared.show();
    let frames = check_limits(show)?;
    let programs = program_forms(prepared, frames)?;
    let sizes: Vec<u64> = programs.iter().map(|p| p.len() as u64).collect();
    check_output_size(show, opts, &sizes)?;
    let settings = CheckSettings {
        tolerance_mm: opts.tolerance_mm,
        ..CheckSettings::default()
    };
    crate::check::within_budget(prepared, &settings)?;
    let folder = Folder::open(&opts.out_dir)?;
    let (summary, report) = write_all(
        prepared,
        &settings,
        opts,
        &programs,
        folder.staging(),
        progress,
    )?;
    let mut names: Vec<String> = summary
        .tables
        .iter()
        .flat_map(|(_, t)| t.files.iter().map(|(_, f)| f.file.clone()))
        .collect();
    names.extend(summary.previews.iter().cloned());
    names.push("report.json".into());
    folder.commit(&names)?;
    Ok((summary, report))
}

/// Writes every file into `dir`: the tables (gathering the light figures as
/// the frames go by), the previews, then the check report.
fn write_all(
    prepared: &Prepared,
    settings: &CheckSettings,
    opts: &CompileOptions,
    programs: &[Vec<u8>],
    dir: &Path,
    progress: &(dyn Fn(Step) + Sync),
) -> Result<(CompileSummary, CheckReport), CompileError> {
    let (show, lights) = (prepared.show(), prepared.lights());
    // Within u32: `check_limits` has passed.
    let frames = show.frame_count() as u32;
    // The previews read every frame again: with the frames kept (made
    // once, first, in parallel), the tables, the light figures and the
    // pictures all read the same frames and none is made twice. The
    // pictures are drawn while the tables are written, and the checks of
    // the motion alone run beside all of it from the start.
    let previews = opts.previews;
    let ((written, pictures), (motion, music)) = rayon::join(
        || {
            if previews {
                prepared.keep_frames();
            }
            rayon::join(
                || {
                    let written = write_tables(prepared, frames, opts, programs, dir, progress);
                    if previews {
                        progress(Step::Previews {
                            count: show.sections.len() + 1,
                        });
                    }
                    written
                },
                || previews.then(|| preview::write_previews(prepared, dir, &opts.preview)),
            )
        },
        // `compile` checked the budget before anything was written.
        || {
            rayon::join(
                || crate::check::motion_figures(prepared, settings),
                || crate::check::music::scan(prepared),
            )
        },
    );
    let (tables, figures) = written?;
    let motion = motion?;
    let report = crate::check::report_of(prepared, motion, figures, music?, settings);
    let preview_choices: Vec<PreviewChoice> = match pictures {
        Some(p) => p?.iter().map(|w| PreviewChoice::of(w, show)).collect(),
        None => Vec::new(),
    };
    let previews = preview_choices.iter().map(|c| c.file.clone()).collect();
    let worst_landing = lights
        .landings
        .iter()
        .max_by(|a, b| a.error_mm.total_cmp(&b.error_mm))
        .cloned();
    let summary = CompileSummary {
        title: show.title.clone(),
        frame_rate_hz: show.frame_rate_hz,
        frames: u64::from(frames),
        duration_s: show.end_s(),
        tables,
        previews,
        preview_choices,
        worst_landing,
        warnings: report.warnings.len(),
        dimmed: (0..show.props.len())
            .filter_map(|i| {
                let k = prepared.brightness_scale(i).filter(|&k| k < 1.0)?;
                Some((show.props[i].name.clone(), k))
            })
            .collect(),
        // Heard already: the check's music scan succeeded.
        music: prepared.song().and_then(Result::ok).map(|s| SongRecord {
            file: s.file_name.clone(),
            bytes: s.bytes,
            duration_s: s.duration_s,
            crc32: format!("{:08x}", s.crc32),
        }),
    };
    write_report(&dir.join("report.json"), &summary, &report)?;
    Ok((summary, report))
}

/// `report.json`: the check report, then the compile's own section.
#[derive(Serialize)]
struct ReportFile<'a> {
    #[serde(flatten)]
    check: &'a CheckReport,
    compile: CompileSection<'a>,
}

/// The `compile` section of `report.json`.
#[derive(Serialize)]
struct CompileSection<'a> {
    frame_rate_hz: u32,
    frames: u64,
    duration_s: f64,
    /// Per prop, its files.
    #[serde(serialize_with = "pairs_as_map")]
    tables: &'a [(String, PropTables)],
    previews: &'a [String],
    /// What each preview shows, in the order of `previews`.
    preview_choices: &'a [PreviewChoice],
    /// Per dimmed prop, the scale `brightness_limit` applied.
    #[serde(serialize_with = "pairs_as_map")]
    brightness_scale_applied: &'a [(String, f64)],
    /// The song the tables belong to (left out without `music`).
    #[serde(skip_serializing_if = "Option::is_none")]
    music: Option<&'a SongRecord>,
}

/// Serialises `(name, value)` pairs as a JSON object, in their order.
fn pairs_as_map<S: serde::Serializer, T: Serialize>(
    pairs: &&[(String, T)],
    s: S,
) -> Result<S::Ok, S::Error> {
    s.collect_map(pairs.iter().map(|(k, v)| (k, v)))
}

/// Writes `report.json`: the check report with the tables and previews added.
fn write_report(
    path: &Path,
    summary: &CompileSummary,
    report: &CheckReport,
) -> Result<(), CompileError> {
    let io = CompileError::io(path);
    let file = ReportFile {
        check: report,
        compile: CompileSection {
            frame_rate_hz: summary.frame_rate_hz,
            frames: summary.frames,
            // Rounded as the check's `duration_s` is: the same figure.
            duration_s: crate::num::round_to(summary.duration_s, 9),
            tables: &summary.tables,
            previews: &summary.previews,
            preview_choices: &summary.preview_choices,
            brightness_scale_applied: &summary.dimmed,
            music: summary.music.as_ref(),
        },
    };
    let mut f = BufWriter::new(File::create(path).map_err(&io)?);
    serde_json::to_writer_pretty(&mut f, &file).map_err(|e| io(e.into()))?;
    writeln!(f).map_err(&io)?;
    f.flush().map_err(&io)
}

/// The table description of `prop` in a show of `frames` frames.
fn spec_of(show: &Show, prop: &crate::model::Prop, frames: u32) -> TableSpec {
    TableSpec {
        frame_rate_hz: show.frame_rate_hz,
        leds: prop.leds,
        order: prop.wire_order,
        frame_count: frames,
    }
}

/// Every prop's program form, in prop order: made from the prepared show
/// before the frames, so that its size is known before anything is written.
fn program_forms(prepared: &Prepared, frames: u32) -> Result<Vec<Vec<u8>>, CompileError> {
    let show = prepared.show();
    let programs = show.props.iter().enumerate().map(|(i, p)| {
        crate::output::program::encode(prepared, i, &spec_of(show, p, frames)).map_err(|source| {
            FileError {
                file: format!("{}.prog.bin", p.name),
                source,
            }
        })
    });
    Ok(programs.collect::<Result<_, _>>()?)
}

/// Streams every frame of every prop into its files ([`crate::output::FORMATS`]), block by
/// block, and gathers the figures the check reads off the frames on the way.
fn write_tables(
    prepared: &Prepared,
    frames: u32,
    opts: &CompileOptions,
    programs: &[Vec<u8>],
    dir: &Path,
    progress: &(dyn Fn(Step) + Sync),
) -> Result<(Vec<(String, PropTables)>, FrameFigures), CompileError> {
    let (show, lights) = (prepared.show(), prepared.lights());
    let spec = |p: &crate::model::Prop| spec_of(show, p, frames);
    let marks = crate::output::resync_marks(show, frames);
    let (header_form, skip) = (opts.header_form, opts.skip.as_slice());
    let mut writers: Vec<PropFiles> = show
        .props
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let opening = Opening {
                spec: spec(p),
                prop: &p.name,
                header_form,
                marks: &marks,
                program: &programs[i],
                skip,
            };
            PropFiles::open(dir, i, &opening)
        })
        .collect::<Result<_, _>>()?;
    let mut tally = LightTally::new(show);
    prepared.for_each_block(|k0, n, blocks| {
        progress(Step::Tables {
            done: k0,
            frames: u64::from(frames),
        });
        let (written, ()) = rayon::join(
            || {
                writers
                    .par_iter_mut()
                    .zip(blocks)
                    .try_for_each(|(w, block)| w.push_block(block, n))
            },
            || {
                if let Some(t) = tally.as_mut() {
                    t.push_block(show, lights, n, blocks);
                }
            },
        );
        written
    })?;
    progress(Step::Tables {
        done: u64::from(frames),
        frames: u64::from(frames),
    });
    let tables: Vec<(String, PropTables)> = writers
        .into_iter()
        .zip(&show.props)
        .map(|(w, p)| {
            w.finish(p.leds, p.wire_order.name())
                .map(|t| (p.name.clone(), t))
        })
        .collect::<Result<_, _>>()?;
    let light = tally.map_or_else(LightScan::default, |t| t.finish(show));
    let figures = FrameFigures {
        light,
        compact_table_bytes: tables
            .iter()
            .map(|(_, t)| t.file("compact").map(|f| f.bytes))
            .collect(),
    };
    Ok((tables, figures))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::output::files::THREADED_PROPS;
    use std::fs;

    #[test]
    fn many_props_start_a_bounded_number_of_writing_threads() {
        // Each prop has four files; a thread for every file of 200 props
        // would be 800 threads (thousands of props exhaust the system's
        // threads and abort the process): only the first THREADED_PROPS
        // props' files get threads of their own.
        let mut text = String::from("[show]\nframe_rate = 10\nbpm = 60\nbeats_per_bar = 1\n");
        for i in 0..200 {
            text += &format!("[prop.p{i}]\ntether_m = 0.5\nanchor_m = [0.0, 1.4, 0.0]\n");
        }
        text += "[pattern.w]\nplane = \"wall\"\nbeats = 1\nhand_radius_m = 0.1\nhead_turns = 1\n";
        text += "[[section]]\nbars = [1, 1]\np0 = \"w\"\n";
        let show = crate::show::parse("many.toml", text).unwrap();
        let dir = std::env::temp_dir().join(format!("glowscore-threads-{}", std::process::id()));
        fs::create_dir_all(&dir).unwrap();
        let writers: Vec<PropFiles> = show
            .props
            .iter()
            .enumerate()
            .map(|(i, p)| {
                let opening = Opening {
                    spec: TableSpec {
                        frame_rate_hz: 10,
                        leds: p.leds,
                        order: p.wire_order,
                        frame_count: 10,
                    },
                    prop: &p.name,
                    header_form: TableForm::Full,
                    marks: &[],
                    program: &[],
                    skip: &[],
                };
                PropFiles::open(&dir, i, &opening).unwrap()
            })
            .collect();
        let threaded: Vec<usize> = writers
            .iter()
            .enumerate()
            .filter(|(_, w)| w.threaded())
            .map(|(i, _)| i)
            .collect();
        drop(writers);
        let _ = fs::remove_dir_all(&dir);
        assert_eq!(threaded, (0..THREADED_PROPS).collect::<Vec<_>>());
    }

    #[test]
    fn files_written_without_a_thread_hold_the_same_bytes() {
        // Props beyond THREADED_PROPS are written on the frames' thread: two
        // props that play the same (the first and the last of ten) get the
        // same tables, and headers that differ only in the prop's name.
        let mut text = String::from("[show]\nframe_rate = 200\nbpm = 120\nbeats_per_bar = 4\n");
        let n = THREADED_PROPS + 2;
        for i in 0..n {
            text += &format!(
                "[prop.p{i}]\ntether_m = 0.5\nanchor_m = [0.0, 1.4, 0.0]\n\
                 strip = {{ leds = 40, from_m = 0.05, to_m = 0.5 }}\n"
            );
        }
        text += "[pattern.w]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0.1\nhead_turns = -3\n";
        text += "[[section]]\nbars = [1, 8]\n";
        for i in 0..n {
            text += &format!("p{i} = \"w\"\n");
        }
        for i in 0..n {
            text += &format!(
                "[[cue]]\nprop = \"p{i}\"\nbars = [1, 8]\nat = \"tip\"\nalong = \"gradient\"\n\
                 colours = [\"gold\", \"teal\", \"crimson\"]\nfade_beats = 0.5\n"
            );
        }
        let show = crate::show::parse("same.toml", text).unwrap();
        let dir = std::env::temp_dir().join(format!("glowscore-here-{}", std::process::id()));
        let mut opts = CompileOptions::new(dir.clone());
        opts.previews = false;
        compile(&Prepared::new(show).unwrap(), &opts).unwrap();
        let last = format!("p{}", n - 1);
        for ext in ["csv", "full.bin", "compact.bin", "h"] {
            let a = fs::read(dir.join(format!("p0.{ext}"))).unwrap();
            let b = fs::read(dir.join(format!("{last}.{ext}"))).unwrap();
            let b = if ext == "h" {
                String::from_utf8(b)
                    .unwrap()
                    .replace(&last, "p0")
                    .replace(&last.to_uppercase(), "P0")
                    .into_bytes()
            } else {
                b
            };
            assert!(a.len() > 1000, "{ext}: {} bytes", a.len());
            assert!(a == b, "p0.{ext} and {last}.{ext} differ");
        }
        let _ = fs::remove_dir_all(&dir);
    }
}
