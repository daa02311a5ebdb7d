//! Growing every planned class of a training set with one fitted method, in parallel over
//! classes, each class on its own random stream.

use ndarray::{Array2, Axis, concatenate};
use rayon::prelude::*;

use super::{Augmenter, FitNote, Plan, Provenance, Synthetic};
use crate::data::{Dataset, SoftLabel, SoftLabels, Subset};
use crate::error::{Error, Result};
use crate::seed;

/// Synthetic rows for a whole training set.
#[derive(Debug, Clone)]
pub struct Grown {
    /// Synthetic rows only, grouped by class in class-index order.
    pub x: Array2<f32>,
    /// The class index of each synthetic row (aligned with `x`), in the training set's class
    /// numbering.
    pub labels: Vec<u32>,
    /// Indices are rows of the training set the method was fitted on.
    pub provenance: Vec<Provenance>,
    /// Whether rows were renormalised to unit norm.
    pub renormalised: bool,
    /// Soft targets of the rows (aligned with `x`), or empty when every row has a hard label:
    /// only `mix` fills it, from each row's partner class and weight.
    pub soft: SoftLabels,
    /// Classes a fit clamped or skipped, in class order; empty when every class was grown as
    /// planned.
    pub notes: Vec<FitNote>,
}

/// Fit `method` on `train` and draw `plan.add[c]` rows for every class `c`. The stream for
/// class `c` is `seed::stream(seed, [stream.., c])`. With `unit_norm`, rows are rescaled to norm 1.
///
/// The method is fitted once, on the planned classes only. Classes are drawn in parallel but
/// each from its own stream and collected in class-index order, so the result is the same for
/// any number of threads. A class the fit skipped contributes no rows (its note says why).
pub fn grow(
    train: &Dataset,
    method: &dyn Augmenter,
    plan: &Plan,
    unit_norm: bool,
    seed: u64,
    stream: &[u64],
) -> Result<Grown> {
    grow_subset(&Subset::of(train), method, plan, unit_norm, seed, stream)
}

/// [`grow`] on rows of a dataset taken by index (a fold's training rows), read in place:
/// provenance indices are positions in `train`.
pub fn grow_subset(
    train: &Subset<'_>,
    method: &dyn Augmenter,
    plan: &Plan,
    unit_norm: bool,
    seed: u64,
    stream: &[u64],
) -> Result<Grown> {
    if plan.add.iter().skip(train.n_classes()).any(|&n| n > 0) {
        return Err(Error::data(
            format!(
                "the plan grows {} classes but the training set has {}",
                plan.add.len(),
                train.n_classes()
            ),
            "make the plan from this training set's class counts",
        ));
    }
    let classes = plan.grown_classes();
    method.check_input(train, unit_norm)?;
    let fitted = method.fit(train, &classes)?;
    let drawn: Vec<(u32, Synthetic)> = classes
        .par_iter()
        .map(|&c| {
            let mut path = stream.to_vec();
            path.push(u64::from(c));
            let mut rng = seed::stream(seed, &path);
            fitted
                .sample(c, plan.add[c as usize], &mut rng)
                .map(|s| (c, s))
        })
        .collect::<Result<_>>()?;

    let views: Vec<_> = drawn.iter().map(|(_, s)| s.x.view()).collect();
    let mut x = if views.is_empty() {
        Array2::zeros((0, train.dims()))
    } else {
        concatenate(Axis(0), &views).map_err(|e| {
            Error::data_at(
                method.kind().name(),
                format!("synthetic rows of different widths ({e})"),
                "this is a bug in the method; please report it",
            )
        })?
    };
    let labels = drawn
        .iter()
        .flat_map(|(c, s)| std::iter::repeat_n(*c, s.x.nrows()))
        .collect();
    let provenance: Vec<Provenance> = drawn.into_iter().flat_map(|(_, s)| s.provenance).collect();
    if unit_norm {
        renormalise(&mut x);
    }
    if let Some(i) = x
        .rows()
        .into_iter()
        .position(|r| r.iter().any(|v| !v.is_finite()))
    {
        return Err(Error::data(
            format!(
                "{} produced a non-finite value in synthetic row {i}",
                method.kind()
            ),
            "check the input for extreme values, or lower the magnitude",
        ));
    }
    // A mixed row's partner is a training row of another class: its class is the rest of the
    // row's target.
    let soft = if method.kind().soft_labels() {
        provenance
            .iter()
            .map(|p| {
                p.partner.map(|j| SoftLabel {
                    partner: train.labels[j],
                    weight: p.weight,
                })
            })
            .collect()
    } else {
        SoftLabels::new()
    };
    Ok(Grown {
        x,
        labels,
        provenance,
        soft,
        renormalised: unit_norm,
        notes: fitted.notes().to_vec(),
    })
}

/// Rescale each row to unit length (norm taken in f64). A zero row has no direction and is
/// left as it is.
pub(super) fn renormalise(x: &mut Array2<f32>) {
    for mut row in x.rows_mut() {
        let norm = row
            .iter()
            .map(|&v| f64::from(v).powi(2))
            .sum::<f64>()
            .sqrt();
        if norm > 0.0 {
            row.mapv_inplace(|v| (f64::from(v) / norm) as f32);
        }
    }
}

/// Human-readable warnings for what a fit clamped, adjusted or skipped. Skipped classes
/// point at the `strict` setting, which turns them into an error.
pub fn describe_notes(
    notes: &[FitNote],
    classes: &[String],
    method: super::MethodKind,
) -> Vec<String> {
    let mut skipped = Vec::new();
    let mut out = Vec::new();
    for n in notes {
        match n {
            FitNote::Clamped { class, k } => out.push(format!(
                "class '{}' has too few rows for the requested neighbours; {method} used K = {k}",
                classes[*class as usize]
            )),
            FitNote::Skipped { class, reason } => {
                skipped.push(format!("'{}' ({reason})", classes[*class as usize]))
            }
            FitNote::Adjusted { class, detail } => out.push(format!(
                "class '{}': {method} {detail}",
                classes[*class as usize]
            )),
        }
    }
    if !skipped.is_empty() {
        out.push(format!(
            "{method} cannot grow {} and left {} unchanged; use another method for them, or set `strict` to make this an error",
            skipped.join(", "),
            if skipped.len() == 1 { "it" } else { "them" }
        ));
    }
    out
}
