//! Which figure a result row holds. One enum so the fold loop, the paired summary, the sweep
//! and every renderer agree on the spelling, the order and the reading of each figure; the
//! key is what results.json and the CSV tables have always written.

use std::fmt;
use std::str::FromStr;

use serde::{Serialize, Serializer};

use crate::error::Error;

/// A figure recorded per fold and summarised against `none`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Metric {
    /// Share of test rows predicted correctly, in [0, 1].
    Accuracy,
    /// Mean per-class recall, in [0, 1]; unlike accuracy, every class weighs the same.
    BalancedAccuracy,
    /// Unweighted mean of per-class F1 scores, in [0, 1].
    MacroF1,
    /// Recall over the test rows of the classes the plan grew.
    GrownClassRecall,
    /// Needs probabilities: the linear probe only.
    LogLoss,
    /// Expected calibration error; needs probabilities: the linear probe only.
    Ece,
}

impl Metric {
    /// Every metric, in the order fold records list them.
    pub const ALL: [Metric; 6] = [
        Metric::Accuracy,
        Metric::BalancedAccuracy,
        Metric::MacroF1,
        Metric::GrownClassRecall,
        Metric::LogLoss,
        Metric::Ece,
    ];

    /// The metrics computed from predicted labels alone, so they can be pooled over the test
    /// rows of a repeat's folds (log loss and ECE need probabilities, which are not kept).
    pub const POOLED: [Metric; 4] = [
        Metric::Accuracy,
        Metric::BalancedAccuracy,
        Metric::MacroF1,
        Metric::GrownClassRecall,
    ];

    /// The three figures the table, the page's charts and the sweep lead with: accuracy
    /// hides a rare class, these do not.
    pub const HEADLINE: [Metric; 3] = [
        Metric::BalancedAccuracy,
        Metric::MacroF1,
        Metric::GrownClassRecall,
    ];

    /// The key in results.json and the CSV tables.
    pub fn key(self) -> &'static str {
        match self {
            Metric::Accuracy => "accuracy",
            Metric::BalancedAccuracy => "balanced_accuracy",
            Metric::MacroF1 => "macro_f1",
            Metric::GrownClassRecall => "grown_class_recall",
            Metric::LogLoss => "log_loss",
            Metric::Ece => "ece",
        }
    }

    /// The name people read in a table header or a chart title.
    pub fn label(self) -> &'static str {
        match self {
            Metric::Accuracy => "accuracy",
            Metric::BalancedAccuracy => "balanced accuracy",
            Metric::MacroF1 => "macro-F1",
            Metric::GrownClassRecall => "grown-class recall",
            Metric::LogLoss => "log loss",
            Metric::Ece => "ECE",
        }
    }

    /// The key with spaces for underscores, as the warnings have always named a figure.
    pub fn words(self) -> String {
        self.key().replace('_', " ")
    }

    /// Whether a larger value is the better one (a positive Δ an improvement).
    pub fn higher_is_better(self) -> bool {
        !matches!(self, Metric::LogLoss | Metric::Ece)
    }

    /// Whether the figure needs predicted probabilities, not just labels.
    pub fn needs_probabilities(self) -> bool {
        matches!(self, Metric::LogLoss | Metric::Ece)
    }

    /// Position among [`Metric::POOLED`], for the metrics pooled over test rows.
    pub fn pooled_index(self) -> Option<usize> {
        Metric::POOLED.iter().position(|m| *m == self)
    }
}

impl fmt::Display for Metric {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.key())
    }
}

impl FromStr for Metric {
    type Err = Error;

    /// The exact key; the error lists the valid keys.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Metric::ALL
            .into_iter()
            .find(|m| m.key() == s)
            .ok_or_else(|| {
                let keys: Vec<&str> = Metric::ALL.iter().map(|m| m.key()).collect();
                Error::param(
                    "metric",
                    format!("unknown metric '{s}'"),
                    format!("use one of: {}", keys.join(", ")),
                )
            })
    }
}

impl Serialize for Metric {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.key())
    }
}

/// A metric equals its key, so a reader can pick rows by the name results.json shows.
impl PartialEq<str> for Metric {
    fn eq(&self, other: &str) -> bool {
        self.key() == other
    }
}

impl PartialEq<&str> for Metric {
    fn eq(&self, other: &&str) -> bool {
        self.key() == *other
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_round_trip_and_serialise_as_keys() {
        // Common practice, no source: every key parses back to its variant and is what the
        // JSON holds.
        for m in Metric::ALL {
            assert_eq!(m.key().parse::<Metric>().unwrap(), m);
            assert_eq!(serde_json::to_value(m).unwrap(), m.key());
        }
        assert!("f1".parse::<Metric>().is_err());
    }

    #[test]
    fn pooled_are_the_label_metrics_in_record_order() {
        // Common practice, no source: the pooled metrics lead the record order.
        for (i, m) in Metric::POOLED.iter().enumerate() {
            assert_eq!(Metric::ALL[i], *m);
            assert_eq!(m.pooled_index(), Some(i));
            assert!(!m.needs_probabilities());
        }
        assert_eq!(Metric::LogLoss.pooled_index(), None);
        assert!(!Metric::Ece.higher_is_better());
    }
}
