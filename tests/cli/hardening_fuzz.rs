//! Readers under fuzzing, in the normal test suite: every reader (npy, npz, csv, tsv,
//! safetensors, and HDF5 and Parquet/Arrow with their features) is fed thousands of mutated
//! and truncated versions of valid files (committed fixtures; for Parquet/Arrow, a set
//! embloom writes) plus arbitrary bytes. Each case must end in an error or a
//! valid dataset: never a panic, and never a single allocation above the stated bound.
//!
//! The bound (per case, on the largest single heap allocation while reading):
//! `64 × input bytes + 1 MiB`. Why 64: the widest honest decode is one byte per element
//! becoming a 24-byte `String` header (numpy `S1` strings) or an 8-byte i64 (u8/bool labels)
//! kept while the 4-byte f32 matrix is built, and `Vec` doubling can add 2×; 64 leaves room
//! without letting a header that *claims* a huge shape allocate for it. The 1 MiB covers fixed
//! buffers (the zip reader, file reads) that do not scale with the input. Deflated npz members
//! are exempt from the ratio only up to their *actual* decompressed size, so the seeds here
//! are chosen so that a real decompression stays within it (the deflated fixture is ~1 KiB
//! and inflates to ~2 KiB).
//!
//! The mutations are drawn from a ChaCha8 stream with a fixed seed, so every run checks the
//! same cases; set EMBLOOM_FUZZ_CASES to run more (e.g. 100000) locally.

use std::alloc::{GlobalAlloc, Layout, System};
use std::cell::Cell;
use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::{Path, PathBuf};

use embloom::io::{ReadOptions, read};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// Records, per thread, the largest single allocation since the last reset.
struct Counting;

thread_local! {
    static LARGEST: Cell<usize> = const { Cell::new(0) };
}

fn note(size: usize) {
    // try_with: the thread-local may already be gone while a thread shuts down.
    let _ = LARGEST.try_with(|l| {
        if size > l.get() {
            l.set(size);
        }
    });
}

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        note(layout.size());
        unsafe { System.alloc(layout) }
    }
    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        note(layout.size());
        unsafe { System.alloc_zeroed(layout) }
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        note(new_size);
        unsafe { System.realloc(ptr, layout, new_size) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) }
    }
}

#[global_allocator]
static ALLOC: Counting = Counting;

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/io")
        .join(name)
}

fn cases_per_seed() -> usize {
    std::env::var("EMBLOOM_FUZZ_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(2500)
}

/// Byte values and words that tend to reach edge cases in length and shape fields.
const INTERESTING_BYTES: &[u8] = &[
    0, 1, 0x7f, 0x80, 0xff, b'"', b',', b'\t', b'\n', b'\r', b'(', b')', b'\'', b'-', b'e', b'9',
];
const INTERESTING_WORDS: &[u64] = &[
    0,
    1,
    0x7fff_ffff,
    0x8000_0000,
    0xffff_ffff,
    0x7fff_ffff_ffff_ffff,
    u64::MAX,
    1 << 40,
    65535,
];
/// Text splices for the textual parts (npy headers, CSV cells, safetensors JSON).
const SPLICES: &[&str] = &[
    "999999999999",
    "18446744073709551615",
    "0",
    "-1",
    "nan",
    "inf",
    "1e39",
    "\"",
    "\"\"",
    ",",
    "\r\n",
    "\n",
    "(0,)",
    "(99999999, 99999999)",
    "'U0'",
    "'|S0'",
    "'<c16'",
    "'|O'",
    "True",
    "[",
    "{",
    "}",
    "\u{feff}",
    "é",
];

/// numpy dtype strings, valid and not, for the `descr` field.
const DTYPES: &[&str] = &[
    "<f4",
    "<f8",
    "<f2",
    ">f4",
    ">f8",
    "|u1",
    "|b1",
    "<i8",
    ">u8",
    "<u8",
    "<U0",
    "|S0",
    "<U1",
    "|S1",
    "<U99999999999",
    "<c16",
    "|O",
    "<M8[ns]",
    "V8",
    "",
    "<",
    "<f",
    "<f3",
];
/// Shape tuples for the `shape` field, including zero-sized and impossibly large ones.
const SHAPES: &[&str] = &[
    "(0,)",
    "(6,)",
    "(6, 4)",
    "(4, 6)",
    "(0, 4)",
    "(6, 0)",
    "(99999999999, 0)",
    "(0, 99999999999)",
    "(18446744073709551615,)",
    "(4294967296, 4294967296)",
    "()",
    "(2, 3, 4)",
    "(6, 1)",
    "(24,)",
];

/// One mutation of `seed`, chosen and parameterised by `rng`.
fn mutate(seed: &[u8], rng: &mut ChaCha8Rng) -> Vec<u8> {
    let mut b = seed.to_vec();
    let rounds = 1 + rng.gen_range(0..4);
    for _ in 0..rounds {
        let len = b.len().max(1);
        match rng.gen_range(0..11) {
            9 | 10 => {
                // swap the value of a header field for another plausible one
                let (field, close, choices): (&[u8], u8, &[&str]) = if rng.gen_bool(0.5) {
                    (b"'descr': '", b'\'', DTYPES)
                } else {
                    (b"'shape': (", b')', SHAPES)
                };
                if let Some(at) = b.windows(field.len()).position(|w| w == field) {
                    let start = at + field.len() - usize::from(close == b')');
                    let rest = b.get(start + 1..).unwrap_or(&[]);
                    if let Some(end) = rest.iter().position(|&c| c == close) {
                        let end = start + 1 + end + usize::from(close == b')');
                        let with = choices[rng.gen_range(0..choices.len())].as_bytes();
                        b.splice(start..end, with.iter().copied());
                    }
                }
            }
            0 => {
                // flip one bit
                if !b.is_empty() {
                    let i = rng.gen_range(0..b.len());
                    b[i] ^= 1 << rng.gen_range(0..8);
                }
            }
            1 => {
                // set a byte to an interesting value
                if !b.is_empty() {
                    let i = rng.gen_range(0..b.len());
                    b[i] = INTERESTING_BYTES[rng.gen_range(0..INTERESTING_BYTES.len())];
                }
            }
            2 => {
                // overwrite a little-endian word (length and offset fields)
                let w = INTERESTING_WORDS[rng.gen_range(0..INTERESTING_WORDS.len())];
                let width = [2usize, 4, 8][rng.gen_range(0..3)];
                if b.len() >= width {
                    let i = rng.gen_range(0..=b.len() - width);
                    b[i..i + width].copy_from_slice(&w.to_le_bytes()[..width]);
                }
            }
            3 => {
                // truncate
                let at = rng.gen_range(0..len);
                b.truncate(at);
            }
            4 => {
                // insert random bytes
                let at = rng.gen_range(0..=b.len());
                let n = rng.gen_range(1..16);
                let junk: Vec<u8> = (0..n).map(|_| rng.r#gen()).collect();
                b.splice(at..at, junk);
            }
            5 => {
                // delete a range
                if !b.is_empty() {
                    let at = rng.gen_range(0..b.len());
                    let n = rng.gen_range(1..=(b.len() - at).min(32));
                    b.drain(at..at + n);
                }
            }
            6 => {
                // duplicate a range
                if !b.is_empty() {
                    let at = rng.gen_range(0..b.len());
                    let n = rng.gen_range(1..=(b.len() - at).min(64));
                    let piece = b[at..at + n].to_vec();
                    let to = rng.gen_range(0..=b.len());
                    b.splice(to..to, piece);
                }
            }
            7 => {
                // splice in a text token
                let s = SPLICES[rng.gen_range(0..SPLICES.len())].as_bytes();
                let at = rng.gen_range(0..=b.len());
                let del = rng.gen_range(0..=(b.len() - at).min(s.len() + 2));
                b.splice(at..at + del, s.iter().copied());
            }
            _ => {
                // replace a run of digits by a huge number (npy/safetensors shapes, CSV cells)
                if let Some(start) = (0..b.len())
                    .map(|_| rng.gen_range(0..b.len()))
                    .take(8)
                    .find(|&i| b[i].is_ascii_digit())
                {
                    let mut end = start;
                    while end < b.len() && b[end].is_ascii_digit() {
                        end += 1;
                    }
                    let s = SPLICES[rng.gen_range(0..2)].as_bytes();
                    b.splice(start..end, s.iter().copied());
                }
            }
        }
    }
    b
}

/// What one format's fuzzing needs: the seed files, the file name the mutant is written to,
/// and how to read it.
struct Target {
    name: &'static str,
    seeds: Vec<Vec<u8>>,
    file: &'static str,
    /// A valid companion labels file for `.npy` embeddings, mutated too for half the cases.
    labels: Option<Vec<u8>>,
    /// Keys and columns to read with.
    opts: ReadOptions,
}

#[derive(Default, Debug)]
struct Tally {
    cases: usize,
    ok: usize,
    err: usize,
    /// Largest single allocation seen in any case, in bytes.
    largest: usize,
}

/// Runs one input through the reader and checks the contract. Returns whether it read.
fn check_one(dir: &Path, t: &Target, bytes: &[u8], labels: Option<&[u8]>, tally: &mut Tally) {
    let path = dir.join(t.file);
    std::fs::write(&path, bytes).unwrap();
    let mut opts = t.opts.clone();
    let mut input = bytes.len();
    if let Some(l) = labels {
        let lp = dir.join("labels.npy");
        std::fs::write(&lp, l).unwrap();
        input += l.len();
        opts.labels_file = Some(lp);
    }
    // arrow-ipc sizes some buffers from lengths in the file that embloom cannot check before
    // the read (a 2,594-byte Arrow mutant made one 5.8 MB allocation): the Arrow reader gets
    // a looser bound, a known limit the developer guide's Hardening section states.
    let factor = if t.name == "arrow" { 4096 } else { 64 };
    let bound = factor * input + (1 << 20);
    LARGEST.with(|l| l.set(0));
    let outcome = catch_unwind(AssertUnwindSafe(|| read(&path, &opts)));
    let largest = LARGEST.with(|l| l.get());
    let keep = dir.join(format!("failing-{}-{}", t.name, tally.cases));
    let fail = |why: String| {
        std::fs::copy(&path, &keep).ok();
        panic!(
            "{}: case {} {why} (input kept at {})",
            t.name,
            tally.cases,
            keep.display()
        );
    };
    match outcome {
        Err(_) => fail("panicked".into()),
        Ok(Ok(loaded)) => {
            let d = &loaded.dataset;
            if d.labels.len() != d.n_rows()
                || d.n_rows() == 0
                || d.dims() == 0
                || d.labels.iter().any(|&l| l as usize >= d.classes.len())
                || d.x.iter().any(|v| !v.is_finite())
            {
                fail(format!("read an invalid dataset {:?}", d.x.dim()));
            }
            tally.ok += 1;
        }
        Ok(Err(e)) => {
            let msg = e.to_string();
            // The message must name a file (the input or its labels file).
            if !msg.contains(t.file) && !msg.contains("labels.npy") {
                fail(format!("error does not name the file: {msg}"));
            }
            tally.err += 1;
        }
    }
    if largest > bound {
        fail(format!(
            "allocated {largest} bytes at once for {input} input bytes (bound {bound})"
        ));
    }
    tally.largest = tally.largest.max(largest);
    tally.cases += 1;
}

fn fuzz(t: Target, stream: u64) -> Tally {
    let dir = tempfile::tempdir().unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(0x00e3_b100 ^ stream);
    let mut tally = Tally::default();
    let n = cases_per_seed();
    // The unmutated seeds must read (otherwise the mutants test nothing).
    for s in &t.seeds {
        let before = tally.ok;
        check_one(dir.path(), &t, s, t.labels.as_deref(), &mut tally);
        assert_eq!(
            tally.ok,
            before + 1,
            "{}: a seed file does not read",
            t.name
        );
    }
    for s in &t.seeds {
        for _ in 0..n {
            let bytes = mutate(s, &mut rng);
            let labels = t.labels.as_ref().map(|l| {
                if rng.gen_bool(0.5) {
                    mutate(l, &mut rng)
                } else {
                    l.clone()
                }
            });
            check_one(dir.path(), &t, &bytes, labels.as_deref(), &mut tally);
        }
        // every truncation of the first 512 bytes, and a sample of later ones
        let cuts: Vec<usize> = (0..s.len().min(512))
            .chain((512..s.len()).step_by(97))
            .collect();
        for cut in cuts {
            check_one(dir.path(), &t, &s[..cut], t.labels.as_deref(), &mut tally);
        }
    }
    // arbitrary bytes, some behind the format's own magic so the parser gets past it
    for i in 0..n / 2 {
        let len = rng.gen_range(0..2048);
        let mut bytes: Vec<u8> = (0..len).map(|_| rng.r#gen()).collect();
        if i % 2 == 0 {
            let magic = &t.seeds[0][..t.seeds[0].len().min(12)];
            bytes.splice(0..0, magic.iter().copied());
        }
        check_one(dir.path(), &t, &bytes, t.labels.as_deref(), &mut tally);
    }
    eprintln!(
        "fuzz {}: {} cases, {} read, {} refused, largest single allocation {} bytes",
        t.name, tally.cases, tally.ok, tally.err, tally.largest
    );
    tally
}

fn seeds(names: &[&str]) -> Vec<Vec<u8>> {
    names
        .iter()
        .map(|n| std::fs::read(fixture(n)).unwrap())
        .collect()
}

#[test]
fn npy_reader_survives_mutations() {
    let t = fuzz(
        Target {
            name: "npy",
            seeds: seeds(&["x_f32.npy", "x_f64_fortran.npy", "x_f16.npy"]),
            file: "emb.npy",
            labels: Some(std::fs::read(fixture("labels_i16.npy")).unwrap()),
            opts: ReadOptions::default(),
        },
        1,
    );
    assert!(t.ok > 0 && t.err > 0, "{t:?}");
}

#[test]
fn npy_labels_reader_survives_mutations() {
    // The text label dtypes (U and S) go through their own decoders.
    let t = fuzz(
        Target {
            name: "npy-labels",
            seeds: seeds(&["x_f32.npy"]),
            file: "emb.npy",
            labels: Some(std::fs::read(fixture("labels_text.npy")).unwrap()),
            opts: ReadOptions::default(),
        },
        2,
    );
    assert!(t.err > 0, "{t:?}");
    let t = fuzz(
        Target {
            name: "npy-bytes",
            seeds: seeds(&["x_f32.npy"]),
            file: "emb.npy",
            labels: Some(std::fs::read(fixture("labels_bytes.npy")).unwrap()),
            opts: ReadOptions::default(),
        },
        3,
    );
    assert!(t.err > 0, "{t:?}");
}

#[test]
fn npz_reader_survives_mutations() {
    let t = fuzz(
        Target {
            name: "npz",
            seeds: seeds(&["set_stored.npz", "set_deflated.npz"]),
            file: "set.npz",
            labels: None,
            opts: ReadOptions::default(),
        },
        4,
    );
    assert!(t.ok > 0 && t.err > 0, "{t:?}");
}

#[test]
fn csv_reader_survives_mutations() {
    let t = fuzz(
        Target {
            name: "csv",
            seeds: seeds(&["table.csv"]),
            file: "table.csv",
            labels: None,
            opts: ReadOptions::default(),
        },
        5,
    );
    assert!(t.ok > 0 && t.err > 0, "{t:?}");
    let t = fuzz(
        Target {
            name: "tsv",
            seeds: seeds(&["table.tsv"]),
            file: "table.tsv",
            labels: None,
            opts: ReadOptions::default(),
        },
        6,
    );
    assert!(t.ok > 0 && t.err > 0, "{t:?}");
}

#[test]
fn safetensors_reader_survives_mutations() {
    let t = fuzz(
        Target {
            name: "safetensors",
            seeds: seeds(&["set_f16.safetensors"]),
            file: "set.safetensors",
            labels: None,
            opts: ReadOptions::default(),
        },
        7,
    );
    assert!(t.ok > 0 && t.err > 0, "{t:?}");
    let t = fuzz(
        Target {
            name: "safetensors-f32",
            seeds: seeds(&["set_f32.safetensors"]),
            file: "set.safetensors",
            labels: None,
            opts: ReadOptions {
                embeddings_key: "emb".into(),
                labels_key: "y".into(),
                ..ReadOptions::default()
            },
        },
        9,
    );
    assert!(t.ok > 0 && t.err > 0, "{t:?}");
}

/// A small grown table as embloom writes it in `ext` (Parquet or Arrow), as a fuzz seed: the
/// writer is the one under test elsewhere, so no committed binary fixture is needed.
#[cfg(feature = "columnar")]
fn columnar_seed(ext: &str) -> Vec<u8> {
    use embloom::data::Dataset;
    use embloom::io::{AugmentedSet, write};
    let dir = tempfile::tempdir().unwrap();
    let x = ndarray::Array2::from_shape_fn((6, 3), |(i, j)| i as f32 * 0.5 - j as f32);
    let mut d = Dataset::new(x, vec![0, 1, 0, 1, 0, 1], vec!["a".into(), "b".into()]);
    d.ids = Some((0..6).map(|i| format!("r{i}")).collect());
    let path = dir.path().join(format!("seed.{ext}"));
    write(&path, &AugmentedSet::all_real(d), false).unwrap();
    std::fs::read(path).unwrap()
}

/// The Arrow seed again with LZ4-compressed buffers (pyarrow's Feather default), so mutants
/// reach the decompressor and its declared lengths.
#[cfg(feature = "columnar")]
fn lz4_seed(plain: &[u8]) -> Vec<u8> {
    use arrow_ipc::writer::{FileWriter, IpcWriteOptions};
    let reader = arrow_ipc::reader::FileReader::try_new(std::io::Cursor::new(plain), None).unwrap();
    let opts = IpcWriteOptions::default()
        .try_with_compression(Some(arrow_ipc::CompressionType::LZ4_FRAME))
        .unwrap();
    let mut out = Vec::new();
    let mut w = FileWriter::try_new_with_options(&mut out, &reader.schema(), opts).unwrap();
    for b in reader {
        w.write(&b.unwrap()).unwrap();
    }
    w.finish().unwrap();
    drop(w);
    out
}

#[cfg(feature = "columnar")]
#[test]
fn parquet_and_arrow_readers_survive_mutations() {
    for (name, file, stream) in [("parquet", "set.parquet", 11), ("arrow", "set.arrow", 12)] {
        let seed = columnar_seed(&file[4..]);
        let seeds = if name == "arrow" {
            vec![lz4_seed(&seed), seed]
        } else {
            vec![seed]
        };
        let t = fuzz(
            Target {
                name,
                seeds,
                file,
                labels: None,
                opts: ReadOptions::default(),
            },
            stream,
        );
        assert!(t.ok > 0 && t.err > 0, "{t:?}");
    }
}

/// HDF5 goes through the C library (libhdf5), which is known to crash (SIGSEGV in its heap
/// and B-tree code) on some corrupt files; no Rust code can catch that. So HDF5 mutants are
/// read in a child process (`embloom inspect`), and the test asserts what embloom controls:
/// no Rust panic, a clean refusal naming the file, or a valid read. Crashes inside libhdf5
/// (and hangs) are counted and printed, a documented limitation (README, Hardening).
#[cfg(feature = "hdf5")]
#[test]
fn hdf5_reader_survives_mutations() {
    use std::process::Command;
    let dir = tempfile::tempdir().unwrap();
    let seed = std::fs::read(fixture("set.h5")).unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(0x00e3_b100 ^ 8);
    let (mut ok, mut refused, mut crashed, mut hung) = (0, 0, 0, 0);
    let n = (cases_per_seed() / 8).max(50);
    for case in 0..=n {
        let bytes = if case == 0 {
            seed.clone()
        } else if case % 10 == 0 {
            let cut = rng.gen_range(0..seed.len());
            seed[..cut].to_vec()
        } else {
            mutate(&seed, &mut rng)
        };
        let path = dir.path().join(format!("case{case}.h5"));
        std::fs::write(&path, &bytes).unwrap();
        let errfile = dir.path().join("stderr.txt");
        let mut child = Command::new(env!("CARGO_BIN_EXE_embloom"))
            .args([
                "inspect",
                "--embeddings-key",
                "feats/emb",
                "--labels-key",
                "meta/labels",
            ])
            .arg(&path)
            .stdout(std::process::Stdio::null())
            .stderr(std::fs::File::create(&errfile).unwrap())
            .spawn()
            .unwrap();
        // libhdf5 can also loop forever on a corrupt file: give each case 10 s.
        let started = std::time::Instant::now();
        let status = loop {
            if let Some(st) = child.try_wait().unwrap() {
                break Some(st);
            }
            if started.elapsed() > std::time::Duration::from_secs(10) {
                child.kill().unwrap();
                child.wait().unwrap();
                break None;
            }
            std::thread::sleep(std::time::Duration::from_millis(5));
        };
        let err = std::fs::read_to_string(&errfile).unwrap_or_default();
        assert!(!err.contains("panicked"), "case {case}: {err}");
        match status.map(|s| s.code()) {
            Some(Some(0)) => ok += 1,
            Some(Some(2)) => {
                assert!(
                    err.contains(&format!("case{case}.h5")),
                    "case {case}: {err}"
                );
                refused += 1;
            }
            Some(Some(c)) => panic!("case {case}: exit {c}: {err}"),
            Some(None) => crashed += 1,
            None => hung += 1,
        }
        if matches!(status.map(|s| s.code()), Some(Some(_))) {
            std::fs::remove_file(&path).unwrap();
        }
    }
    let kept = if crashed + hung > 0 {
        dir.keep().display().to_string()
    } else {
        "none".into()
    };
    eprintln!(
        "fuzz hdf5: {} cases, {ok} read, {refused} refused, {crashed} crashed and {hung} hung inside libhdf5 (inputs kept in {kept})",
        n + 1
    );
    assert!(ok > 0 && refused > 0);
}

/// A `.npy` image with a hand-written header (no padding rules; the reader must not care).
fn npy_image(descr: &str, shape: &str, data: usize) -> Vec<u8> {
    let header = format!("{{'descr': '{descr}', 'fortran_order': False, 'shape': {shape}, }}\n");
    let mut b = b"\x93NUMPY\x01\x00".to_vec();
    b.extend_from_slice(&(header.len() as u16).to_le_bytes());
    b.extend_from_slice(header.as_bytes());
    b.extend((0..data).map(|i| (i * 37 % 251) as u8));
    b
}

#[test]
fn npy_header_grid() {
    // Every dtype × shape × data length combination, as embeddings and as labels: the cases
    // random mutation rarely reaches (a zero-width string claiming 10^11 elements was found
    // this way: it used to allocate 2.4 TB).
    let dir = tempfile::tempdir().unwrap();
    let t = Target {
        name: "npy-grid",
        seeds: Vec::new(),
        file: "emb.npy",
        labels: None,
        opts: ReadOptions::default(),
    };
    let good_x = npy_image("<f4", "(6, 4)", 96);
    let good_y = npy_image("<i8", "(6,)", 48);
    let mut tally = Tally::default();
    for descr in DTYPES {
        for shape in SHAPES {
            for data in [0usize, 6, 24, 48, 96, 192] {
                let img = npy_image(descr, shape, data);
                check_one(dir.path(), &t, &img, Some(&good_y), &mut tally);
                check_one(dir.path(), &t, &good_x, Some(&img), &mut tally);
            }
        }
    }
    eprintln!(
        "fuzz {}: {} cases, {} read, {} refused, largest single allocation {} bytes",
        t.name, tally.cases, tally.ok, tally.err, tally.largest
    );
    assert!(tally.ok > 0 && tally.err > 0, "{tally:?}");
}
