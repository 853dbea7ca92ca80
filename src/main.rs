//! `ambit`: the command-line front end. It parses arguments, calls the
//! engine, and formats the result; it holds no analysis of its own.

mod cli;

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    restore_default_sigpipe();
    let arguments = cli::Cli::parse();
    match cli::run(arguments) {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!(
                "ambit: {}",
                ambit::text::terminal_safe(&error_message(&error))
            );
            ExitCode::FAILURE
        }
    }
}

/// The error and its causes on one line, "outer: inner". The engine's
/// errors already name their cause in their own message (with the file), so
/// a cause whose text is already there is not repeated.
fn error_message(error: &anyhow::Error) -> String {
    let mut message = String::new();
    for cause in error.chain() {
        let text = cause.to_string();
        if message.contains(&text) {
            continue;
        }
        if !message.is_empty() {
            message.push_str(": ");
        }
        message.push_str(&text);
    }
    message
}

/// Rust ignores SIGPIPE, so printing into a closed pipe (`ambit … | head`)
/// fails with an error, and `println!` panics on it. A command-line tool
/// should end quietly instead, as other Unix tools do: restore the default
/// action, which ends the process when the reader has gone.
#[cfg(unix)]
fn restore_default_sigpipe() {
    // SAFETY: called first thing in main, before any thread is started;
    // setting a signal's action to its default touches no Rust state.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
}

#[cfg(not(unix))]
fn restore_default_sigpipe() {}
