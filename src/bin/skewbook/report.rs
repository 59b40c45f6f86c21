//! `skewbook report`: one self-contained HTML page of a trade date.
//!
//! Writes the page to `--out` (standard output for `-`) and prints the
//! path written. Exit status 1 when some quote has no solution; the page
//! is written and says which.

use crate::chart::{charts, write_error};
use crate::cli::ReportArgs;
use crate::{Failure, Outcome};
use std::io::Write;
use std::path::Path;

/// Runs the command.
pub fn run(args: ReportArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let charts = charts(&args.picture)?;
    let page = skewbook::report::html::page(&charts)?;
    if args.out == "-" {
        out.write_all(page.as_bytes())?;
    } else {
        let path = Path::new(&args.out);
        std::fs::write(path, &page).map_err(|e| write_error(path, "write", e))?;
        writeln!(out, "{}", path.display())?;
    }
    Ok(if charts.any_unsolved() {
        Outcome::Unsolved
    } else {
        Outcome::Clean
    })
}
