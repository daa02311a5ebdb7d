//! Checks an Arrow IPC file's block and buffer ranges before arrow-ipc reads it. Its reader
//! trusts them: a negative length, a message shorter than its prefix or a buffer past the end
//! of its block panics inside the crate, and a huge body length or uncompressed buffer
//! length is allocated before the read fails. Every range is checked here against the file, so such a file is refused by name.

use std::path::Path;

use crate::error::{Error, Result};

fn corrupt(path: &Path, what: String) -> Error {
    Error::input(
        path,
        format!("not a readable Arrow IPC file: {what}"),
        "rewrite the file with pyarrow (pyarrow.feather.write_feather)",
    )
}

/// `start..start + len` as a range inside `n` bytes, if it is one.
fn span(start: i64, len: i64, n: usize) -> Option<std::ops::Range<usize>> {
    let s = usize::try_from(start).ok()?;
    let e = s.checked_add(usize::try_from(len).ok()?)?;
    (e <= n).then_some(s..e)
}

/// Refuses the file when a block or buffer range falls outside it. A file whose footer does
/// not parse is left to arrow-ipc, which refuses it with its own error.
pub fn check(path: &Path, bytes: &[u8]) -> Result<()> {
    let n = bytes.len();
    let Some(tail) = n.checked_sub(10).map(|t| &bytes[t..]) else {
        return Ok(());
    };
    let Ok(tail) = <[u8; 10]>::try_from(tail) else {
        return Ok(());
    };
    let Ok(footer_len) = arrow_ipc::reader::read_footer_length(tail) else {
        return Ok(());
    };
    let Some(footer) = (n - 10).checked_sub(footer_len).map(|s| &bytes[s..n - 10]) else {
        return Err(corrupt(path, "the footer is longer than the file".into()));
    };
    let Ok(footer) = arrow_ipc::root_as_footer(footer) else {
        return Ok(());
    };
    let blocks = footer
        .recordBatches()
        .into_iter()
        .flatten()
        .chain(footer.dictionaries().into_iter().flatten());
    for (i, b) in blocks.enumerate() {
        let meta = i64::from(b.metaDataLength());
        let whole = meta
            .checked_add(b.bodyLength())
            .filter(|_| meta >= 8 && b.bodyLength() >= 0)
            .and_then(|len| span(b.offset(), len, n));
        let Some(whole) = whole else {
            return Err(corrupt(path, format!("block {i} lies outside the file")));
        };
        // The format pads every message and buffer to 8 bytes; arrow-ipc asserts on
        // misaligned buffers instead of refusing them.
        if meta % 8 != 0 {
            return Err(corrupt(path, format!("block {i} is not 8-byte aligned")));
        }
        let block = &bytes[whole];
        let meta = meta as usize;
        let skip = if block[..4] == [0xff; 4] { 8 } else { 4 };
        let Ok(msg) = arrow_ipc::root_as_message(&block[skip..meta]) else {
            return Err(corrupt(
                path,
                format!("block {i} holds no readable message"),
            ));
        };
        let batch = msg
            .header_as_record_batch()
            .or_else(|| msg.header_as_dictionary_batch().and_then(|d| d.data()));
        let body = &block[meta..];
        let lz4 = batch
            .and_then(|r| r.compression())
            .is_some_and(|c| c.codec() == arrow_ipc::CompressionType::LZ4_FRAME);
        for buf in batch.and_then(|r| r.buffers()).into_iter().flatten() {
            let Some(range) = span(buf.offset(), buf.length(), body.len()) else {
                return Err(corrupt(
                    path,
                    format!("a buffer of block {i} lies outside the block"),
                ));
            };
            if range.start % 8 != 0 {
                return Err(corrupt(
                    path,
                    format!("a buffer of block {i} is not 8-byte aligned"),
                ));
            }
            // A compressed buffer starts with its uncompressed length (−1: stored as is),
            // which arrow-ipc reserves before decompressing; LZ4 expands at most 255-fold
            // (a match length grows by 255 per input byte), so a larger claim is a lie.
            let data = &body[range];
            if lz4 && data.len() >= 8 {
                let claimed = i64::from_le_bytes(data[..8].try_into().unwrap_or_default());
                let most = (data.len() as i64 - 8)
                    .saturating_mul(255)
                    .saturating_add(64);
                if claimed > most {
                    return Err(corrupt(
                        path,
                        format!(
                            "a buffer of block {i} claims {claimed} bytes uncompressed from {} bytes",
                            data.len() - 8
                        ),
                    ));
                }
            }
        }
    }
    Ok(())
}
