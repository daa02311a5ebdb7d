//! How many synthetic rows each class gets.

use std::fmt;
use std::str::FromStr;

use serde::Serialize;

use crate::error::{Error, Result};

/// The count each grown class is brought up to. Written as the command line spells it
/// (`"median"`, `"50"`, `"x2"`), so a saved configuration reads back as given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Target {
    /// The largest class's count.
    Largest,
    /// The median class count (upper median for an even number of classes).
    Median,
    /// An absolute count.
    Count(usize),
    /// A factor of the class's own count (`x2` doubles it).
    Factor(f64),
}

impl FromStr for Target {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        let bad = || {
            Error::param(
                "target",
                format!("'{s}' is not a target"),
                "use largest, median, a count such as 200, or a factor such as x2",
            )
        };
        match s {
            "largest" => Ok(Target::Largest),
            "median" => Ok(Target::Median),
            _ if s.starts_with('x') => {
                let f: f64 = s[1..].parse().map_err(|_| bad())?;
                if (1.0..=1.0e6).contains(&f) {
                    Ok(Target::Factor(f))
                } else {
                    Err(bad())
                }
            }
            _ => s.parse::<usize>().map(Target::Count).map_err(|_| bad()),
        }
    }
}

impl Serialize for Target {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

impl fmt::Display for Target {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Target::Largest => f.write_str("largest"),
            Target::Median => f.write_str("median"),
            Target::Count(n) => write!(f, "{n}"),
            Target::Factor(x) => write!(f, "x{x}"),
        }
    }
}

/// Rows to add per class index.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    /// Rows to add for each class, indexed by class index; 0 leaves a class as it is.
    pub add: Vec<usize>,
}

impl Plan {
    /// Bring each class (or each class in `only`) up to `target`; classes at or above it, and
    /// classes with no rows, are left alone.
    pub fn new(counts: &[usize], target: Target, only: Option<&[u32]>) -> Plan {
        let mut sorted: Vec<usize> = counts.iter().copied().filter(|&c| c > 0).collect();
        sorted.sort_unstable();
        // A set, so that picking many classes costs classes · log(picked), not classes × picked.
        let only: Option<std::collections::BTreeSet<u32>> =
            only.map(|o| o.iter().copied().collect());
        let goal = |own: usize| -> usize {
            match target {
                Target::Largest => sorted.last().copied().unwrap_or(0),
                Target::Median => sorted.get(sorted.len() / 2).copied().unwrap_or(0),
                Target::Count(n) => n,
                Target::Factor(f) => (own as f64 * f).round() as usize,
            }
        };
        let add = counts
            .iter()
            .enumerate()
            .map(|(c, &own)| {
                let chosen = only.as_ref().is_none_or(|o| o.contains(&(c as u32)));
                if chosen && own > 0 {
                    goal(own).saturating_sub(own)
                } else {
                    0
                }
            })
            .collect();
        Plan { add }
    }

    /// Classes that get at least one row.
    pub fn grown_classes(&self) -> Vec<u32> {
        self.add
            .iter()
            .enumerate()
            .filter(|&(_, &n)| n > 0)
            .map(|(c, _)| c as u32)
            .collect()
    }

    /// The total number of synthetic rows the plan asks for, over all classes.
    pub fn total(&self) -> usize {
        self.add.iter().sum()
    }
}

/// Class indices for the given class names; an unknown name is an error listing the
/// classes. Each value is one class name when it names a class exactly (so a name holding a
/// comma can be given), else a comma-separated list of names.
pub fn class_indices(names: &[String], ds: &crate::data::Dataset) -> Result<Vec<u32>> {
    let mut out = Vec::new();
    for given in names {
        if let Some(c) = ds.class_index(given) {
            out.push(c);
            continue;
        }
        for n in given.split(',') {
            out.push(ds.class_index(n).ok_or_else(|| {
                Error::param(
                    "classes",
                    format!("no class named '{n}'"),
                    class_list(&ds.classes),
                )
            })?);
        }
    }
    Ok(out)
}

/// How many class names an unknown-class error lists before "and N more".
const LISTED_CLASSES: usize = 20;

/// The fix of an unknown-class error: the class names, only the first few of a long list
/// (a set with 200,000 classes must not print them all).
fn class_list(classes: &[String]) -> String {
    let shown = classes
        .iter()
        .take(LISTED_CLASSES)
        .cloned()
        .collect::<Vec<_>>();
    if classes.len() > LISTED_CLASSES {
        format!(
            "the classes are: {}, and {} more (inspect lists them all)",
            shown.join(", "),
            classes.len() - LISTED_CLASSES
        )
    } else {
        format!("the classes are: {}", shown.join(", "))
    }
}

/// The growth plan for a whole dataset: `target` for the classes named in `classes` (all
/// classes when none are named).
pub fn plan_for(
    ds: &crate::data::Dataset,
    target: Target,
    classes: Option<&[String]>,
) -> Result<Plan> {
    let only = classes.map(|names| class_indices(names, ds)).transpose()?;
    Ok(Plan::new(&ds.class_counts(), target, only.as_deref()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_class_name_holding_a_comma_is_taken_whole() {
        let ds = crate::data::Dataset::new(
            ndarray::Array2::zeros((3, 1)),
            vec![0, 1, 2],
            vec!["a".into(), "b, c".into(), "d".into()],
        );
        let given = vec!["b, c".to_string(), "a,d".to_string()];
        assert_eq!(class_indices(&given, &ds).unwrap(), vec![1, 0, 2]);
        assert!(class_indices(&["b".to_string()], &ds).is_err());
    }

    #[test]
    fn targets() {
        // common practice, no source: "grow to the median/largest class" (median: the upper median class count; largest: the largest count; Nx: a factor of the class's own count).
        let counts = [100, 10, 40, 3];
        assert_eq!(
            Plan::new(&counts, Target::Median, None).add,
            vec![0, 30, 0, 37]
        );
        assert_eq!(
            Plan::new(&counts, Target::Largest, None).add,
            vec![0, 90, 60, 97]
        );
        assert_eq!(
            Plan::new(&counts, Target::Count(20), Some(&[1])).add,
            vec![0, 10, 0, 0]
        );
        assert_eq!(
            Plan::new(&counts, Target::Factor(2.0), Some(&[3])).add,
            vec![0, 0, 0, 3]
        );
        assert_eq!("x1.5".parse::<Target>().unwrap(), Target::Factor(1.5));
        assert!("x0.5".parse::<Target>().is_err());
        assert!("many".parse::<Target>().is_err());
    }
}
