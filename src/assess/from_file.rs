//! A grown file's own synthetic rows as one more method of an assessment.
//!
//! `grow` made those rows from all the file's real rows, before any split. A row built from a
//! held-out row carries that row's position into training, so in each fold a row is used only
//! where its parent and its partner (when it has one) are both training rows of that fold.
//! The neighbour choice behind a kept row still saw every real row; only the in-fold method
//! is free of that, which is why the two are reported side by side.
//!
//! An external set (embeddings of input-space augmented samples, see [`super::external`]) is
//! the same kind of thing: rows made outside the fold loop, each from one real row. It is held
//! as `FileRows` too, with a parent and no partner, under its own name.

use std::collections::HashMap;
use std::path::Path;

use ndarray::{Array2, Axis};

use super::MethodId;
use crate::augment::{Grown, MethodKind, Provenance};
use crate::data::Dataset;
use crate::error::{Error, Result};

/// Rows made before the split: the synthetic rows of one `origin` of a grown file, or an
/// external set. `parent` and `partner` are rows of the real-row dataset the assessment runs
/// on.
#[derive(Debug, Clone)]
pub struct FileRows {
    id: MethodId,
    x: Array2<f32>,
    labels: Vec<u32>,
    parent: Vec<usize>,
    partner: Vec<Option<usize>>,
    /// Where each row sits in the file (for messages).
    file_row: Vec<usize>,
}

impl FileRows {
    /// Rows of one origin, their class indices, and each row's parent and partner as rows of
    /// the dataset to be assessed. Rows are named by their place in this set in messages.
    pub fn new(
        origin: impl Into<String>,
        x: Array2<f32>,
        labels: Vec<u32>,
        parent: Vec<usize>,
        partner: Vec<Option<usize>>,
    ) -> Result<FileRows> {
        let n = x.nrows();
        if labels.len() != n || parent.len() != n || partner.len() != n {
            return Err(Error::data(
                format!(
                    "{n} synthetic rows with {} labels, {} parents and {} partners",
                    labels.len(),
                    parent.len(),
                    partner.len()
                ),
                "give one label, parent and partner per synthetic row",
            ));
        }
        Ok(FileRows {
            id: MethodId::FromFile(origin.into()),
            x,
            labels,
            parent,
            partner,
            file_row: (0..n).collect(),
        })
    }

    /// Rows of an external set named `name`: their class indices (into the assessed data's
    /// classes) and each row's parent as a row of the data. Rows are named by their place in
    /// the set in messages.
    pub fn external(
        name: impl Into<String>,
        x: Array2<f32>,
        labels: Vec<u32>,
        parent: Vec<usize>,
    ) -> Result<FileRows> {
        let n = parent.len();
        let mut rows = FileRows::new("", x, labels, parent, vec![None; n])?;
        rows.id = MethodId::External(name.into());
        Ok(rows)
    }

    /// The name this method's rows carry in the results: the file's origin, marked "(from file)".
    pub fn id(&self) -> MethodId {
        self.id.clone()
    }

    /// Whether these rows are an external set (drawn per fold under a budget) rather than a
    /// grown file's rows (all used).
    pub fn is_external(&self) -> bool {
        matches!(self.id, MethodId::External(_))
    }

    /// How many synthetic rows the file holds for this origin (before any per-fold gating).
    pub fn n_rows(&self) -> usize {
        self.x.nrows()
    }

    /// Each row's class index.
    pub fn labels(&self) -> &[u32] {
        &self.labels
    }

    /// Each row's parent, as a row of the data assessed.
    pub fn parents(&self) -> &[usize] {
        &self.parent
    }

    /// Each row's partner, as a row of the data assessed (None where no neighbour was used).
    pub fn partners(&self) -> &[Option<usize>] {
        &self.partner
    }

    /// Refuses rows that do not fit `ds`: another width, an unknown class, or a parent or
    /// partner past its last row.
    pub(super) fn check_against(&self, ds: &Dataset) -> Result<()> {
        let name = self.id().to_string();
        if self.x.nrows() > 0 && self.x.ncols() != ds.dims() {
            return Err(Error::data(
                format!(
                    "{name}: rows of {} values for data of {} dimensions",
                    self.x.ncols(),
                    ds.dims()
                ),
                "give synthetic rows as wide as the real rows",
            ));
        }
        let n = ds.n_rows();
        for i in 0..self.x.nrows() {
            let bad_index = self.parent[i] >= n || self.partner[i].is_some_and(|q| q >= n);
            if bad_index || self.labels[i] as usize >= ds.n_classes() {
                return Err(Error::data(
                    format!(
                        "{name}: synthetic row {} names parent {}, partner {:?} and class {} in data of {n} rows and {} classes",
                        self.file_row[i],
                        self.parent[i],
                        self.partner[i],
                        self.labels[i],
                        ds.n_classes()
                    ),
                    "give parents and partners as rows of the real data",
                ));
            }
        }
        Ok(())
    }

    /// The rows usable in a fold, in set order: those whose parent and partner are training
    /// rows. `train_pos[r]` is the position of data row `r` among the fold's training rows.
    pub(super) fn eligible(&self, train_pos: &[Option<usize>]) -> Vec<usize> {
        (0..self.x.nrows())
            .filter(|&i| {
                train_pos[self.parent[i]].is_some()
                    && self.partner[i].is_none_or(|q| train_pos[q].is_some())
            })
            .collect()
    }

    /// The rows `keep` (eligible ones, see [`FileRows::eligible`]) as a fold's synthetic rows,
    /// with each kept row's place in the file.
    pub(super) fn take(&self, keep: &[usize], train_pos: &[Option<usize>]) -> (Grown, Vec<usize>) {
        let provenance = keep
            .iter()
            .filter_map(|&i| {
                Some(Provenance {
                    parent: train_pos[self.parent[i]]?,
                    partner: self.partner[i].and_then(|q| train_pos[q]),
                    // The file's weight is not read; nothing in an assessment uses it.
                    weight: f32::NAN,
                })
            })
            .collect();
        let grown = Grown {
            x: self.x.select(Axis(0), keep),
            labels: keep.iter().map(|&i| self.labels[i]).collect(),
            provenance,
            soft: Vec::new(),
            renormalised: false,
            notes: Vec::new(),
        };
        (grown, keep.iter().map(|&i| self.file_row[i]).collect())
    }
}

/// A file as an assessment uses it: its real rows are the data, its synthetic rows (one set
/// per origin name, in order of first appearance) become methods of their own.
#[derive(Debug, Clone)]
pub struct GrownFile {
    /// The file's real rows (origin `real`), the set the folds are drawn from.
    pub real: Dataset,
    /// The synthetic rows, one entry per origin in order of first appearance; empty when
    /// they were left out (see `skipped`).
    pub methods: Vec<FileRows>,
    /// Why the file's synthetic rows were left out, when they could not be used.
    pub left_out: Option<String>,
}

impl GrownFile {
    /// Splits what was read from `path`. Without `origin` (or with only real rows) the whole
    /// dataset is data. `parent` and `partner` are as stored: a real row's `parent` is its
    /// own index among the file's real rows (as `grow` writes it), and a synthetic row's
    /// `parent`/`partner` name real rows by that index, so the mapping survives rows dropped
    /// for NaN/Inf.
    pub fn split(
        path: &Path,
        ds: Dataset,
        origin: Option<&[String]>,
        parent: Option<&[i64]>,
        partner: Option<&[i64]>,
    ) -> Result<GrownFile> {
        let Some(origin) = origin.filter(|o| o.iter().any(|x| x != "real")) else {
            return Ok(GrownFile {
                real: ds,
                methods: Vec::new(),
                left_out: None,
            });
        };
        let real_rows: Vec<usize> = (0..origin.len()).filter(|&i| origin[i] == "real").collect();
        let synthetic = origin.len() - real_rows.len();
        let real = ds.select(&real_rows);
        let (Some(parent), Some(partner)) = (parent, partner) else {
            return Ok(GrownFile {
                real,
                methods: Vec::new(),
                left_out: Some(format!(
                    "the input is a grown file without parent/partner provenance: its {synthetic} synthetic rows were left out (nothing would keep them from held-out rows) and only its real rows assessed"
                )),
            });
        };
        let mut by_id: HashMap<i64, usize> = HashMap::with_capacity(real_rows.len());
        for (pos, &row) in real_rows.iter().enumerate() {
            let id = parent[row];
            if id < 0 {
                return Err(Error::input_at(
                    path,
                    format!("parent, row {row}"),
                    format!("real row {row} has parent {id}"),
                    "a real row's parent is its own index among the file's real rows; regrow the file with embloom grow",
                ));
            }
            if let Some(first) = by_id.insert(id, pos) {
                return Err(Error::input_at(
                    path,
                    format!("parent, row {row}"),
                    format!(
                        "real rows {} and {row} both have parent {id}",
                        real_rows[first]
                    ),
                    "a real row's parent is its own index among the file's real rows; regrow the file with embloom grow",
                ));
            }
        }
        let lookup = |row: usize, key: &str, id: i64| -> Result<usize> {
            by_id.get(&id).copied().ok_or_else(|| {
                Error::input_at(
                    path,
                    format!("{key}, row {row}"),
                    format!(
                        "synthetic row {row} names {key} {id}, which is no real row of the file"
                    ),
                    "regrow the file with embloom grow, or remove the row",
                )
            })
        };
        // A mixed row's target is soft; taken as its hard label it would be scored as a
        // different method from the one that made it.
        if let Some(row) = origin.iter().position(|o| o == MethodKind::Mix.name()) {
            return Err(Error::input_at(
                path,
                format!("origin, row {row}"),
                "the file holds mix rows, whose soft labels (weight on the row's label, the rest on partner_label) assess does not read back from a file",
                "assess mix as a method of its own on the file's real rows, or remove the mix rows from the file",
            ));
        }
        let mut names: Vec<&str> = Vec::new();
        let mut rows_of: Vec<Vec<usize>> = Vec::new();
        for (row, o) in origin.iter().enumerate().filter(|(_, o)| *o != "real") {
            match names.iter().position(|n| n == o) {
                Some(k) => rows_of[k].push(row),
                None => {
                    names.push(o);
                    rows_of.push(vec![row]);
                }
            }
        }
        let mut methods = Vec::with_capacity(names.len());
        for (name, rows) in names.into_iter().zip(rows_of) {
            let parents = rows
                .iter()
                .map(|&r| lookup(r, "parent", parent[r]))
                .collect::<Result<Vec<_>>>()?;
            let partners = rows
                .iter()
                .map(|&r| match partner[r] {
                    -1 => Ok(None),
                    id => lookup(r, "partner", id).map(Some),
                })
                .collect::<Result<Vec<_>>>()?;
            methods.push(FileRows {
                id: MethodId::FromFile(name.to_string()),
                x: ds.x.select(Axis(0), &rows),
                labels: rows.iter().map(|&r| ds.labels[r]).collect(),
                parent: parents,
                partner: partners,
                file_row: rows,
            });
        }
        Ok(GrownFile {
            real,
            methods,
            left_out: None,
        })
    }
}
