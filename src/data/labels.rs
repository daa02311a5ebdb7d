//! Turning the label column of a file, whatever its type, into class indices.

use std::path::Path;

use crate::error::{Error, Result};

/// Labels as a reader found them, before they become class indices.
#[derive(Debug, Clone)]
pub enum RawLabels {
    Int(Vec<i64>),
    /// Floating-point labels; accepted only when every value is integral.
    Float(Vec<f64>),
    Text(Vec<String>),
}

impl RawLabels {
    pub fn len(&self) -> usize {
        match self {
            RawLabels::Int(v) => v.len(),
            RawLabels::Float(v) => v.len(),
            RawLabels::Text(v) => v.len(),
        }
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// Class indices (first-seen order) and class names for a label column read from `path` at
/// `key`. Non-integral or NaN float labels are refused, naming the first offending row.
pub fn encode_labels(raw: RawLabels, path: &Path, key: &str) -> Result<(Vec<u32>, Vec<String>)> {
    let names: Vec<String> = match raw {
        RawLabels::Text(v) => v,
        RawLabels::Int(v) => v.iter().map(|i| i.to_string()).collect(),
        RawLabels::Float(v) => {
            let mut out = Vec::with_capacity(v.len());
            for (row, f) in v.iter().enumerate() {
                if !f.is_finite() || f.fract() != 0.0 || f.abs() > 9.0e15 {
                    return Err(Error::input_at(
                        path,
                        format!("key '{key}', row {row}"),
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
    let mut classes: Vec<String> = Vec::new();
    let mut index = std::collections::HashMap::<String, u32>::new();
    let mut labels = Vec::with_capacity(names.len());
    for name in names {
        let next = classes.len() as u32;
        let id = *index.entry(name.clone()).or_insert_with(|| {
            classes.push(name);
            next
        });
        labels.push(id);
    }
    Ok((labels, classes))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn first_seen_order_and_integral_floats() {
        // common practice, no source: class order is the order of first appearance.
        let (l, c) = encode_labels(
            RawLabels::Float(vec![2.0, 0.0, 2.0]),
            Path::new("f"),
            "labels",
        )
        .unwrap();
        assert_eq!(l, vec![0, 1, 0]);
        assert_eq!(c, vec!["2", "0"]);
        assert!(encode_labels(RawLabels::Float(vec![1.5]), Path::new("f"), "labels").is_err());
        assert!(encode_labels(RawLabels::Float(vec![f64::NAN]), Path::new("f"), "labels").is_err());
    }
}
