//! The `glowscore` command line: parses arguments and calls the library.
#![forbid(unsafe_code)]

mod args;
mod dispatch;

use std::io::ErrorKind;
use std::process::ExitCode;

use args::Cli;
use clap::Parser;
use glowscore::commands::Failure;

fn main() -> ExitCode {
    // Ctrl-C: no half-written staging folder is left behind.
    let _ = ctrlc::set_handler(|| {
        glowscore::folder::abandon_staging();
        std::process::exit(130);
    });
    let cli = Cli::parse();
    glowscore::show::allow_pictures_from_anywhere(cli.allow_outside_pictures);
    match dispatch::run(cli.command) {
        Ok(()) => ExitCode::SUCCESS,
        // A reader that stopped early (`glowscore events | head`): done.
        Err(Failure::Output { source, .. }) if source.kind() == ErrorKind::BrokenPipe => {
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprint!("{e}");
            if let Failure::Invalid(d) = &e
                && d.any_located()
            {
                eprintln!("the show is invalid; nothing was written");
            }
            ExitCode::from(1)
        }
    }
}
