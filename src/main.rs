//! The `glowscore` command line: parses arguments and calls the library.
#![forbid(unsafe_code)]

mod args;

use std::io::ErrorKind;
use std::process::ExitCode;

use args::{Cli, Command};
use clap::Parser;
use glowscore::commands::{self, Failure};

fn main() -> ExitCode {
    // Ctrl-C: no half-written staging folder is left behind.
    let _ = ctrlc::set_handler(|| {
        glowscore::folder::abandon_staging();
        std::process::exit(130);
    });
    match dispatch(Cli::parse().command) {
        Ok(()) => ExitCode::SUCCESS,
        // A reader that stopped early (`glowscore events | head`): done.
        Err(Failure::Output { source, .. }) if source.kind() == ErrorKind::BrokenPipe => {
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprint!("{e}");
            if let Failure::Invalid(_) = e {
                eprintln!("the show is invalid; nothing was written");
            }
            ExitCode::from(1)
        }
    }
}

/// Runs one command: results go to stdout, the compile's summary to stderr.
fn dispatch(command: Command) -> Result<(), Failure> {
    let stdout = &mut std::io::stdout().lock();
    match command {
        Command::Compile {
            show,
            out,
            tolerance_mm,
            header_form,
            no_previews,
        } => commands::compile::run(
            &show,
            out.as_deref(),
            tolerance_mm,
            header_form.into(),
            !no_previews,
            &mut std::io::stderr().lock(),
        ),
        Command::Events {
            show,
            json,
            prop,
            kind,
            bars,
        } => {
            let filter = commands::events::EventFilter {
                props: prop,
                kinds: kind,
                bars,
            };
            commands::events::run(&show, json, &filter, stdout)
        }
        Command::Check {
            show,
            json,
            deny_warnings,
            tolerance_mm,
        } => commands::check::run(&show, json, deny_warnings, tolerance_mm, stdout),
        Command::Preview(a) => commands::preview::run(&a.show, &a.out, &a.options(), stdout),
        Command::Tempo {
            song,
            json,
            beats_per_bar,
            bpm_range,
        } => {
            let bpm_range = bpm_range
                .as_deref()
                .map(commands::tempo::parse_range)
                .transpose()?;
            let opts = glowscore::music::Options {
                beats_per_bar,
                bpm_range,
            };
            commands::tempo::run(&song, json, &opts, stdout)
        }
        Command::Play {
            show,
            out,
            watch,
            port,
            song,
        } => match out {
            Some(out) if !watch => commands::play::run(&show, &out, song.as_deref(), stdout),
            _ => commands::play::watch_loop(&show, port, song.as_deref(), stdout),
        },
        Command::Rehearse {
            show,
            out,
            prop,
            song,
        } => commands::rehearse::run(&show, &out, prop.as_deref(), song.as_deref()),
    }
}
