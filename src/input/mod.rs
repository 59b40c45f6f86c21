//! Readers for every input file. No command opens a file on its own: they
//! all come through [`read_source`], where `-` means standard input.
//!
//! - [`snapshot`]: index, tranche and zero-rate quotes of one or more dates;
//! - [`history`]: a pool's default history (real-world calibration);
//! - [`trades`]: a book of tranche trades to value;
//! - [`pools`]: quotes and recoveries of bespoke pools.
//!
//! All four read CSV the same way, through one private core: a UTF-8
//! byte-order mark is accepted, cells are trimmed, blank lines are skipped
//! but counted, and every problem of a file is reported at once as
//! `path:line:col: column "name": expected X, found Y`.

mod cells;
pub mod domain;
pub mod history;
pub mod pools;
pub mod snapshot;
pub mod trades;

use crate::error::{Error, ErrorKind, Location, Problem, Result};
use std::io::Read;

/// Reads a whole input file, or standard input when `path` is `-`.
///
/// # Errors
/// [`ErrorKind::Io`] naming the path when it cannot be opened or read;
/// [`ErrorKind::InvalidInput`] at the line and column of the first byte
/// that is not UTF-8.
pub fn read_source(path: &str) -> Result<String> {
    let mut bytes = Vec::new();
    let res = if path == "-" {
        std::io::stdin().read_to_end(&mut bytes).map(|_| ())
    } else {
        std::fs::File::open(path).and_then(|mut f| f.read_to_end(&mut bytes).map(|_| ()))
    };
    res.map_err(|e| Error::msg(ErrorKind::Io, format!("{path}: cannot read: {e}")))?;
    decode(bytes, path)
}

/// The text of an input file's bytes, which must be UTF-8 (what
/// [`read_source`] does once the bytes are read); `path` names the file in
/// the message.
///
/// # Errors
/// [`ErrorKind::InvalidInput`] at the line and column of the first byte
/// that is not UTF-8 (a Latin-1 or Windows-1252 export, say).
///
/// ```
/// use skewbook::input::decode;
/// assert_eq!(decode(b"a,b\n".to_vec(), "f.csv")?, "a,b\n");
/// let e = decode(b"a,b\nx,\xe9\n".to_vec(), "f.csv").unwrap_err();
/// assert!(e.to_string().starts_with("f.csv:2:3: expected UTF-8 text, found the byte 0xe9"));
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn decode(bytes: Vec<u8>, path: &str) -> Result<String> {
    String::from_utf8(bytes).map_err(|e| {
        let good = &e.as_bytes()[..e.utf8_error().valid_up_to()];
        let line = good.iter().filter(|&&b| b == b'\n').count() as u64 + 1;
        let start = good.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
        let column = String::from_utf8_lossy(&good[start..]).chars().count() + 1;
        Error::new(
            ErrorKind::InvalidInput,
            Problem::at(
                Location {
                    path: path.to_string(),
                    line,
                    column: Some(column),
                    header: None,
                },
                format!(
                    "expected UTF-8 text, found the byte 0x{:02x}",
                    e.as_bytes()[e.utf8_error().valid_up_to()]
                ),
            ),
        )
    })
}
