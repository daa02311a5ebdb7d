//! Where a table's rows sit in its file, so a table written from the rows can carry the
//! real rows' own text (and the ignored columns' cells) through unchanged.
//!
//! The reader keeps one byte offset per row and the writer reads the rows again, rather than
//! the reader keeping every cell's text: an offset costs 8 bytes a row whatever the width,
//! while the text of a row of 768 short numbers costs kilobytes as strings, and only `grow`
//! needs the text at all (inspect and assess would carry it for nothing). Reading the real
//! rows a second time is one sequential pass over the file, cheap beside parsing it.

use std::io::{BufReader, Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};
use std::time::SystemTime;

use super::table::Role;
use crate::error::{Error, Result};

/// The table a dataset was read from: its header, each column's role, and the byte range
/// of each of its data rows.
#[derive(Debug)]
pub struct TableSource {
    pub(crate) path: PathBuf,
    /// The field separator (`,` or tab).
    pub(crate) sep: u8,
    /// Column names as read (trimmed, byte-order mark dropped), in file order.
    pub(crate) names: Vec<String>,
    pub(crate) roles: Vec<Role>,
    /// Where each data row starts, in file order, then where the last one ends.
    bounds: Vec<u64>,
    /// The file's length and modification time when read, to notice a file changed since.
    len: u64,
    modified: Option<SystemTime>,
}

fn stamp(path: &Path) -> Result<(u64, Option<SystemTime>)> {
    let m = std::fs::metadata(path).map_err(|e| Error::io(path, e))?;
    Ok((m.len(), m.modified().ok()))
}

impl TableSource {
    /// A table read from `path`, whose data rows start at `starts` and end at `end`.
    pub(crate) fn new(
        path: &Path,
        sep: u8,
        names: Vec<String>,
        roles: Vec<Role>,
        mut starts: Vec<u64>,
        end: u64,
    ) -> Result<TableSource> {
        let (len, modified) = stamp(path)?;
        starts.push(end);
        Ok(TableSource {
            path: path.to_path_buf(),
            sep,
            names,
            roles,
            bounds: starts,
            len,
            modified,
        })
    }

    /// Number of data rows in the file.
    pub fn rows(&self) -> usize {
        self.bounds.len() - 1
    }

    /// Opens the file again to read rows, refusing it if it changed since it was read (the
    /// offsets would then point into other text).
    pub(crate) fn reopen(&self) -> Result<RowReader<'_>> {
        let changed = || {
            Error::input(
                &self.path,
                "the table changed on disk after embloom read it",
                "run the command again once the file is no longer being written",
            )
        };
        if stamp(&self.path)? != (self.len, self.modified) {
            return Err(changed());
        }
        let file = std::fs::File::open(&self.path).map_err(|e| Error::io(&self.path, e))?;
        Ok(RowReader {
            source: self,
            file: BufReader::with_capacity(1 << 16, file),
            pos: 0,
            raw: Vec::new(),
            span: (0, 0),
            record: csv::ByteRecord::new(),
        })
    }
}

/// Reads a table's rows by their index in the file, fastest in increasing order.
pub(crate) struct RowReader<'a> {
    source: &'a TableSource,
    file: BufReader<std::fs::File>,
    pos: u64,
    raw: Vec<u8>,
    /// The row's own bytes within `raw`.
    span: (usize, usize),
    record: csv::ByteRecord,
}

impl RowReader<'_> {
    fn bad(&self, row: usize, what: &str) -> Error {
        Error::input_at(
            &self.source.path,
            format!("row {row}"),
            format!("the row reads differently from when embloom read it: {what}"),
            "run the command again once the file is no longer being written",
        )
    }

    /// The bytes of data row `row` as they are in the file, without its line end.
    pub(crate) fn raw(&mut self, row: usize) -> Result<&[u8]> {
        let path = &self.source.path;
        let (Some(&start), Some(&end)) =
            (self.source.bounds.get(row), self.source.bounds.get(row + 1))
        else {
            return Err(self.bad(row, "the file has fewer rows"));
        };
        if start != self.pos {
            let step = start as i64 - self.pos as i64;
            self.file
                .seek_relative(step)
                .or_else(|_| self.file.seek(SeekFrom::Start(start)).map(|_| ()))
                .map_err(|e| Error::io(path, e))?;
        }
        self.raw.resize((end - start) as usize, 0);
        self.file
            .read_exact(&mut self.raw)
            .map_err(|e| Error::io(path, e))?;
        self.pos = end;
        // A row's bytes run from where the parser began it to where the next began: drop the
        // line ends at either side (and blank lines the parser skipped). A row cannot begin
        // or end with a line break of its own: one inside a field is inside quotes.
        let line_end = |b: &u8| matches!(b, b'\n' | b'\r');
        let a = self.raw.iter().position(|b| !line_end(b)).unwrap_or(0);
        let b = self
            .raw
            .iter()
            .rposition(|b| !line_end(b))
            .map_or(a, |i| i + 1);
        self.span = (a, b.max(a));
        Ok(&self.raw[a..b.max(a)])
    }

    /// The fields of data row `row`, unquoted as the parser reads them (not trimmed).
    pub(crate) fn fields(&mut self, row: usize) -> Result<&csv::ByteRecord> {
        let sep = self.source.sep;
        let width = self.source.names.len();
        self.raw(row)?;
        let text = &self.raw[self.span.0..self.span.1];
        let mut parser = csv::ReaderBuilder::new()
            .delimiter(sep)
            .has_headers(false)
            .flexible(true)
            .buffer_capacity(text.len().max(64))
            .from_reader(text);
        let read = parser.read_byte_record(&mut self.record);
        match read {
            Ok(true) if self.record.len() == width => Ok(&self.record),
            _ => Err(self.bad(row, "its fields no longer match the header")),
        }
    }
}
