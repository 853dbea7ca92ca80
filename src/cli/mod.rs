//! Command-line interface: one file per subcommand. Each subcommand parses
//! its arguments, calls the engine and formats text or JSON.
//!
//! Everything the CLI prints goes through `say!`, `say_part!`, `say_err!`
//! or [`write_stdout`], which pass the text through
//! [`ambit::text::terminal_safe`]: names, track names and notes from user
//! files can never send control sequences to the terminal.

/// `println!` through [`ambit::text::terminal_safe`].
macro_rules! say {
    () => { println!() };
    ($($arg:tt)*) => { println!("{}", ambit::text::terminal_safe(&format!($($arg)*))) };
}

/// `print!` through [`ambit::text::terminal_safe`].
macro_rules! say_part {
    ($($arg:tt)*) => { print!("{}", ambit::text::terminal_safe(&format!($($arg)*))) };
}

/// `eprintln!` through [`ambit::text::terminal_safe`].
macro_rules! say_err {
    () => { eprintln!() };
    ($($arg:tt)*) => { eprintln!("{}", ambit::text::terminal_safe(&format!($($arg)*))) };
}

mod demo;
mod fit;
mod library;
mod parts;
mod place;
mod profile;
mod progress;
mod rehearsal;
mod track;
mod transpose;

use clap::{Parser, Subcommand};

/// Ambit: plan a choir from auditions and scores.
#[derive(Debug, Parser)]
#[command(name = "ambit", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// The whole pipeline on the bundled demo choir and sample scores; writes DIR/report.html.
    Demo(demo::DemoArgs),
    /// Range, tessitura, hot spots and cycle dose of every part of a score.
    Parts(parts::PartsArgs),
    /// Pitch track (f0 per frame) of a recording.
    Track(track::TrackArgs),
    /// A singer's profile (range, comfort zone, passaggi, voice type, section) from audition recordings.
    Profile(profile::ProfileArgs),
    /// The optimal placement of a roster into a layout's sections over a programme of scores.
    Place(place::PlaceArgs),
    /// The choir library: singers, auditions, pieces, scenarios, backups.
    Library(library::LibraryArgs),
    /// How well every singer of a roster fits every part of the scores.
    Fit(fit::FitArgs),
    /// A rehearsal plan by vocal load: order and time pieces and passages so no section sings high too long.
    Rehearsal(rehearsal::RehearsalArgs),
    /// The key in which a piece sits best for a soloist or the placed choir.
    Transpose(transpose::TransposeArgs),
}

pub fn run(cli: Cli) -> anyhow::Result<()> {
    match cli.command {
        Command::Demo(arguments) => demo::run(arguments),
        Command::Parts(arguments) => parts::run(arguments),
        Command::Track(arguments) => track::run(arguments),
        Command::Profile(arguments) => profile::run(arguments),
        Command::Place(arguments) => place::run(arguments),
        Command::Library(arguments) => library::run(arguments),
        Command::Fit(arguments) => fit::run(arguments),
        Command::Transpose(arguments) => transpose::run(arguments),
        Command::Rehearsal(arguments) => rehearsal::run(arguments),
    }
}

/// Writes the whole output at once; a reader that stops early (`| head`)
/// is not an error.
pub(crate) fn write_stdout(text: &str) -> anyhow::Result<()> {
    use std::io::Write as _;
    let mut stdout = std::io::stdout().lock();
    match stdout
        .write_all(ambit::text::terminal_safe(text).as_bytes())
        .and_then(|()| stdout.flush())
    {
        Err(error) if error.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        result => Ok(result?),
    }
}

#[cfg(test)]
mod tests {
    use clap::CommandFactory as _;

    /// Every option and argument of every subcommand says what it is for
    /// in `--help` (positional ones included).
    #[test]
    fn every_option_has_a_help_text() {
        fn missing(command: &clap::Command, path: &str, out: &mut Vec<String>) {
            for argument in command.get_arguments() {
                let id = argument.get_id().as_str();
                if matches!(id, "help" | "version") {
                    continue;
                }
                if argument.get_help().is_none() && argument.get_long_help().is_none() {
                    out.push(format!("{path} {id}"));
                }
            }
            for sub in command.get_subcommands() {
                if sub.get_name() == "help" {
                    continue;
                }
                if sub.get_about().is_none() {
                    out.push(format!("{path} {} (the subcommand)", sub.get_name()));
                }
                missing(sub, &format!("{path} {}", sub.get_name()), out);
            }
        }
        let mut out = Vec::new();
        missing(&super::Cli::command(), "ambit", &mut out);
        assert!(out.is_empty(), "options without a help text: {out:#?}");
    }
}
