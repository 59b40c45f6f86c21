//! `skewbook implied`: compound and base correlation from the quotes.

use crate::cli::ImpliedArgs;
use crate::{Failure, Outcome};
use indicatif::{ProgressBar, ProgressStyle};
use skewbook::output::write_report;
use skewbook::report::implied::ImpliedOptions;
use std::io::{IsTerminal, Write};

/// Dates above which a run shows a progress bar.
const PROGRESS_FROM: usize = 20;

/// Runs the command: exit status 1 when some quote has no solution. A run
/// of more than one date ends with its summary on standard error, after
/// the output.
pub fn run(args: ImpliedArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let (snapshot, opts) = crate::curve::load(&args.market)?;
    let implied = ImpliedOptions {
        index_tolerance_bp: args.index_tolerance,
        model: args.pool.model()?,
        compare_pool: args.compare_pool,
    };
    let bar = if wants_progress(
        snapshot.dates.len(),
        args.quiet,
        std::io::stderr().is_terminal(),
        std::env::var_os("CI").is_some(),
    ) {
        progress_bar(snapshot.dates.len())
    } else {
        ProgressBar::hidden()
    };
    let report =
        skewbook::report::implied::build_with_progress(&snapshot, &opts, &implied, &|| bar.inc(1));
    bar.finish_and_clear();
    let report = report?;
    write_report(out, &report, args.market.format.into())?;
    if report.dates.len() > 1 {
        out.flush()?;
        for line in report.summary().lines() {
            eprintln!("summary: {line}");
        }
    }
    Ok(if report.any_unsolved() {
        Outcome::Unsolved
    } else {
        Outcome::Clean
    })
}

/// Whether to draw a progress bar: more than [`PROGRESS_FROM`] dates, not
/// `--quiet`, standard error a terminal, and not under CI (`CI` set).
fn wants_progress(dates: usize, quiet: bool, stderr_is_terminal: bool, ci: bool) -> bool {
    dates > PROGRESS_FROM && !quiet && stderr_is_terminal && !ci
}

/// A bar on standard error counting dates.
fn progress_bar(dates: usize) -> ProgressBar {
    let bar = ProgressBar::new(dates as u64);
    if let Ok(style) = ProgressStyle::with_template(
        "{bar:40} {pos}/{len} dates, {elapsed} elapsed, about {eta} left",
    ) {
        bar.set_style(style);
    }
    bar
}

#[cfg(test)]
mod tests {
    use super::wants_progress;

    /// The bar shows only on a terminal, outside CI, without --quiet, for
    /// more than 20 dates (the option's documented rule).
    #[test]
    fn progress_only_when_asked_for() {
        assert!(wants_progress(21, false, true, false));
        assert!(!wants_progress(20, false, true, false));
        assert!(!wants_progress(2500, true, true, false));
        assert!(!wants_progress(2500, false, false, false));
        assert!(!wants_progress(2500, false, true, true));
    }
}
