//! The `spotlever` command: parses arguments and hands them to the library's stages.

mod cli;

use clap::Parser;

fn main() -> std::process::ExitCode {
    let args = cli::Cli::parse();
    match cli::run(args) {
        Ok(()) => std::process::ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            std::process::ExitCode::FAILURE
        }
    }
}
