//! `skewbook realworld`: levels, LGD and quantiles typed in percent.

use crate::cli::DivisorArg;
use crate::{units, Failure, Outcome};
use skewbook::input::history::read_history;
use skewbook::output::write_report;
use skewbook::realworld::estimators::{Options, VarianceDivisor};
use skewbook::report::realworld::{add_risk_neutral, build_realworld};
use skewbook::{Error, ErrorKind};
use std::io::Write;

/// Runs the command.
pub fn run(args: crate::cli::RealworldArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let usage = |m: &str| Failure::Lib(Error::msg(ErrorKind::Usage, m));
    if args.against.is_none() && args.curve.given() {
        return Err(usage(
            "--recovery and --rate apply to the snapshot of --against: expected --against SNAPSHOT with them",
        ));
    }
    if args.file == "-" && args.against.as_deref() == Some("-") {
        return Err(usage(
            "standard input can be read once: expected a file name for the history or for --against, found `-` for both",
        ));
    }
    let levels = units::levels(&args.levels)?;
    let lgd = units::LGD.read(args.lgd)?;
    let opts = Options {
        divisor: match args.variance_divisor {
            DivisorArg::T => VarianceDivisor::T,
            DivisorArg::TMinus1 => VarianceDivisor::TMinus1,
        },
        quantiles: units::quantiles(&args.quantiles)?,
    };
    let market = args.curve.options()?;
    let history = read_history(&args.file)?;
    crate::print_problems("warning", &history.warnings);
    let mut report = build_realworld(&history, &opts, &levels, lgd)?;
    if let Some(path) = &args.against {
        let snapshot = skewbook::input::snapshot::read_snapshot(path)?;
        crate::print_problems("warning", &snapshot.warnings);
        add_risk_neutral(&mut report, &snapshot, &market)?;
    }
    write_report(out, &report, args.format.into())?;
    Ok(Outcome::Clean)
}
