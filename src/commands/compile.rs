//! `glowscore compile`: the show into tables, previews and `report.json`,
//! with a summary of what was written (stdout) and progress (stderr, on a
//! terminal only).

use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::time::Duration;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use super::Failure;
use crate::compile::{CompileOptions, Step, compile_with_progress};
use crate::output::TableForm;

/// The folder outputs go to when `--out` is not given: `out/<show name>`.
pub fn default_out_dir(show: &Path) -> PathBuf {
    let stem = show
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "show".into());
    PathBuf::from("out").join(stem)
}

/// How `glowscore compile` runs, besides the output folder.
#[derive(Clone, Debug)]
pub struct RunOptions {
    /// Landing tolerance along the head's path, millimetres.
    pub tolerance_mm: f64,
    /// Which binary form the C header embeds.
    pub header_form: TableForm,
    /// Whether to render the previews.
    pub previews: bool,
    /// The text forms to leave out (`csv`, `header`).
    pub skip: Vec<String>,
    /// No progress and no summary: only errors are printed.
    pub quiet: bool,
}

/// Progress on stderr while the tables are written and the previews
/// rendered, drawn only when stderr is a terminal (never into a pipe or a
/// file) and the run is not quiet.
struct Progress {
    bar: Option<ProgressBar>,
}

impl Progress {
    fn new(quiet: bool) -> Self {
        let bar = (!quiet && std::io::stderr().is_terminal()).then(|| {
            let b = ProgressBar::with_draw_target(Some(1), ProgressDrawTarget::stderr());
            if let Ok(style) = ProgressStyle::with_template("writing tables {bar:40} {percent:>3}%")
            {
                b.set_style(style);
            }
            b
        });
        Progress { bar }
    }

    fn step(&self, step: Step) {
        let Some(b) = &self.bar else { return };
        match step {
            Step::Tables { done, frames } => {
                b.set_length(frames.max(1));
                b.set_position(done);
            }
            Step::Previews { count } => {
                if let Ok(style) = ProgressStyle::with_template("{spinner} {msg} {elapsed}") {
                    b.set_style(style);
                }
                b.set_message(format!(
                    "rendering {count} preview{}",
                    if count == 1 { "" } else { "s" }
                ));
                b.enable_steady_tick(Duration::from_millis(120));
            }
        }
    }

    fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}

/// Compiles the show at `path` into `out` (default [`default_out_dir`])
/// and prints a short summary to `log` (unless `opts.quiet`); progress goes
/// to stderr on a terminal.
pub fn run(
    path: &Path,
    out: Option<&Path>,
    run: &RunOptions,
    log: &mut dyn Write,
) -> Result<(), Failure> {
    super::check_tolerance(run.tolerance_mm)?;
    if let Some(bad) = run
        .skip
        .iter()
        .find(|k| !crate::compile::SKIPPABLE.contains(&k.as_str()))
    {
        return Err(Failure::Option(format!(
            "--skip `{}`: only the text forms, csv and header, may be left out",
            crate::diag::escape(bad)
        )));
    }
    let prepared = super::prepare(path)?;
    let show = prepared.show();
    let dir = out
        .map(Path::to_path_buf)
        .unwrap_or_else(|| default_out_dir(path));
    let mut opts = CompileOptions::new(dir.clone());
    opts.tolerance_mm = run.tolerance_mm;
    opts.header_form = run.header_form;
    opts.previews = run.previews;
    opts.skip.clone_from(&run.skip);
    let progress = Progress::new(run.quiet);
    let compiled = compile_with_progress(&prepared, &opts, &|s| progress.step(s));
    progress.finish();
    let (summary, report) = compiled?;
    if run.quiet {
        return Ok(());
    }
    let io = Failure::output("the summary");
    writeln!(
        log,
        "compiled `{}`: {} frames at {} frames/s ({:.3} s long) into {}",
        crate::diag::escape(&if summary.title.is_empty() {
            path.display().to_string()
        } else {
            summary.title.clone()
        }),
        summary.frames,
        summary.frame_rate_hz,
        summary.duration_s,
        crate::diag::escape(&dir.display().to_string())
    )
    .map_err(&io)?;
    for (name, t) in &summary.tables {
        let files: Vec<String> = t
            .files
            .iter()
            .map(|(_, f)| format!("{} {} B", f.file, f.bytes))
            .collect();
        writeln!(
            log,
            "  {name}: {} LED{} ({}): {}",
            t.leds,
            if t.leds == 1 { "" } else { "s" },
            t.wire_order,
            files.join(", ")
        )
        .map_err(&io)?;
    }
    for p in &report.props {
        if let Some(h) = &p.hardware {
            let memory = h.memory_phrase();
            let sep = if memory.is_empty() { "" } else { ", " };
            writeln!(
                log,
                "  {}: LED line up to {:.0} frames/s, clock drift up to {:.1} ms{sep}{memory}",
                p.name, h.max_frame_rate_hz, h.drift_ms
            )
            .map_err(&io)?;
        }
    }
    if let Some(w) = &summary.worst_landing {
        let cue = &show.cues[w.cue];
        writeln!(
            log,
            "  worst landing: {:.2} mm along the path ({:+.3} ms, {:.2} deg of tether turn), cue {} (`{}` on `{}`)",
            w.error_mm,
            w.error_ms,
            w.error_deg,
            w.cue,
            cue.at_name(),
            show.props[w.prop].name
        )
        .map_err(&io)?;
    }
    for (i, c) in summary.preview_choices.iter().enumerate() {
        let lead = if i == 0 {
            "  previews: "
        } else {
            "            "
        };
        writeln!(log, "{lead}{} ({})", c.file, c.words).map_err(&io)?;
    }
    let expected = summary.warnings - report.unexpected_warnings();
    writeln!(
        log,
        "  {} warning{} in report.json{}{}",
        summary.warnings,
        if summary.warnings == 1 { "" } else { "s" },
        if expected > 0 {
            format!(", {expected} of them expected by the show")
        } else {
            String::new()
        },
        if summary.warnings > 0 {
            " (run `glowscore check` to read them)"
        } else {
            ""
        }
    )
    .map_err(&io)?;
    Ok(())
}
