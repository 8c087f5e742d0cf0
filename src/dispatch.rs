//! One command's arguments into the library's call (binary only).

use crate::args::{Cli, Command};
use glowscore::commands::{self, Failure};

/// Runs one command. The one stream rule: a command's result goes to
/// stdout (the report, the events, the tempo, the summary of the files
/// written, a completion script); progress, the reader's notes and errors go
/// to stderr.
pub fn run(command: Command) -> Result<(), Failure> {
    let stdout = &mut std::io::stdout().lock();
    match command {
        Command::Compile {
            show,
            out,
            tolerance_mm,
            header_form,
            no_previews,
            skip,
            quiet,
        } => {
            let opts = commands::compile::RunOptions {
                tolerance_mm,
                header_form: header_form.into(),
                previews: !no_previews,
                skip,
                quiet,
            };
            commands::compile::run(&show, out.as_deref(), &opts, stdout)
        }
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
        Command::Patterns {
            show,
            prop,
            petals,
            max_reach,
            stall,
            plane,
            beats,
            hand_radius,
        } => {
            let opts = commands::patterns::PatternOptions {
                prop,
                petals,
                max_reach_m: max_reach,
                stall,
                plane: plane.into(),
                beats,
                hand_radius_m: hand_radius,
            };
            commands::patterns::run(&show, &opts, stdout)
        }
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
        Command::New { name } => commands::new::run(&name, stdout),
        Command::Completions { shell } => {
            let mut script = Vec::new();
            let mut cli = <Cli as clap::CommandFactory>::command();
            clap_complete::generate(shell, &mut cli, "glowscore", &mut script);
            std::io::Write::write_all(stdout, &script)
                .map_err(Failure::output("the completion script"))
        }
    }
}
