//! `skewbook realworld`.

use crate::cli::DivisorArg;
use crate::{Failure, Outcome};
use skewbook::input::history::read_history;
use skewbook::output::write_report;
use skewbook::realworld::estimators::{Options, VarianceDivisor};
use skewbook::report::realworld::{add_risk_neutral, build_realworld};
use skewbook::{Error, ErrorKind};
use std::io::Write;

/// Parses `LEVEL:RATE,LEVEL:RATE` (already split at the comma).
fn parse_quantiles(items: &[String]) -> Result<Option<[(f64, f64); 2]>, Error> {
    if items.is_empty() {
        return Ok(None);
    }
    let usage = |m: String| Error::msg(ErrorKind::Usage, m);
    if items.len() != 2 {
        return Err(usage(format!(
            "--quantiles: expected two LEVEL:RATE pairs, found {}",
            items.len()
        )));
    }
    let mut pairs = [(0.0, 0.0); 2];
    for (slot, item) in pairs.iter_mut().zip(items) {
        let (a, b) = item.split_once(':').ok_or_else(|| {
            usage(format!(
                "--quantiles: expected LEVEL:RATE, found \"{item}\""
            ))
        })?;
        let num = |s: &str| {
            s.trim()
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .ok_or_else(|| {
                    usage(format!(
                        "--quantiles: expected a number, found \"{s}\" in \"{item}\""
                    ))
                })
        };
        *slot = (num(a)?, num(b)?);
    }
    Ok(Some(pairs))
}

/// Runs the command.
pub fn run(args: crate::cli::RealworldArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    if args.against.is_none() && args.curve.given() {
        return Err(Failure::Lib(Error::msg(
            ErrorKind::Usage,
            "--recovery and --rate apply to the snapshot of --against: expected --against SNAPSHOT with them",
        )));
    }
    let history = read_history(&args.file)?;
    let opts = Options {
        divisor: match args.variance_divisor {
            DivisorArg::T => VarianceDivisor::T,
            DivisorArg::TMinus1 => VarianceDivisor::TMinus1,
        },
        quantiles: parse_quantiles(&args.quantiles)?,
    };
    let mut report = build_realworld(&history, &opts, &args.levels, args.lgd)?;
    if let Some(path) = &args.against {
        let market = args.curve.options();
        market.validate()?;
        let snapshot = skewbook::input::snapshot::read_snapshot(path)?;
        for w in &snapshot.warnings {
            eprintln!("warning: {w}");
        }
        add_risk_neutral(&mut report, &snapshot, &market)?;
    }
    write_report(out, &report, args.format.into())?;
    Ok(Outcome::Clean)
}
