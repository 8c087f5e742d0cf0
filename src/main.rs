//! The `glowscore` command line: parses arguments and calls the library.
#![forbid(unsafe_code)]

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use glowscore::commands::{self, Failure};

/// Compiles LED prop light shows into frame tables, previews and checks.
#[derive(Parser)]
#[command(name = "glowscore", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Print every event of the show (tips, inner points, stalls, angles, beats, bars), sorted by time.
    Events {
        /// The show file (TOML).
        show: PathBuf,
        /// Print a JSON array instead of a table.
        #[arg(long)]
        json: bool,
    },
    /// Validate the show and report tether tension, speeds, spin rates, reach, stage space, collisions and jumps.
    Check {
        /// The show file (TOML).
        show: PathBuf,
        /// Print one JSON object instead of a readable report.
        #[arg(long)]
        json: bool,
        /// Fail (exit status 1) when there is any warning.
        #[arg(long)]
        deny_warnings: bool,
    },
    /// Render a long-exposure picture of the show, or of some bars of it, as a PNG.
    Preview(Box<commands::preview::PreviewArgs>),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Events { show, json } => {
            commands::events::run(&show, json, &mut std::io::stdout().lock())
        }
        Command::Check {
            show,
            json,
            deny_warnings,
        } => commands::check::run(&show, json, deny_warnings, &mut std::io::stdout().lock()),
        Command::Preview(args) => commands::preview::run(&args, &mut std::io::stdout().lock()),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprint!("{e}");
            if let Failure::Invalid(_) = e {
                eprintln!("the show is invalid; nothing was written");
            }
            ExitCode::from(1)
        }
    }
}
