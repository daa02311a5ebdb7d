//! Turning the label column of a file, whatever its type, into class indices.

use std::path::Path;

use crate::error::{Error, Result};

/// Labels as a reader found them, before they become class indices.
#[derive(Debug, Clone)]
pub enum RawLabels {
    /// Integer labels, kept as written (any sign or gap) until names are assigned.
    Int(Vec<i64>),
    /// Floating-point labels; accepted only when every value is integral.
    Float(Vec<f64>),
    /// Class names as text; they become the class names themselves.
    Text(Vec<String>),
    /// Class names as text, already interned by the reader: a code per row into `names`
    /// (distinct, in any order), so a long table holds each name once.
    Coded {
        /// Each row's index into `names`.
        codes: Vec<u32>,
        /// The distinct class names the reader met.
        names: Vec<String>,
    },
}

impl RawLabels {
    /// Number of labels, to check against the number of embedding rows.
    pub fn len(&self) -> usize {
        match self {
            RawLabels::Int(v) => v.len(),
            RawLabels::Float(v) => v.len(),
            RawLabels::Text(v) => v.len(),
            RawLabels::Coded { codes, .. } => codes.len(),
        }
    }

    /// Whether there are no labels at all (an empty file is refused before any fit).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// Class indices (numpy `unique` order, see `sorted_codes`) and class names for a label
/// column read from `path`. `source` says where in the file the column is, already worded by
/// the reader (`key 'labels'`, `column 'label'`, `labels file y.npy`), so it is used as is.
/// Non-integral, NaN or too large float labels are refused, and so is an empty text label:
/// it would be written as an empty cell that no reader can tell from a missing label.
pub fn encode_labels(raw: RawLabels, path: &Path, source: &str) -> Result<(Vec<u32>, Vec<String>)> {
    let names: Vec<String> = match raw {
        RawLabels::Coded { codes, names } => {
            if let Some(empty) = names.iter().position(String::is_empty)
                && let Some(row) = codes.iter().position(|&c| c as usize == empty)
            {
                return Err(empty_name(path, source, row));
            }
            return Ok(sorted_interned(codes, names));
        }
        RawLabels::Text(v) => {
            if let Some(row) = v.iter().position(|n| n.is_empty()) {
                return Err(empty_name(path, source, row));
            }
            v
        }
        RawLabels::Int(v) => v.iter().map(|i| i.to_string()).collect(),
        RawLabels::Float(v) => {
            let mut out = Vec::with_capacity(v.len());
            for (row, f) in v.iter().enumerate() {
                let location = || format!("{source}, row {row}");
                if f.is_finite() && f.abs() > 9.0e15 {
                    return Err(Error::input_at(
                        path,
                        location(),
                        format!(
                            "label {f:e} is too large for a class code (at most 9e15, beyond which \
                             float64 skips integers)"
                        ),
                        "store labels as integers or strings, or fix the row",
                    ));
                }
                if !f.is_finite() || f.fract() != 0.0 {
                    return Err(Error::input_at(
                        path,
                        location(),
                        format!(
                            "label {f} is not a whole number; float labels must be integral class codes"
                        ),
                        "store labels as integers or strings, or fix the row",
                    ));
                }
                out.push((*f as i64).to_string());
            }
            out
        }
    };
    let (labels, classes) = sorted_codes(names);
    Ok((labels, classes))
}

fn empty_name(path: &Path, source: &str, row: usize) -> Error {
    Error::input_at(
        path,
        format!("{source}, row {row}"),
        "the class name is empty",
        "give every row a non-empty class name (e.g. 'unknown'), or drop the row",
    )
}

/// [`sorted_codes`] for names already interned: the distinct names are ordered once and each
/// row's code remapped, without a string per row.
fn sorted_interned(codes: Vec<u32>, names: Vec<String>) -> (Vec<u32>, Vec<String>) {
    let (order, classes) = sorted_codes(names);
    (
        codes.into_iter().map(|c| order[c as usize]).collect(),
        classes,
    )
}

/// The canonical integer a name spells, if it spells one (`"7"`, `"-3"`; not `"07"`).
fn as_integer(name: &str) -> Option<i64> {
    name.parse::<i64>().ok().filter(|i| i.to_string() == name)
}

/// Class indices in the order numpy's `unique` gives: numeric order when every name is an
/// integer, lexicographic (code point) order otherwise. The order decides which class wins a
/// tied k-NN vote (the lowest index), so it must not depend on which class a file lists first.
fn sorted_codes(names: Vec<String>) -> (Vec<u32>, Vec<String>) {
    let mut classes: Vec<String> = names.clone();
    classes.sort_unstable();
    classes.dedup();
    let ints: Option<Vec<i64>> = classes.iter().map(|c| as_integer(c)).collect();
    if let Some(mut keyed) = ints.map(|v| v.into_iter().zip(classes.clone()).collect::<Vec<_>>()) {
        keyed.sort_unstable_by_key(|(i, _)| *i);
        classes = keyed.into_iter().map(|(_, c)| c).collect();
    }
    let index: std::collections::HashMap<&str, u32> = classes
        .iter()
        .enumerate()
        .map(|(i, c)| (c.as_str(), i as u32))
        .collect();
    let labels = names.iter().map(|n| index[n.as_str()]).collect();
    (labels, classes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numpy_unique_order_and_integral_floats() {
        // numpy.unique([2, 0, 2, 10]) -> [0, 2, 10] (from memory; numeric, not first-seen).
        let (l, c) = encode_labels(
            RawLabels::Float(vec![2.0, 0.0, 2.0, 10.0]),
            Path::new("f"),
            "labels",
        )
        .unwrap();
        assert_eq!(l, vec![1, 0, 1, 2]);
        assert_eq!(c, vec!["0", "2", "10"]);
        assert!(encode_labels(RawLabels::Float(vec![1.5]), Path::new("f"), "labels").is_err());
        assert!(encode_labels(RawLabels::Float(vec![f64::NAN]), Path::new("f"), "labels").is_err());
    }

    #[test]
    fn messages_name_the_source_once_and_say_what_is_wrong() {
        let msg = |raw| {
            encode_labels(raw, Path::new("f.npz"), "key 'labels'")
                .unwrap_err()
                .to_string()
        };
        let big = msg(RawLabels::Float(vec![0.0, 1e19]));
        assert!(big.contains("key 'labels', row 1"), "{big}");
        assert!(!big.contains("key 'key"), "{big}");
        assert!(
            big.contains("too large") && !big.contains("whole number"),
            "{big}"
        );
        let empty = msg(RawLabels::Text(vec!["a".into(), String::new()]));
        assert!(
            empty.contains("row 1") && empty.contains("empty") && empty.contains("f.npz"),
            "{empty}"
        );
    }

    #[test]
    fn integer_labels_sort_numerically_text_lexicographically() {
        // numpy.unique([9, -1, 10, 3]) -> [-1, 3, 9, 10]; numpy.unique(['b', 'B', 'a', 'ab'])
        // -> ['B', 'a', 'ab', 'b'] (from memory: code point order).
        let (l, c) =
            encode_labels(RawLabels::Int(vec![9, -1, 10, 3]), Path::new("f"), "l").unwrap();
        assert_eq!(
            (l, c),
            (
                vec![2, 0, 3, 1],
                vec!["-1".into(), "3".into(), "9".into(), "10".into()]
            )
        );
        let text = |v: &[&str]| RawLabels::Text(v.iter().map(|s| s.to_string()).collect());
        let (l, c) = encode_labels(text(&["b", "B", "a", "ab"]), Path::new("f"), "l").unwrap();
        assert_eq!(l, vec![3, 0, 1, 2]);
        assert_eq!(c, vec!["B", "a", "ab", "b"]);
        // A CSV label column of integers is text to the reader but numeric to pandas/numpy.
        let (_, c) = encode_labels(text(&["9", "10", "3"]), Path::new("f"), "l").unwrap();
        assert_eq!(c, vec!["3", "9", "10"]);
        // "07" is not an integer spelling, so the column stays text: lexicographic.
        let (_, c) = encode_labels(text(&["9", "07"]), Path::new("f"), "l").unwrap();
        assert_eq!(c, vec!["07", "9"]);
    }
}
