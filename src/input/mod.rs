//! Readers for every input file. No command opens a file on its own: they
//! all come through [`read_source`], where `-` means standard input.

pub mod history;
pub mod snapshot;

use crate::error::{Error, ErrorKind, Result};
use std::io::Read;

/// Reads a whole input file, or standard input when `path` is `-`.
///
/// # Errors
/// [`ErrorKind::Io`] naming the path when it cannot be opened or read, or
/// is not UTF-8.
pub fn read_source(path: &str) -> Result<String> {
    let mut text = String::new();
    let res = if path == "-" {
        std::io::stdin().read_to_string(&mut text).map(|_| ())
    } else {
        std::fs::File::open(path).and_then(|mut f| f.read_to_string(&mut text).map(|_| ()))
    };
    res.map_err(|e| Error::msg(ErrorKind::Io, format!("{path}: cannot read: {e}")))?;
    Ok(text)
}
