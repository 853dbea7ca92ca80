//! `ambit`: the command-line front end. It parses arguments, calls the
//! engine, and formats the result; it holds no analysis of its own.

mod cli;

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let arguments = cli::Cli::parse();
    match cli::run(arguments) {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("ambit: {error:#}");
            ExitCode::FAILURE
        }
    }
}
