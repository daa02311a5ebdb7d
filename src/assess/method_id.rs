//! Which method a result row belongs to. Not just [`MethodKind`]: an assessment can also
//! score synthetic rows that were grown earlier and read back from a file, and those must
//! stay apart from the same method run live, in every table and in the JSON; rows of an
//! input-space augmentation the user embedded with their own backbone (an external set); and
//! the union of several of these, trained on together.

use std::borrow::Cow;
use std::fmt;
use std::str::FromStr;

use serde::{Serialize, Serializer};

use crate::augment::MethodKind;
use crate::error::Error;

/// The suffix that marks a method whose rows came from a grown file.
const FROM_FILE: &str = " (from file)";

/// What joins the parts of a union in its name (`flips+interpolate`).
pub const UNION_JOIN: char = '+';

/// A method as results name it.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub enum MethodId {
    /// A method embloom ran on each fold.
    Kind(MethodKind),
    /// Synthetic rows read from a grown file, by the method name the file records; shown as
    /// `interpolate (from file)`.
    FromFile(String),
    /// An external set: embeddings of input-space augmented samples, by the name the user
    /// gave it; shown as that name.
    External(String),
    /// Training on the union of the parts' rows, each part made as it would be alone; shown
    /// as the parts' names joined by `+`.
    Union(Vec<MethodId>),
}

impl MethodId {
    /// The `none` baseline every difference is measured against.
    pub const BASELINE: MethodId = MethodId::Kind(MethodKind::None);

    /// The name in results.json, the CSV tables and the report.
    pub fn name(&self) -> Cow<'_, str> {
        match self {
            MethodId::Kind(k) => Cow::Borrowed(k.name()),
            MethodId::FromFile(m) => Cow::Owned(format!("{m}{FROM_FILE}")),
            MethodId::External(m) => Cow::Borrowed(m),
            MethodId::Union(parts) => Cow::Owned(
                parts
                    .iter()
                    .map(|p| p.name().into_owned())
                    .collect::<Vec<_>>()
                    .join(&UNION_JOIN.to_string()),
            ),
        }
    }

    /// Whether this is the `none` baseline, which every other method's differences are
    /// measured against.
    pub fn is_baseline(&self) -> bool {
        *self == MethodId::BASELINE
    }

    /// The method embloom runs, when it runs one.
    pub fn kind(&self) -> Option<MethodKind> {
        match self {
            MethodId::Kind(k) => Some(*k),
            MethodId::FromFile(_) | MethodId::External(_) | MethodId::Union(_) => None,
        }
    }
}

impl From<MethodKind> for MethodId {
    fn from(k: MethodKind) -> Self {
        MethodId::Kind(k)
    }
}

impl fmt::Display for MethodId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.name())
    }
}

impl FromStr for MethodId {
    type Err = Error;

    /// The inverse of [`MethodId::name`]: a name that is neither a method nor a file's rows
    /// is an external set's.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        if s.contains(UNION_JOIN) {
            return s
                .split(UNION_JOIN)
                .map(|p| p.parse::<MethodId>())
                .collect::<Result<Vec<_>, _>>()
                .map(MethodId::Union);
        }
        match s.strip_suffix(FROM_FILE) {
            Some(m) if !m.is_empty() => Ok(MethodId::FromFile(m.to_string())),
            _ => match s.parse::<MethodKind>() {
                Ok(k) => Ok(MethodId::Kind(k)),
                Err(_) if !s.is_empty() => Ok(MethodId::External(s.to_string())),
                Err(e) => Err(e),
            },
        }
    }
}

impl Serialize for MethodId {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.name())
    }
}

/// A method equals its name, so a reader can pick rows by the name results.json shows.
impl PartialEq<str> for MethodId {
    fn eq(&self, other: &str) -> bool {
        self.name() == other
    }
}

impl PartialEq<&str> for MethodId {
    fn eq(&self, other: &&str) -> bool {
        self.name() == *other
    }
}

impl PartialEq<String> for MethodId {
    fn eq(&self, other: &String) -> bool {
        self.name() == other.as_str()
    }
}

impl PartialEq<MethodKind> for MethodId {
    fn eq(&self, other: &MethodKind) -> bool {
        self.kind() == Some(*other)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_file_rows_stay_apart() {
        // Common practice, no source: every name parses back to the same identity.
        for k in MethodKind::ALL {
            let id = MethodId::from(k);
            assert_eq!(id.name().parse::<MethodId>().unwrap(), id);
            assert_eq!(serde_json::to_value(&id).unwrap(), k.name());
        }
        let file = MethodId::FromFile("interpolate".into());
        assert_eq!(file.name(), "interpolate (from file)");
        assert_eq!(file.name().parse::<MethodId>().unwrap(), file);
        assert_ne!(file, MethodId::Kind(MethodKind::Interpolate));
        assert!(MethodId::BASELINE.is_baseline() && !file.is_baseline());
        let union = MethodId::Union(vec![
            MethodId::External("flips".into()),
            MethodId::Kind(MethodKind::Interpolate),
        ]);
        assert_eq!(union.name(), "flips+interpolate");
        assert_eq!(union.name().parse::<MethodId>().unwrap(), union);
        assert_eq!(
            "flips".parse::<MethodId>().unwrap(),
            MethodId::External("flips".into())
        );
    }
}
