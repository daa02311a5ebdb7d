//! The rule for classes with fewer rows (or groups) than folds. Such a class is missing from
//! some test folds and some training folds, and a one-row class is never both trained on and
//! tested, so its recall is 0 whatever the method. A few of them earn a warning (with a short
//! list); when they are most of the classes, balanced accuracy and macro-F1 (means over
//! classes) would measure the split rather than the methods, so the job is refused before any
//! work, with the fold count that would pass if there is one.
//!
//! The rule lives here, not in the binary, so every caller of the library (the command line,
//! the Python module, a Rust program) gets the same refusal.

use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::eval::thin_classes;
use crate::report::display_name;

/// How many thin classes a message names before "and N more".
const SHOWN: usize = 5;

/// The warning for `folds`-fold assessment of `ds` when some classes are thin, `None` when
/// none is; an error (before any work) when most are. `input` names the data in the error.
pub fn check_thin_classes(ds: &Dataset, folds: usize, input: &str) -> Result<Option<String>> {
    let thin = thin_classes(ds, folds);
    if thin.is_empty() {
        return Ok(None);
    }
    let present = ds.class_counts().iter().filter(|&&n| n > 0).count();
    let unit = if ds.folds.is_some() {
        "given folds"
    } else if ds.groups.is_some() {
        "groups"
    } else {
        "rows"
    };
    let shown: Vec<String> = thin
        .iter()
        .take(SHOWN)
        .map(|&c| display_name(&ds.classes[c as usize], 40))
        .collect();
    let more = if thin.len() > SHOWN {
        format!(" and {} more", thin.len() - SHOWN)
    } else {
        String::new()
    };
    let what = if ds.folds.is_some() {
        format!(
            "{} of {present} classes are missing from some of the given folds ({}{more})",
            thin.len(),
            shown.join(", ")
        )
    } else {
        format!(
            "{} of {present} classes have fewer {unit} than the {folds} folds ({}{more})",
            thin.len(),
            shown.join(", ")
        )
    };
    if 2 * thin.len() <= present {
        return Ok(Some(format!(
            "{what}: they cannot be in every fold, so their recall says little; merge or drop rare classes, or use fewer folds (`folds`)"
        )));
    }
    // The largest fold count (below the asked one) that leaves at most half the classes thin.
    let passing = (2..folds)
        .rev()
        .find(|&f| 2 * thin_classes(ds, f).len() <= present);
    let folds_fix = match passing {
        Some(f) => format!("use fewer folds (`folds`={f} passes), or "),
        None => "even `folds`=2 leaves most of them thinner than the folds: ".to_string(),
    };
    Err(Error::data_at(
        input,
        format!(
            "{what}. Such a class is missing from some test or training folds (a one-row class is never both trained on and tested, so its recall is 0 whatever the method), and with most classes like that balanced accuracy and macro-F1 would measure the split, not the methods; refused before any work"
        ),
        if ds.folds.is_some() {
            "give every class rows in every fold of the fold column, or merge or drop the classes missing from some folds before assessing".to_string()
        } else {
            format!(
                "{folds_fix}merge or drop the classes with fewer than {folds} {unit} before assessing (keep the classes you want to compare and join or remove the rest)"
            )
        },
    ))
}
