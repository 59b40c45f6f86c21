//! skewbook command line: parses arguments, calls the library, prints.
//!
//! Exit status: 0 all good; 1 it ran but some quotes have no solution (their
//! rows are printed and flagged); 2 bad input or usage, or a report that
//! failed the output guard (a number that is not finite: a bug, named on
//! standard error; nothing printed, or for a history printed a chunk of
//! dates at a time, nothing from that chunk on).
//!
//! # A broken pipe is success
//! When the reader of standard output goes away (`skewbook implied x.csv |
//! head -1`), the program stops writing and exits 0 without a message, in
//! every format. Rust ignores SIGPIPE, so the write fails with
//! `ErrorKind::BrokenPipe` instead of the process being killed (the shell's
//! 141); exiting 0 keeps `set -o pipefail` scripts from failing on a
//! `head`, as the output the reader wanted was delivered.

mod chart;
mod cli;
mod curve;
mod implied;
mod loss;
mod price;
mod realworld;
mod report;
mod skew_history;
mod surface;
mod units;
mod value;

use clap::Parser;
use cli::{Cli, Command};
use std::io::{self, Write};
use std::process::ExitCode;

/// What a command's run came to, before printing errors.
pub enum Outcome {
    /// Everything solved.
    Clean,
    /// It ran, but some quotes had no solution.
    Unsolved,
}

fn run(cli: Cli, out: &mut dyn Write) -> Result<Outcome, Failure> {
    match cli.command {
        Command::Curve(a) => curve::run(a, out),
        Command::Price(a) => price::run(a, out),
        Command::Implied(a) => implied::run(a, out),
        Command::Loss(a) => loss::run(a, out),
        Command::Realworld(a) => realworld::run(a, out),
        Command::Surface(a) => surface::run(a, out),
        Command::Value(a) => value::run(a, out),
        Command::SkewHistory(a) => skew_history::run(a, out),
        Command::Chart(a) => chart::run(a, out),
        Command::Report(a) => report::run(a, out),
    }
}

/// Why a command stopped.
pub enum Failure {
    /// A library error (bad input, unfittable quote, usage).
    Lib(skewbook::Error),
    /// Writing the output failed.
    Io(io::Error),
    /// The output guard found a number that is not finite.
    NotFinite(skewbook::output::NonFinite),
}

impl From<skewbook::output::WriteError> for Failure {
    fn from(e: skewbook::output::WriteError) -> Self {
        match e {
            skewbook::output::WriteError::Io(e) => Failure::Io(e),
            skewbook::output::WriteError::NotFinite(n) => Failure::NotFinite(n),
        }
    }
}

impl From<skewbook::Error> for Failure {
    fn from(e: skewbook::Error) -> Self {
        Failure::Lib(e)
    }
}

impl From<io::Error> for Failure {
    fn from(e: io::Error) -> Self {
        Failure::Io(e)
    }
}

/// Prints problems on standard error, `prefix: ` before each, at most
/// [`skewbook::error::MAX_LINES_PER_FILE`] of each file and then one line
/// "and N more like this".
pub fn print_problems(prefix: &str, problems: &[skewbook::error::Problem]) {
    for line in skewbook::error::capped(problems, skewbook::error::MAX_LINES_PER_FILE) {
        eprintln!("{prefix}: {line}");
    }
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() {
                ExitCode::from(2)
            } else {
                ExitCode::SUCCESS
            };
        }
    };
    let stdout = io::stdout();
    let mut out = io::BufWriter::new(stdout.lock());
    let result = run(cli, &mut out).and_then(|o| out.flush().map(|_| o).map_err(Failure::Io));
    match result {
        Ok(Outcome::Clean) => ExitCode::SUCCESS,
        Ok(Outcome::Unsolved) => ExitCode::from(1),
        Err(Failure::Io(e)) if e.kind() == io::ErrorKind::BrokenPipe => ExitCode::SUCCESS,
        Err(Failure::Io(e)) => {
            eprintln!("error: writing output: {e}");
            ExitCode::from(2)
        }
        Err(Failure::NotFinite(n)) => {
            eprintln!(
                "error: output guard: {n}; the output stops before it (this is a bug in \
                 skewbook: please report it with the command and its input)"
            );
            ExitCode::from(2)
        }
        Err(Failure::Lib(e)) => {
            print_problems("error", &e.problems);
            ExitCode::from(e.exit_code())
        }
    }
}
