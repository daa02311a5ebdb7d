//! Fitting a method class by class. Every method fits each requested class on its own real
//! rows, may have to reduce K or give up on a class, and must say so (or refuse, in strict
//! mode). That bookkeeping lives here once, so the methods only describe their per-class model.

use std::collections::BTreeMap;

use ndarray::Array2;
use rayon::prelude::*;

use super::{FitNote, MethodKind, Synthetic};
use crate::data::Subset;
use crate::error::{Error, Result};

/// What fitting one class produced.
pub(super) enum ClassFit<T> {
    /// A usable model, with a note for each thing the fit had to clamp or change.
    Ready { model: T, notes: Vec<FitNote> },
    /// The class cannot be grown; the reason is shown to the user.
    Skip(String),
}

/// Per-class models of one method, for the classes it was fitted on.
pub(super) struct PerClass<T> {
    kind: MethodKind,
    dims: usize,
    /// `None` for a class that was skipped.
    models: BTreeMap<u32, Option<T>>,
    notes: Vec<FitNote>,
}

impl<T: Send> PerClass<T> {
    /// Fit `fit_class(class, rows_of_class)` for each class in `classes`, in parallel; the
    /// result is collected in class-index order, so it does not depend on the thread count.
    /// A class with no rows is skipped without calling `fit_class`. With `strict`, any skipped
    /// class turns the whole fit into an error naming every such class.
    pub(super) fn fit<F>(
        kind: MethodKind,
        train: &Subset<'_>,
        classes: &[u32],
        strict: bool,
        fit_class: F,
    ) -> Result<Self>
    where
        F: Fn(u32, &[usize]) -> Result<ClassFit<T>> + Sync,
    {
        let mut wanted: Vec<u32> = classes.to_vec();
        wanted.sort_unstable();
        wanted.dedup();
        if let Some(&bad) = wanted.iter().find(|&&c| c as usize >= train.n_classes()) {
            return Err(Error::data_at(
                kind.name(),
                format!(
                    "class index {bad} is not in the training set ({} classes)",
                    train.n_classes()
                ),
                "grow only classes that occur in the training data",
            ));
        }
        let rows = train.rows_by_class(&wanted);
        let fitted: Vec<(u32, Result<ClassFit<T>>)> = rows
            .into_par_iter()
            .map(|(c, r)| {
                let fit = if r.is_empty() {
                    Ok(ClassFit::Skip("no training rows".into()))
                } else {
                    fit_class(c, &r)
                };
                (c, fit)
            })
            .collect();

        let mut models = BTreeMap::new();
        let mut notes = Vec::new();
        let mut refused = Vec::new();
        for (c, fit) in fitted {
            match fit? {
                ClassFit::Ready { model, notes: n } => {
                    notes.extend(n);
                    models.insert(c, Some(model));
                }
                ClassFit::Skip(reason) => {
                    refused.push(format!("'{}' ({reason})", train.classes[c as usize]));
                    notes.push(FitNote::Skipped { class: c, reason });
                    models.insert(c, None);
                }
            }
        }
        if strict && !refused.is_empty() {
            return Err(Error::data(
                format!("{kind} cannot grow class {}", refused.join(", ")),
                "give these classes more training rows, leave them out of the grown classes, or turn off strict mode to skip them with a warning",
            ));
        }
        Ok(PerClass {
            kind,
            dims: train.dims(),
            models,
            notes,
        })
    }
}

impl<T> PerClass<T> {
    /// The model of `class`: `Ok(None)` if it was skipped, an error if it was never fitted.
    pub(super) fn get(&self, class: u32) -> Result<Option<&T>> {
        match self.models.get(&class) {
            Some(m) => Ok(m.as_ref()),
            None => Err(Error::data_at(
                self.kind.name(),
                format!("class index {class} was not among the classes it was fitted on"),
                "fit the method on every class you want to sample",
            )),
        }
    }

    pub(super) fn notes(&self) -> &[FitNote] {
        &self.notes
    }

    /// Zero rows of the fitted width, for skipped classes and `n == 0`.
    pub(super) fn empty(&self) -> Synthetic {
        Synthetic {
            x: Array2::zeros((0, self.dims)),
            provenance: Vec::new(),
        }
    }
}
