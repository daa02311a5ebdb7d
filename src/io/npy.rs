//! The `.npy` array format (numpy's NEP 1): magic, version, a Python-literal header dict, then
//! raw element bytes. Parsed by hand so that object arrays are refused (never unpickled) and
//! every size is checked against the bytes actually present *before* anything is allocated.

use std::io::Read;
use std::path::Path;

use ndarray::{ArrayD, IxDyn, ShapeBuilder};

use super::pyliteral::{self, Literal};
use super::tensor::{Tensor, Values};
use crate::error::{Error, Result};

const MAGIC: &[u8] = b"\x93NUMPY";

/// Element kinds embloom can decode.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Kind {
    Float,
    Int,
    Uint,
    Bool,
    /// numpy `U`: UCS-4 code points.
    Unicode,
    /// numpy `S`: NUL-padded bytes.
    Bytes,
}

#[derive(Debug, Clone, Copy)]
struct Dtype {
    kind: Kind,
    /// Bytes per element.
    size: usize,
    big_endian: bool,
}

struct Header {
    dtype: Dtype,
    descr: String,
    fortran: bool,
    shape: Vec<usize>,
    data_start: usize,
}

fn bad(path: &Path, key: &str, detail: impl Into<String>) -> Error {
    Error::input_at(
        path,
        format!("key '{key}'"),
        detail,
        "rewrite the array with numpy.save (a plain numeric or string array)",
    )
}

fn parse_descr(descr: &str) -> std::result::Result<Dtype, String> {
    let (order, rest) = match descr.chars().next() {
        Some(c @ ('<' | '>' | '|' | '=')) => (c, &descr[1..]),
        _ => ('=', descr),
    };
    let big_endian = order == '>' || (order == '=' && cfg!(target_endian = "big"));
    let mut chars = rest.chars();
    let kind_char = chars.next().ok_or("empty dtype")?;
    let count: &str = chars.as_str();
    if kind_char == 'O' {
        return Err(format!(
            "dtype '{descr}' is a Python object array; embloom never unpickles files. Save a numeric or fixed-width string array instead"
        ));
    }
    let n: usize = count
        .parse()
        .map_err(|_| format!("unsupported dtype '{descr}'"))?;
    let (kind, size) = match (kind_char, n) {
        ('f', 2 | 4 | 8) => (Kind::Float, n),
        ('i', 1 | 2 | 4 | 8) => (Kind::Int, n),
        ('u', 1 | 2 | 4 | 8) => (Kind::Uint, n),
        ('b', 1) => (Kind::Bool, 1),
        ('U', _) => (
            Kind::Unicode,
            n.checked_mul(4).ok_or("string width too large")?,
        ),
        ('S', _) => (Kind::Bytes, n),
        _ => {
            return Err(format!(
                "unsupported dtype '{descr}' (accepted: float16/32/64, integers, bool, 'U' and 'S' strings)"
            ));
        }
    };
    Ok(Dtype {
        kind,
        size,
        big_endian,
    })
}

/// Where the header text starts and how long it is, read from the fixed prefix (magic,
/// version, header length). The streaming reader and the in-memory parser both use it, so
/// they agree on which prefixes are well formed.
fn header_span(bytes: &[u8], path: &Path, key: &str) -> Result<(usize, usize)> {
    if bytes.len() < 10 || &bytes[..6] != MAGIC {
        return Err(bad(
            path,
            key,
            "not a .npy array (magic bytes \\x93NUMPY missing)",
        ));
    }
    match bytes[6] {
        1 => Ok((10, u16::from_le_bytes([bytes[8], bytes[9]]) as usize)),
        2 | 3 => {
            if bytes.len() < 12 {
                return Err(bad(path, key, "file ends inside the .npy header"));
            }
            Ok((
                12,
                u32::from_le_bytes([bytes[8], bytes[9], bytes[10], bytes[11]]) as usize,
            ))
        }
        v => Err(bad(
            path,
            key,
            format!(".npy format version {v} is not supported (1, 2 or 3 expected)"),
        )),
    }
}

fn parse_header(bytes: &[u8], path: &Path, key: &str) -> Result<Header> {
    let (start, len) = header_span(bytes, path, key)?;
    let end = start
        .checked_add(len)
        .filter(|&e| e <= bytes.len())
        .ok_or_else(|| {
            bad(
                path,
                key,
                "file ends inside the .npy header (truncated file?)",
            )
        })?;
    let text = std::str::from_utf8(&bytes[start..end])
        .map_err(|_| bad(path, key, ".npy header is not text"))?;
    let items = match pyliteral::parse(text)
        .map_err(|e| bad(path, key, format!("unreadable .npy header: {e}")))?
    {
        Literal::Dict(items) => items,
        _ => return Err(bad(path, key, ".npy header is not a dict")),
    };
    let get = |name: &str| items.iter().find(|(k, _)| k == name).map(|(_, v)| v);
    let descr = match get("descr") {
        Some(Literal::Str(s)) => s.clone(),
        Some(_) => {
            return Err(bad(
                path,
                key,
                "structured (record) dtypes are not supported",
            ));
        }
        None => return Err(bad(path, key, ".npy header has no 'descr'")),
    };
    let fortran = match get("fortran_order") {
        Some(Literal::Bool(b)) => *b,
        _ => return Err(bad(path, key, ".npy header has no boolean 'fortran_order'")),
    };
    let shape = match get("shape") {
        Some(Literal::Seq(dims)) => dims
            .iter()
            .map(|d| match d {
                Literal::Int(n) => {
                    usize::try_from(*n).map_err(|_| bad(path, key, "shape too large"))
                }
                _ => Err(bad(path, key, "shape holds a non-integer")),
            })
            .collect::<Result<Vec<usize>>>()?,
        _ => return Err(bad(path, key, ".npy header has no 'shape' tuple")),
    };
    let dtype = parse_descr(&descr).map_err(|e| bad(path, key, e))?;
    Ok(Header {
        dtype,
        descr,
        fortran,
        shape,
        data_start: end,
    })
}

/// Decodes a complete `.npy` image held in memory.
pub fn decode(bytes: &[u8], path: &Path, key: &str) -> Result<Tensor> {
    let h = parse_header(bytes, path, key)?;
    let data = &bytes[h.data_start..];
    // Checked before any allocation: a header may claim any shape.
    let count = h
        .shape
        .iter()
        .try_fold(1usize, |acc, &d| acc.checked_mul(d));
    let need = count.and_then(|c| c.checked_mul(h.dtype.size));
    let (count, need) = match (count, need) {
        (Some(c), Some(n)) => (c, n),
        _ => {
            return Err(bad(
                path,
                key,
                format!("header shape {:?} is impossibly large", h.shape),
            ));
        }
    };
    if need != data.len() {
        return Err(bad(
            path,
            key,
            format!(
                "header shape {:?} of {} needs {need} data bytes but the file holds {} (truncated or corrupt file)",
                h.shape,
                h.descr,
                data.len()
            ),
        ));
    }
    // A zero-width string dtype ('U0', 'S0') has no bytes per element, so the size check
    // above cannot bound its element count; a header could claim 10^11 empty strings in a
    // file of 100 bytes. Such an array holds nothing usable (every label the same ""), so it
    // is refused rather than materialised.
    if h.dtype.size == 0 && count > 0 {
        return Err(bad(
            path,
            key,
            format!(
                "dtype '{}' is a zero-width string: its {count} elements are all empty",
                h.descr
            ),
        ));
    }
    let values = decode_values(data, count, h.dtype, path, key)?;
    let values = if h.fortran && h.shape.len() > 1 {
        to_c_order(values, &h.shape)
    } else {
        values
    };
    let dtype = match (h.dtype.kind, h.dtype.size) {
        (Kind::Float, n) => format!("f{}", n * 8),
        (Kind::Int, n) => format!("i{}", n * 8),
        (Kind::Uint, n) => format!("u{}", n * 8),
        (Kind::Bool, _) => "bool".into(),
        _ => h.descr.trim_start_matches(['<', '>', '|', '=']).to_string(),
    };
    Ok(Tensor {
        shape: h.shape,
        values,
        dtype,
    })
}

fn word<const N: usize>(chunk: &[u8], big: bool) -> [u8; N] {
    let mut w = [0u8; N];
    w.copy_from_slice(chunk);
    if big {
        w.reverse();
    }
    w
}

fn decode_values(data: &[u8], count: usize, dt: Dtype, path: &Path, key: &str) -> Result<Values> {
    let big = dt.big_endian;
    // Zero-width string dtypes have no bytes to chunk; decode() lets them through only
    // when the array is empty.
    if dt.size == 0 {
        return Ok(Values::Text(Vec::new()));
    }
    let chunks = data.chunks_exact(dt.size);
    Ok(match (dt.kind, dt.size) {
        (Kind::Float, 2) => Values::F32(
            chunks
                .map(|c| half::f16::from_bits(u16::from_le_bytes(word(c, big))).to_f32())
                .collect(),
        ),
        (Kind::Float, 4) => Values::F32(chunks.map(|c| f32::from_le_bytes(word(c, big))).collect()),
        (Kind::Float, _) => Values::F64(chunks.map(|c| f64::from_le_bytes(word(c, big))).collect()),
        (Kind::Int, 1) => Values::Int(chunks.map(|c| i64::from(c[0] as i8)).collect()),
        (Kind::Int, 2) => Values::Int(
            chunks
                .map(|c| i64::from(i16::from_le_bytes(word(c, big))))
                .collect(),
        ),
        (Kind::Int, 4) => Values::Int(
            chunks
                .map(|c| i64::from(i32::from_le_bytes(word(c, big))))
                .collect(),
        ),
        (Kind::Int, _) => Values::Int(chunks.map(|c| i64::from_le_bytes(word(c, big))).collect()),
        (Kind::Bool, _) => Values::Int(chunks.map(|c| i64::from(c[0] != 0)).collect()),
        (Kind::Uint, 1) => Values::Int(chunks.map(|c| i64::from(c[0])).collect()),
        (Kind::Uint, 2) => Values::Int(
            chunks
                .map(|c| i64::from(u16::from_le_bytes(word(c, big))))
                .collect(),
        ),
        (Kind::Uint, 4) => Values::Int(
            chunks
                .map(|c| i64::from(u32::from_le_bytes(word(c, big))))
                .collect(),
        ),
        (Kind::Uint, _) => {
            let mut out = Vec::with_capacity(count);
            for (row, c) in chunks.enumerate() {
                let v = u64::from_le_bytes(word(c, big));
                out.push(i64::try_from(v).map_err(|_| {
                    bad(
                        path,
                        key,
                        format!("row {row}: value {v} does not fit a signed 64-bit integer"),
                    )
                })?);
            }
            Values::Int(out)
        }
        (Kind::Unicode, _) => {
            let mut out = Vec::with_capacity(count);
            for (row, c) in chunks.enumerate() {
                let mut s = String::new();
                // numpy pads a unicode element with NULs at the end only; a NUL inside
                // ('x\0a') is part of the name.
                let points: Vec<u32> = c
                    .chunks_exact(4)
                    .map(|cp| u32::from_le_bytes(word(cp, big)))
                    .collect();
                let end = points.iter().rposition(|&u| u != 0).map_or(0, |p| p + 1);
                for &u in &points[..end] {
                    s.push(char::from_u32(u).ok_or_else(|| {
                        bad(path, key, format!("row {row}: invalid code point {u:#x}"))
                    })?);
                }
                out.push(s);
            }
            Values::Text(out)
        }
        (Kind::Bytes, _) => {
            let mut out = Vec::with_capacity(count);
            for (row, c) in chunks.enumerate() {
                let end = c.iter().rposition(|&b| b != 0).map_or(0, |p| p + 1);
                let s = std::str::from_utf8(&c[..end])
                    .map_err(|_| bad(path, key, format!("row {row}: byte string is not UTF-8")))?;
                out.push(s.to_string());
            }
            Values::Text(out)
        }
    })
}

/// Reorders Fortran-order (column-major) values into C order for the same logical shape.
fn to_c_order(values: Values, shape: &[usize]) -> Values {
    fn reorder<T: Clone>(v: Vec<T>, shape: &[usize]) -> Vec<T> {
        match ArrayD::from_shape_vec(IxDyn(shape).f(), v) {
            Ok(a) => a.iter().cloned().collect(),
            // Unreachable: decode() checked the element count against the shape.
            Err(e) => unreachable!("shape checked before reorder: {e}"),
        }
    }
    match values {
        Values::F32(v) => Values::F32(reorder(v, shape)),
        Values::F64(v) => Values::F64(reorder(v, shape)),
        Values::Int(v) => Values::Int(reorder(v, shape)),
        Values::Text(v) => Values::Text(reorder(v, shape)),
    }
}

/// Element payloads of the small per-row columns (the matrix is streamed, see `npz::write`).
pub enum Payload<'a> {
    F32(&'a [f32]),
    I64(&'a [i64]),
    Text(&'a [String]),
}

/// A version 1.0 `.npy` image (version 2.0 when the header would not fit 65535 bytes).
pub fn encode(shape: &[usize], payload: Payload<'_>) -> Vec<u8> {
    let (descr, body): (&str, Vec<u8>) = match payload {
        Payload::F32(v) => ("<f4", v.iter().flat_map(|x| x.to_le_bytes()).collect()),
        Payload::I64(v) => ("<i8", v.iter().flat_map(|x| x.to_le_bytes()).collect()),
        Payload::Text(v) => {
            let width = v
                .iter()
                .map(|s| s.chars().count())
                .max()
                .unwrap_or(0)
                .max(1);
            let mut body = Vec::with_capacity(v.len() * width * 4);
            for s in v {
                let n = s.chars().count();
                body.extend(s.chars().flat_map(|c| u32::from(c).to_le_bytes()));
                body.extend(std::iter::repeat_n(0u8, (width - n) * 4));
            }
            let mut out = header(shape, &format!("<U{width}"));
            out.extend_from_slice(&body);
            return out;
        }
    };
    let mut out = header(shape, descr);
    out.extend_from_slice(&body);
    out
}

/// The magic, version, header length and header of a `.npy` image whose data (of numpy type
/// `descr`, C order) follows it: what [`encode`] puts before the values, for a writer that
/// streams a large matrix's values itself instead of building the whole image.
pub fn header(shape: &[usize], descr: &str) -> Vec<u8> {
    let dims = match shape {
        [n] => format!("({n},)"),
        _ => format!(
            "({})",
            shape
                .iter()
                .map(|d| d.to_string())
                .collect::<Vec<_>>()
                .join(", ")
        ),
    };
    let mut header = format!("{{'descr': '{descr}', 'fortran_order': False, 'shape': {dims}, }}");
    // NEP 1: pad with spaces and end with '\n' so the data starts on a 64-byte boundary.
    let padded = |prefix: usize| (prefix + header.len() + 1).div_ceil(64) * 64;
    let v1 = padded(10) - 10 <= usize::from(u16::MAX);
    let prefix = if v1 { 10 } else { 12 };
    let total = padded(prefix);
    header.push_str(&" ".repeat(total - prefix - header.len() - 1));
    header.push('\n');
    let mut out = Vec::with_capacity(total);
    out.extend_from_slice(MAGIC);
    if v1 {
        out.extend_from_slice(&[1, 0]);
        out.extend_from_slice(&(header.len() as u16).to_le_bytes());
    } else {
        out.extend_from_slice(&[2, 0]);
        out.extend_from_slice(&(header.len() as u32).to_le_bytes());
    }
    out.extend_from_slice(header.as_bytes());
    out
}

/// The error for a header whose shape and dtype imply a data size other than the one present.
fn size_contradiction(
    h: &Header,
    need: Option<usize>,
    have: usize,
    path: &Path,
    key: &str,
) -> Error {
    let shape = shape_text(&h.shape);
    match need {
        None => bad(
            path,
            key,
            format!(
                "header shape {shape} is impossibly large (more bytes than memory can address)"
            ),
        ),
        Some(n) if have > n => bad(
            path,
            key,
            format!(
                "header shape {shape} of {} implies {n} data bytes, but {have} follow it: more than the header allows (a corrupt file or a decompression bomb); nothing beyond the header was read",
                h.descr
            ),
        ),
        Some(n) => bad(
            path,
            key,
            format!(
                "header shape {shape} of {} needs {n} data bytes but the file holds {have} (truncated or corrupt file)",
                h.descr
            ),
        ),
    }
}

/// A shape for a message, e.g. `(1000000000000, 64)`.
fn shape_text(shape: &[usize]) -> String {
    let parts: Vec<String> = shape.iter().map(|d| d.to_string()).collect();
    format!("({})", parts.join(", "))
}

/// Reads a `.npy` file from disk, float data straight into its final buffer (see
/// [`decode_stream`]).
pub fn read_file(path: &Path, key: &str) -> Result<Tensor> {
    let file = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let len = file.metadata().map_err(|e| Error::io(path, e))?.len();
    let mut reader = std::io::BufReader::with_capacity(STREAM_CHUNK, file);
    // The file's own length bounds what it can hold.
    decode_stream(&mut reader, len, len, path, key, &|e| Error::io(path, e))
}

/// Bytes decoded at a time by [`decode_stream`].
const STREAM_CHUNK: usize = 1 << 20;

/// Decodes a `.npy` image of `len` bytes read from `r`. Float arrays (the embeddings) are
/// decoded a chunk at a time into their final buffer, so the raw bytes and the decoded matrix
/// are never both in memory; other arrays (labels, folds: small) and anything whose header
/// does not check out are read whole and go through [`decode`], so every error is the same
/// as for an in-memory image. `io_err` maps read failures (an early end included).
pub fn decode_stream<R: std::io::Read>(
    r: &mut R,
    len: u64,
    prealloc: u64,
    path: &Path,
    key: &str,
    io_err: &dyn Fn(std::io::Error) -> Error,
) -> Result<Tensor> {
    let len = usize::try_from(len).map_err(|_| bad(path, key, "file is too large"))?;
    // Never reserve more than the caller can vouch for: a compressed member's declared size
    // may lie, so buffers beyond `prealloc` grow only as real bytes arrive.
    let prealloc = usize::try_from(prealloc).unwrap_or(usize::MAX);
    // Fixed prefix (magic, version, header length), then the header text.
    let mut head = vec![0u8; len.min(12)];
    r.read_exact(&mut head).map_err(io_err)?;
    let header_end = header_span(&head, path, key)
        .ok()
        .map(|(start, len)| start + len);
    let read_rest = |r: &mut R, mut bytes: Vec<u8>| -> Result<Tensor> {
        bytes.reserve((len - bytes.len()).min(prealloc));
        r.take((len - bytes.len()) as u64)
            .read_to_end(&mut bytes)
            .map_err(io_err)?;
        if bytes.len() < len {
            return Err(io_err(std::io::ErrorKind::UnexpectedEof.into()));
        }
        decode(&bytes, path, key)
    };
    let Some(header_end) = header_end.filter(|&e| e <= len) else {
        return read_rest(r, head);
    };
    if header_end > head.len() {
        let have = head.len();
        head.resize(header_end, 0);
        r.read_exact(&mut head[have..]).map_err(io_err)?;
    } else {
        // A header shorter than the fixed prefix: give back the extra bytes to the slow path.
        return read_rest(r, head);
    }
    let Ok(h) = parse_header(&head, path, key) else {
        return read_rest(r, head);
    };
    let count = h
        .shape
        .iter()
        .try_fold(1usize, |acc, &d| acc.checked_mul(d));
    let need = count.and_then(|c| c.checked_mul(h.dtype.size));
    // The header fixes the data size, and `len` is what the file (or the archive's directory)
    // says is there: when they disagree, refuse before reading, allocating or inflating any
    // more. A small compressed member that inflates far past its header is stopped here.
    let have = len - h.data_start;
    match need {
        Some(n) if n != have => return Err(size_contradiction(&h, Some(n), have, path, key)),
        None => return Err(size_contradiction(&h, None, have, path, key)),
        _ => {}
    }
    let streamable = h.dtype.kind == Kind::Float && h.dtype.size > 0 && !h.fortran;
    let (Some(count), Some(need), true) = (count, need, streamable) else {
        return read_rest(r, head);
    };
    if need != len - h.data_start {
        return read_rest(r, head);
    }
    let dtype = format!("f{}", h.dtype.size * 8);
    let step = (STREAM_CHUNK / h.dtype.size).max(1) * h.dtype.size;
    let mut buf = vec![0u8; step.min(need)];
    let mut data = Vec::with_capacity(count.min(prealloc / h.dtype.size));
    let mut wide: Vec<f64> = Vec::new();
    let mut done = 0;
    while done < need {
        let m = step.min(need - done);
        r.read_exact(&mut buf[..m]).map_err(io_err)?;
        match decode_values(&buf[..m], m / h.dtype.size, h.dtype, path, key)? {
            Values::F32(v) => data.extend_from_slice(&v),
            Values::F64(v) => {
                if wide.capacity() == 0 {
                    wide.reserve_exact(count.min(prealloc / 8));
                }
                wide.extend_from_slice(&v);
            }
            Values::Int(_) | Values::Text(_) => unreachable!("float dtype decodes to floats"),
        }
        done += m;
    }
    let values = if h.dtype.size == 8 {
        Values::F64(wide)
    } else {
        Values::F32(data)
    };
    Ok(Tensor {
        shape: h.shape,
        values,
        dtype,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn encode_then_decode() {
        // common practice, no source: what we write we must read back bit for bit.
        let p = Path::new("mem.npy");
        let t = decode(
            &encode(&[2, 3], Payload::F32(&[0.0, 1.5, -2.0, 3.0, 4.25, 5.0])),
            p,
            "a",
        )
        .unwrap();
        assert_eq!(t.shape, vec![2, 3]);
        match t.values {
            Values::F32(v) => assert_eq!(v, vec![0.0, 1.5, -2.0, 3.0, 4.25, 5.0]),
            other => panic!("{other:?}"),
        }
        let names = vec!["ab".to_string(), "ü".into()];
        match decode(&encode(&[2], Payload::Text(&names)), p, "a")
            .unwrap()
            .values
        {
            Values::Text(v) => assert_eq!(v, names),
            other => panic!("{other:?}"),
        }
        // NEP 1: the data offset is a multiple of 64 (from memory of the numpy format docs).
        let img = encode(&[1], Payload::I64(&[7]));
        assert_eq!((img.len() - 8) % 64, 0);
    }

    #[test]
    fn streamed_decode_equals_in_memory_decode() {
        // Common practice, no source: reading a chunk at a time must give the in-memory result
        // (here across several 1 MiB chunks), and a truncated stream must fail, not pad.
        let p = Path::new("mem.npy");
        let n = 700_000;
        let v: Vec<f32> = (0..n).map(|i| i as f32 * 0.5 - 7.0).collect();
        let img = encode(&[n / 7, 7], Payload::F32(&v));
        let io = |e: std::io::Error| Error::io(p, e);
        let t = decode_stream(
            &mut &img[..],
            img.len() as u64,
            img.len() as u64,
            p,
            "a",
            &io,
        )
        .unwrap();
        assert_eq!(t.shape, vec![n / 7, 7]);
        assert_eq!(t.dtype, "f32");
        match t.values {
            Values::F32(got) => assert_eq!(got, v),
            other => panic!("{other:?}"),
        }
        let short = &img[..img.len() - 3];
        assert!(
            decode_stream(
                &mut &short[..],
                img.len() as u64,
                img.len() as u64,
                p,
                "a",
                &io
            )
            .is_err()
        );
        assert!(
            decode_stream(
                &mut &short[..],
                short.len() as u64,
                short.len() as u64,
                p,
                "a",
                &io
            )
            .is_err()
        );
        // Non-float arrays take the whole-image path.
        let labels = encode(&[3], Payload::I64(&[4, 5, 6]));
        let t = decode_stream(
            &mut &labels[..],
            labels.len() as u64,
            labels.len() as u64,
            p,
            "a",
            &io,
        )
        .unwrap();
        assert!(matches!(t.values, Values::Int(ref x) if x == &[4, 5, 6]));
    }
}
