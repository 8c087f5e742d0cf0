//! `glowscore check`: validates a show and prints its physics and stage
//! figures and warnings, as JSON or readable text.

use std::io::Write;
use std::path::Path;

use super::Failure;
use crate::check::{CheckReport, CheckSettings, check};

/// Checks the show at `path` and prints the report to `out`.
///
/// An invalid show fails with its diagnostics (with `json`, a report with
/// `"valid": false` and the errors is printed first). With `deny_warnings`,
/// any warning makes the run fail after the report is printed.
pub fn run(
    path: &Path,
    json: bool,
    deny_warnings: bool,
    tolerance_mm: f64,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    super::check_tolerance(tolerance_mm)?;
    let io = |e: std::io::Error| Failure::Failed(format!("cannot write the report: {e}"));
    let show = match crate::show::load(path) {
        Ok(show) => show,
        Err(diags) => {
            if json {
                CheckReport::invalid(&diags).write_json(out).map_err(io)?;
            }
            return Err(Failure::Invalid(diags));
        }
    };
    let settings = CheckSettings {
        tolerance_mm,
        ..CheckSettings::default()
    };
    let motions = crate::motion::simulate(&show);
    let report = check(&show, &motions, &settings).map_err(|e| Failure::Failed(e.to_string()))?;
    if json {
        report.write_json(out).map_err(io)?;
    } else {
        report.write_text(out).map_err(io)?;
    }
    let n = report.warnings.len();
    if deny_warnings && n > 0 {
        return Err(Failure::Failed(format!(
            "{n} warning{} and --deny-warnings was given",
            if n == 1 { "" } else { "s" }
        )));
    }
    Ok(())
}
