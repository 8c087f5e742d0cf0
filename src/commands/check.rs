//! `glowscore check`: validates a show and prints its physics and stage
//! figures and warnings, as JSON or readable text.

use std::io::Write;
use std::path::Path;

use super::Failure;
use crate::check::{CheckReport, CheckSettings, check};

/// Checks the show at `path` and prints the report to `out`.
///
/// An invalid show, or one too large to check, fails with its errors (with
/// `json`, a report with `"valid": false` and the errors is printed first).
/// With `deny_warnings`, any warning makes the run fail after the report is
/// printed.
pub fn run(
    path: &Path,
    json: bool,
    deny_warnings: bool,
    tolerance_mm: f64,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    super::check_tolerance(tolerance_mm)?;
    let settings = CheckSettings {
        tolerance_mm,
        ..CheckSettings::default()
    };
    let io = Failure::output("the report");
    let report = super::prepare(path).and_then(|prepared| Ok(check(&prepared, &settings)?));
    let report = match report {
        Ok(report) => report,
        Err(failure) => {
            if json {
                let refused = match &failure {
                    Failure::Invalid(diags) => CheckReport::invalid(diags),
                    other => CheckReport::refused(
                        other
                            .to_string()
                            .trim_start_matches("error: ")
                            .trim_end()
                            .to_string(),
                    ),
                };
                refused.write_json(out).map_err(io)?;
            }
            return Err(failure);
        }
    };
    if json {
        report.write_json(out).map_err(&io)?;
    } else {
        report.write_text(out).map_err(&io)?;
    }
    let n = report.unexpected_warnings();
    if deny_warnings && n > 0 {
        return Err(Failure::Warnings(n));
    }
    Ok(())
}
