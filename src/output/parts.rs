//! A report printed in parts, with the bytes of the whole.

use super::{guard, render, write_csv, write_csv_rows, Format, Report, WriteError};
use std::io::{self, Write};

/// Prints a report that comes in parts, in order (a long history a few
/// hundred dates at a time), with the bytes [`super::write_report`] prints
/// for the whole report.
///
/// The whole must be the parts put together: its table format the parts'
/// sections in order, its CSV the parts' rows under one header (every part
/// gives the same header), its JSON one array of the parts' items (each
/// part's serde form is an array). Each part is rendered, checked by the
/// output guard and written in one write; [`Self::finish`] ends the JSON
/// array.
///
/// ```
/// use skewbook::output::{write_report, Format, PartWriter, Report, Table};
///
/// /// Days of a month, a section each.
/// #[derive(serde::Serialize)]
/// struct Days(Vec<u32>);
///
/// impl Report for Days {
///     fn sections(&self) -> Vec<Table> {
///         self.0.iter().map(|d| Table { rows: vec![vec![d.to_string()]], ..self.csv() }).collect()
///     }
///     fn csv(&self) -> Table {
///         Table { rows: self.0.iter().map(|d| vec![d.to_string()]).collect(), ..Table::new(&["day"]) }
///     }
/// }
///
/// for format in [Format::Table, Format::Csv, Format::Json] {
///     let mut whole = Vec::new();
///     write_report(&mut whole, &Days(vec![1, 2, 3]), format)?;
///     let mut parts = Vec::new();
///     let mut w = PartWriter::new(&mut parts, format);
///     w.write(&Days(vec![1, 2]))?;
///     w.write(&Days(vec![3]))?;
///     w.finish()?;
///     assert_eq!(parts, whole);
/// }
/// # Ok::<(), skewbook::output::WriteError>(())
/// ```
pub struct PartWriter<'w> {
    out: &'w mut dyn Write,
    format: Format,
    /// Something was written: a section, the CSV header, the JSON bracket.
    started: bool,
    /// The CSV header, once written.
    headers: Option<Vec<String>>,
}

impl<'w> PartWriter<'w> {
    /// Starts printing to `out` in `format`.
    pub fn new(out: &'w mut dyn Write, format: Format) -> Self {
        PartWriter {
            out,
            format,
            started: false,
            headers: None,
        }
    }

    /// Prints the next part.
    ///
    /// # Errors
    /// [`WriteError::NotFinite`] from the output guard (nothing of this part
    /// is written); [`WriteError::Io`] for an error of the writer, and for
    /// a part that does not fit the whole (a CSV header unlike the first
    /// part's, JSON that is not an array).
    pub fn write<R: Report>(&mut self, part: &R) -> Result<(), WriteError> {
        let mut buf = Vec::new();
        match self.format {
            Format::Table => {
                let text = render(part, Format::Table)?;
                if !text.is_empty() && self.started {
                    buf.push(b'\n');
                }
                self.started |= !text.is_empty();
                buf.extend(text);
            }
            Format::Csv => {
                guard(part, Format::Csv)?;
                let table = part.csv();
                match &self.headers {
                    None => {
                        write_csv(&mut buf, &table)?;
                        self.headers = Some(table.headers);
                        self.started = true;
                    }
                    Some(h) if *h == table.headers => {
                        let mut wr = csv::Writer::from_writer(&mut buf as &mut dyn Write);
                        write_csv_rows(&mut wr, &table)?;
                    }
                    Some(_) => return Err(misfit("a CSV part with other columns")),
                }
            }
            Format::Json => {
                // The part's array "[\n  item,\n  item\n]\n" without its
                // brackets is what the whole array has between them.
                let text = render(part, Format::Json)?;
                if text != b"[]\n" {
                    let items = text
                        .strip_prefix(b"[\n")
                        .and_then(|t| t.strip_suffix(b"\n]\n"))
                        .ok_or_else(|| misfit("a JSON part that is not an array"))?;
                    buf.extend_from_slice(if self.started { b",\n" } else { b"[\n" });
                    buf.extend_from_slice(items);
                    self.started = true;
                }
            }
        }
        self.out.write_all(&buf)?;
        Ok(())
    }

    /// Ends the output: closes the JSON array (`[]` when no part had an
    /// item). With no part at all, the table and CSV formats print nothing.
    ///
    /// # Errors
    /// [`WriteError::Io`] for an error of the writer.
    pub fn finish(self) -> Result<(), WriteError> {
        if self.format == Format::Json {
            let end: &[u8] = if self.started { b"\n]\n" } else { b"[]\n" };
            self.out.write_all(end)?;
        }
        Ok(())
    }
}

/// The error of a part that does not fit the whole (a bug of the caller).
fn misfit(what: &str) -> WriteError {
    WriteError::Io(io::Error::other(format!(
        "printing a report in parts: {what}"
    )))
}
