//! An augmented set for export: the real rows unchanged, then one method's synthetic rows,
//! with the provenance columns every output carries.

use ndarray::{Axis, concatenate};

use super::{AugmentParams, Grown, MethodKind, Plan, UnitNorm};
use crate::data::{Dataset, FloatType};
use crate::error::{Error, Result};
use crate::io::AugmentedSet;

/// Grow `ds` with one method as `plan` says; returns the synthetic rows.
pub fn grow_dataset(
    ds: &Dataset,
    plan: &Plan,
    method: MethodKind,
    params: &AugmentParams,
    unit_norm: UnitNorm,
    seed: u64,
) -> Result<Grown> {
    if !method.makes_rows() && method != MethodKind::None {
        return Err(Error::param(
            "method",
            format!(
                "{method} makes no rows: it changes how the probes learn from the real rows, so a grown file would hold the input unchanged"
            ),
            "measure it with assess or sweep, or grow with a method that makes rows, such as interpolate",
        ));
    }
    let augmenter = super::build(method, params)?;
    let unit_norm = unit_norm.resolve(ds.view());
    super::grow(
        ds,
        augmenter.as_ref(),
        plan,
        unit_norm,
        seed,
        &[crate::seed::tag(method.name())],
    )
}

/// Real rows first (bit-identical, in input order), then the synthetic rows, with provenance.
pub fn assemble(ds: &Dataset, grown: &Grown, method: MethodKind) -> Result<AugmentedSet> {
    let x = concatenate(Axis(0), &[ds.view(), grown.x.view()]).map_err(cannot_stack)?;
    // Real rows keep the input's own f64 values; synthetic rows, computed in f32, widen
    // exactly.
    let x_f64 = (ds.float_type == FloatType::F64)
        .then(|| {
            let real = ds.x_f64.clone().unwrap_or_else(|| ds.x.mapv(f64::from));
            let syn = grown.x.mapv(f64::from);
            concatenate(Axis(0), &[real.view(), syn.view()])
        })
        .transpose()
        .map_err(cannot_stack)?;
    assemble_stacked(ds, x, x_f64, grown, method)
}

/// [`assemble`] taking the input by value: the synthetic rows are appended to the input's own
/// matrix (its buffer grows in place), so the set is written from the one copy of the real
/// rows instead of a second, stacked one.
pub fn assemble_owned(mut ds: Dataset, grown: &Grown, method: MethodKind) -> Result<AugmentedSet> {
    let mut x = std::mem::take(&mut ds.x);
    let x_f64 = (ds.float_type == FloatType::F64)
        .then(|| {
            let mut wide = ds.x_f64.take().unwrap_or_else(|| x.mapv(f64::from));
            wide.append(Axis(0), grown.x.mapv(f64::from).view())
                .map(|()| wide)
        })
        .transpose()
        .map_err(cannot_stack)?;
    x.append(Axis(0), grown.x.view()).map_err(cannot_stack)?;
    assemble_stacked(&ds, x, x_f64, grown, method)
}

fn cannot_stack(e: ndarray::ShapeError) -> Error {
    Error::data(
        format!("cannot stack synthetic rows: {e}"),
        "report this as a bug",
    )
}

/// The set from the real rows' metadata in `ds` and the matrices already stacked (real rows,
/// then synthetic rows); `ds.x` and `ds.x_f64` are not read.
fn assemble_stacked(
    ds: &Dataset,
    x: ndarray::Array2<f32>,
    x_f64: Option<ndarray::Array2<f64>>,
    grown: &Grown,
    method: MethodKind,
) -> Result<AugmentedSet> {
    let n_real = ds.labels.len();
    let n_syn = grown.x.nrows();
    let mut labels = ds.labels.clone();
    labels.extend_from_slice(&grown.labels);
    // A synthetic row mixes its parent with a partner that may sit in another fold or group,
    // so it belongs to neither: fold -1 and an empty group (-1 where groups are integers).
    let no_group = |v: &Option<Vec<String>>| {
        v.as_ref().map(|v| {
            let mut out = v.clone();
            let none = if ds.int_groups { "-1" } else { "" };
            out.extend(std::iter::repeat_n(none.to_string(), n_syn));
            out
        })
    };
    // Integer ids stay integers: a synthetic row has none, so -1, as for fold and partner.
    let ids = ds.ids.as_ref().map(|ids| {
        let mut out = ids.clone();
        if ds.int_ids {
            out.extend(std::iter::repeat_n("-1".to_string(), n_syn));
        } else {
            out.extend((0..n_syn).map(|i| format!("synthetic-{i}")));
        }
        out
    });
    let real_source = match &ds.source_row {
        Some(s) => s.clone(),
        None => (0..n_real as i64).collect(),
    };
    let mut source_row = real_source.clone();
    source_row.extend(
        grown
            .provenance
            .iter()
            .map(|p| real_source.get(p.parent).copied().unwrap_or(-1)),
    );
    let folds = ds.folds.as_ref().map(|f| {
        let mut out = f.clone();
        out.extend(std::iter::repeat_n(-1, n_syn));
        out
    });
    let data = Dataset {
        x,
        labels,
        classes: ds.classes.clone(),
        ids,
        groups: no_group(&ds.groups),
        folds,
        stored_dtype: ds.stored_dtype.clone(),
        float_type: ds.float_type,
        x_f64,
        source_row: Some(source_row),
        int_ids: ds.int_ids,
        int_groups: ds.int_groups,
        table: ds.table.clone(),
    };
    let mut origin = vec!["real".to_string(); n_real];
    origin.extend(std::iter::repeat_n(method.name().to_string(), n_syn));
    let mut parent: Vec<i64> = (0..n_real as i64).collect();
    parent.extend(grown.provenance.iter().map(|p| p.parent as i64));
    let mut partner = vec![-1i64; n_real];
    partner.extend(
        grown
            .provenance
            .iter()
            .map(|p| p.partner.map_or(-1, |q| q as i64)),
    );
    let mut weight = vec![0.0f32; n_real];
    weight.extend(grown.provenance.iter().map(|p| p.weight));
    // Only a set with soft-labelled rows gets the column, so other grown files are unchanged.
    let partner_label = (!grown.soft.is_empty()).then(|| {
        let mut out = vec![String::new(); n_real];
        out.extend(
            (0..n_syn).map(|i| match grown.soft.get(i).copied().flatten() {
                Some(s) => ds.classes[s.partner as usize].clone(),
                None => String::new(),
            }),
        );
        out
    });
    Ok(AugmentedSet {
        data,
        origin,
        parent,
        partner,
        weight,
        partner_label,
    })
}
