//! `glowscore compile`: the show into tables, previews and `report.json`.

use std::io::Write;
use std::path::{Path, PathBuf};

use super::Failure;
use crate::compile::{CompileOptions, compile};
use crate::output::TableForm;

/// The folder outputs go to when `--out` is not given: `out/<show name>`.
pub fn default_out_dir(show: &Path) -> PathBuf {
    let stem = show
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "show".into());
    PathBuf::from("out").join(stem)
}

/// Compiles the show at `path` and prints a short summary to `log`.
pub fn run(
    path: &Path,
    out: Option<&Path>,
    tolerance_mm: f64,
    header_form: TableForm,
    previews: bool,
    log: &mut dyn Write,
) -> Result<(), Failure> {
    super::check_tolerance(tolerance_mm)?;
    let prepared = super::prepare(path)?;
    let show = prepared.show();
    let dir = out
        .map(Path::to_path_buf)
        .unwrap_or_else(|| default_out_dir(path));
    let mut opts = CompileOptions::new(dir.clone());
    opts.tolerance_mm = tolerance_mm;
    opts.header_form = header_form;
    opts.previews = previews;
    let (summary, report) = compile(&prepared, &opts)?;
    let io = Failure::output("the summary");
    writeln!(
        log,
        "compiled `{}`: {} frames at {} frames/s ({:.2} s) into {}",
        if summary.title.is_empty() {
            path.display().to_string()
        } else {
            summary.title.clone()
        },
        summary.frames,
        summary.frame_rate_hz,
        summary.duration_s,
        dir.display()
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
    if !summary.previews.is_empty() {
        writeln!(log, "  previews: {}", summary.previews.join(", ")).map_err(&io)?;
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
