//! `skewbook price`.

use crate::{Failure, Outcome};
use std::io::Write;

/// Runs the command.
pub fn run(_args: crate::cli::PriceArgs, _out: &mut dyn Write) -> Result<Outcome, Failure> {
    Err(Failure::Lib(skewbook::Error::msg(
        skewbook::ErrorKind::Usage,
        "not built yet",
    )))
}
