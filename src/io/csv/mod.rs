//! CSV and TSV tables: a header row, one row per embedding. The label column is named by
//! option; the id, group and fold columns (by option, else `id`, `group`, the fold key; the
//! older `ids`/`groups` with a note) ride along; columns named as ignored are read past;
//! every other column is a numeric feature. Parsing and quoting are the `csv` crate's
//! (RFC 4180: quoted fields, doubled quotes, embedded separators and line breaks); CRLF line
//! ends and a UTF-8 byte-order mark are accepted. Rows stream into the matrix one record at a
//! time.

mod read;
mod source;
pub(super) mod table;
mod write;

pub use read::read;
pub use source::TableSource;
pub(crate) use table::Role;
pub use write::write;
