//! The commands of the `glowscore` program, callable without the CLI.
//!
//! Each command reads a show, makes its one [`Prepared`] value (motion,
//! events and frame colours, made once) and writes its output from it; all
//! return [`Failure`] on error so that the binary can map it to an exit code.

pub mod check;
pub mod compile;
pub mod events;
pub mod new;
pub mod patterns;
pub mod play;
pub mod preview;
pub mod rehearse;
pub mod tempo;

use std::path::Path;

use crate::check::CheckError;
use crate::compile::CompileError;
use crate::diag::Diagnostics;
use crate::prepared::{PrepareError, Prepared};
use crate::preview::PreviewError;

/// Why a command failed. Every variant is exit status 1.
#[derive(Debug, thiserror::Error)]
pub enum Failure {
    /// The show file has errors.
    #[error("{0}")]
    Invalid(Diagnostics),
    /// The show is valid but too large to prepare.
    #[error("error: {0}\n")]
    Prepare(#[from] PrepareError),
    /// The check could not run (too much work).
    #[error("error: {0}\n")]
    Check(#[from] CheckError),
    /// The compile failed; earlier outputs are untouched.
    #[error("error: {0}\n")]
    Compile(#[from] CompileError),
    /// The preview could not be rendered or written.
    #[error("error: {0}\n")]
    Preview(#[from] PreviewError),
    /// The play page could not be made or written.
    #[error("error: {0}\n")]
    Play(#[from] crate::play::PlayError),
    /// A song could not be read or analysed, or a practice track written.
    #[error("error: {0}\n")]
    Music(#[from] crate::music::MusicError),
    /// A practice track could not be made or written.
    #[error("error: {0}\n")]
    Rehearse(#[from] rehearse::RehearseError),
    /// An option's value is out of range.
    #[error("error: {0}\n")]
    Option(String),
    /// Printing the result failed.
    #[error("error: cannot write {what}: {source}\n")]
    Output {
        /// What was being written.
        what: &'static str,
        /// The cause.
        source: std::io::Error,
    },
    /// The show is fine but `--deny-warnings` was given and it has warnings.
    #[error("error: {0} warning{s} the show does not expect (no `[[expected]]` entry) and --deny-warnings was given\n", s = if *.0 == 1 { "" } else { "s" })]
    Warnings(usize),
}

impl Failure {
    /// A failure to print `what`.
    pub fn output(what: &'static str) -> impl Fn(std::io::Error) -> Failure {
        move |source| Failure::Output { what, source }
    }
}

impl From<Diagnostics> for Failure {
    fn from(d: Diagnostics) -> Self {
        Failure::Invalid(d)
    }
}

/// Reads the show at `path` and prepares it: the one way every command
/// starts.
pub fn prepare(path: &Path) -> Result<Prepared, Failure> {
    let show = crate::show::load(path)?;
    Ok(Prepared::new(show)?)
}

/// Refuses a landing tolerance (`--tolerance-mm`) that is not a positive
/// number of millimetres.
pub fn check_tolerance(tolerance_mm: f64) -> Result<(), Failure> {
    if tolerance_mm.is_finite() && tolerance_mm > 0.0 {
        return Ok(());
    }
    Err(Failure::Option(format!(
        "--tolerance-mm must be a positive number of millimetres, got {tolerance_mm}"
    )))
}
