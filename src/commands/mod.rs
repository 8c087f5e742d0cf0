//! The commands of the `glowscore` program, callable without the CLI.
//!
//! Each command reads a show, runs the pipeline and writes its output; all
//! return [`Failure`] on error so that the binary can map it to an exit code.

pub mod check;
pub mod compile;
pub mod events;
pub mod preview;
pub mod rehearse;
pub mod tempo;

use std::fmt;

use crate::diag::Diagnostics;

/// Why a command failed: the show is invalid, or the work could not be done.
#[derive(Debug)]
pub enum Failure {
    /// The show file has errors (exit status 1).
    Invalid(Diagnostics),
    /// Reading or writing failed, or a limit was exceeded (exit status 1).
    Failed(String),
}

impl fmt::Display for Failure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Failure::Invalid(d) => write!(f, "{d}"),
            Failure::Failed(m) => writeln!(f, "error: {m}"),
        }
    }
}

impl std::error::Error for Failure {}

impl From<Diagnostics> for Failure {
    fn from(d: Diagnostics) -> Self {
        Failure::Invalid(d)
    }
}

/// Refuses a landing tolerance (`--tolerance-mm`) that is not a positive
/// number of millimetres.
pub fn check_tolerance(tolerance_mm: f64) -> Result<(), Failure> {
    if tolerance_mm.is_finite() && tolerance_mm > 0.0 {
        return Ok(());
    }
    Err(Failure::Failed(format!(
        "--tolerance-mm must be a positive number of millimetres, got {tolerance_mm}"
    )))
}
