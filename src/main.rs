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
    /// Compile the show into per-prop frame tables (CSV, binary, C header), previews and report.json.
    Compile {
        /// The show file (TOML).
        show: PathBuf,
        /// Output folder (default: out/<show name>).
        #[arg(long, value_name = "DIR")]
        out: Option<PathBuf>,
        /// Landing tolerance along the head's path, millimetres.
        #[arg(long, default_value_t = 10.0, allow_hyphen_values = true)]
        tolerance_mm: f64,
        /// Which binary form the C header embeds.
        #[arg(long, value_enum, default_value_t = HeaderForm::Compact)]
        header_form: HeaderForm,
        /// Skip the preview pictures.
        #[arg(long)]
        no_previews: bool,
    },
    /// Print every event of the show (tips, inner points, stalls, angles, beats, bars), sorted by time.
    Events {
        /// The show file (TOML).
        show: PathBuf,
        /// Print a JSON array instead of a table.
        #[arg(long)]
        json: bool,
    },
    /// Validate the show and report tension, slack, spin rates, reach, collisions, jumps, flashes, LED current and landing errors.
    Check {
        /// The show file (TOML).
        show: PathBuf,
        /// Print one JSON object instead of a readable report.
        #[arg(long)]
        json: bool,
        /// Fail (exit status 1) when there is any warning.
        #[arg(long)]
        deny_warnings: bool,
        /// Landing tolerance along the head's path, millimetres.
        #[arg(long, default_value_t = 10.0, allow_hyphen_values = true)]
        tolerance_mm: f64,
    },
    /// Render a long-exposure picture of the show, or of some bars of it, as a PNG.
    Preview(Box<commands::preview::PreviewArgs>),
    /// Find a song's tempo, beats, downbeats and tempo changes (WAV, FLAC, Ogg Vorbis, MP3).
    Tempo {
        /// The song.
        song: PathBuf,
        /// Print one JSON object instead of TOML for a show.
        #[arg(long)]
        json: bool,
        /// Beats per bar, if known (otherwise 3 or 4 from the accents).
        #[arg(long, value_name = "N")]
        beats_per_bar: Option<u32>,
        /// Search only these tempi, e.g. 80-160 (to choose between half and double).
        #[arg(long, value_name = "LO-HI")]
        bpm_range: Option<String>,
    },
    /// Write a practice WAV: the song, a click on every beat and a tone at each colour change of a prop.
    Rehearse {
        /// The show file (TOML).
        show: PathBuf,
        /// The WAV file to write.
        #[arg(long, value_name = "FILE.wav")]
        out: PathBuf,
        /// The prop whose colour changes sound (default: the first).
        #[arg(long, value_name = "P")]
        prop: Option<String>,
        /// The song to mix in.
        #[arg(long, value_name = "SONG")]
        song: Option<PathBuf>,
    },
}

/// The binary form embedded in the C header.
#[derive(Clone, Copy, clap::ValueEnum)]
enum HeaderForm {
    /// Every frame.
    Full,
    /// Runs and fades.
    Compact,
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Compile {
            show,
            out,
            tolerance_mm,
            header_form,
            no_previews,
        } => {
            let form = match header_form {
                HeaderForm::Full => glowscore::output::TableForm::Full,
                HeaderForm::Compact => glowscore::output::TableForm::Compact,
            };
            commands::compile::run(
                &show,
                out.as_deref(),
                tolerance_mm,
                form,
                !no_previews,
                &mut std::io::stderr().lock(),
            )
        }
        Command::Events { show, json } => {
            commands::events::run(&show, json, &mut std::io::stdout().lock())
        }
        Command::Check {
            show,
            json,
            deny_warnings,
            tolerance_mm,
        } => {
            let out = &mut std::io::stdout().lock();
            commands::check::run(&show, json, deny_warnings, tolerance_mm, out)
        }
        Command::Preview(args) => commands::preview::run(&args, &mut std::io::stdout().lock()),
        Command::Tempo {
            song,
            json,
            beats_per_bar,
            bpm_range,
        } => bpm_range
            .as_deref()
            .map(commands::tempo::parse_range)
            .transpose()
            .and_then(|bpm_range| {
                let opts = glowscore::music::Options {
                    beats_per_bar,
                    bpm_range,
                };
                commands::tempo::run(&song, json, &opts, &mut std::io::stdout().lock())
            }),
        Command::Rehearse {
            show,
            out,
            prop,
            song,
        } => commands::rehearse::run(&show, &out, prop.as_deref(), song.as_deref()),
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
