//! Which probe to run, as named on the command line and in reports.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

use crate::error::Error;

/// A downstream probe.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ProbeKind {
    /// k-nearest-neighbour vote ([`crate::probe::KnnProbe`]).
    Knn,
    /// Multinomial logistic regression ([`crate::probe::LinearProbe`]).
    Linear,
    /// Nearest class mean ([`crate::probe::CentroidProbe`]).
    Centroid,
}

impl ProbeKind {
    /// Every probe, in the order reports list them.
    pub const ALL: [ProbeKind; 3] = [ProbeKind::Knn, ProbeKind::Linear, ProbeKind::Centroid];

    /// The name used on the command line and in outputs.
    pub fn name(self) -> &'static str {
        match self {
            ProbeKind::Knn => "knn",
            ProbeKind::Linear => "linear",
            ProbeKind::Centroid => "centroid",
        }
    }
}

impl fmt::Display for ProbeKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A probe equals its name, so a reader can pick result rows by the name results.json shows.
impl PartialEq<&str> for ProbeKind {
    fn eq(&self, other: &&str) -> bool {
        self.name() == *other
    }
}

impl FromStr for ProbeKind {
    type Err = Error;

    /// Exact, case-insensitive match on [`ProbeKind::name`]; the error lists the valid names.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let wanted = s.trim();
        ProbeKind::ALL
            .into_iter()
            .find(|k| k.name().eq_ignore_ascii_case(wanted))
            .ok_or_else(|| {
                let names: Vec<&str> = ProbeKind::ALL.iter().map(|k| k.name()).collect();
                Error::param(
                    "probe",
                    format!("unknown probe '{s}'"),
                    format!("use one of: {}", names.join(", ")),
                )
            })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip() {
        // Common practice, no source: every name parses back to its variant.
        for k in ProbeKind::ALL {
            assert_eq!(k.name().parse::<ProbeKind>().unwrap(), k);
        }
        assert_eq!("LINEAR".parse::<ProbeKind>().unwrap(), ProbeKind::Linear);
    }

    #[test]
    fn unknown_name_lists_valid_ones() {
        // Common practice, no source: the error must tell the user what to type instead.
        let msg = "svm".parse::<ProbeKind>().unwrap_err().to_string();
        assert!(msg.contains("'svm'"), "{msg}");
        assert!(msg.contains("knn, linear, centroid"), "{msg}");
    }
}
