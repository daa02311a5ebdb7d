//! External sets: embeddings of input-space augmented samples (mirrored, cropped, jittered
//! inputs) that the user computed with their own backbone, each row naming the real row it
//! came from. They are compared with the feature-space methods under the same folds: in each
//! fold a row is used only when its parent is a training row of that fold (a row made from a
//! held-out input carries that input into training), and under a budget so that, by default,
//! both kinds add the same number of rows per grown class.
//!
//! Labels come from the set itself: an input-space transform may change the class (a mirrored
//! "keep left" sign is a "keep right" sign), and only the user knows when it does.

use std::collections::HashMap;
use std::path::Path;

use rand::seq::index;

use super::config::{ExternalBudget, ExternalConfig, ExternalRecord, ExternalSetInfo};
use super::from_file::FileRows;
use super::input::sha256_of;
use super::method_id::{MethodId, UNION_JOIN};
use crate::augment::{MethodKind, Plan};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::io::{self, ReadOptions};
use crate::seed;

/// The key (npz member, safetensors tensor, HDF5 dataset or CSV column) naming each row's
/// parent.
pub const PARENT_KEY: &str = "parent";

/// Refuses a name that could not be told apart from another method in the results.
pub fn check_name(name: &str) -> Result<()> {
    let bad = |why: &str| {
        Err(Error::param(
            "external",
            format!("'{name}' cannot name an external set: {why}"),
            "name it with letters, digits, '-' or '_', e.g. flips",
        ))
    };
    if name.is_empty() {
        return bad("the name is empty");
    }
    if name.contains([UNION_JOIN, ',', '=']) || name.ends_with(')') {
        return bad("it holds '+', ',', '=' or ends with ')'");
    }
    if name.parse::<MethodKind>().is_ok() || name == "real" {
        return bad("a method has that name");
    }
    Ok(())
}

/// Reads the external set `name` from `path` (embeddings and labels by the keys of `opts`,
/// and a `parent` per row) and resolves it against `real`, the data assessed.
pub fn read(
    name: &str,
    path: &Path,
    opts: &ReadOptions,
    real: &Dataset,
) -> Result<(FileRows, ExternalSetInfo)> {
    check_name(name)?;
    let opts = ReadOptions {
        parent_key: Some(PARENT_KEY.to_string()),
        keep_nonfinite: false,
        ..opts.clone()
    };
    let loaded = io::read(path, &opts)?;
    let parents = loaded.parent_refs.unwrap_or_default();
    let rows = resolve(name, path, &loaded.dataset, &parents, real)?;
    let info = ExternalSetInfo {
        name: name.to_string(),
        path: path.display().to_string(),
        sha256: sha256_of(path)?,
        rows: rows.n_rows(),
    };
    Ok((rows, info))
}

/// The rows of `set` (read from `path`) as an external set of `real`: classes matched by name,
/// each parent found among `real`'s ids when it has them, else as a row index of the real
/// file. Refuses, naming the row, a parent that is no real row, a class the real data lacks,
/// and rows of another width.
pub fn resolve(
    name: &str,
    path: &Path,
    set: &Dataset,
    parents: &[String],
    real: &Dataset,
) -> Result<FileRows> {
    if set.dims() != real.dims() {
        return Err(Error::input_at(
            path,
            "embeddings",
            format!(
                "external set '{name}' has rows of {} values; the real data has {}",
                set.dims(),
                real.dims()
            ),
            "embed the augmented samples with the same backbone (and layer) as the real rows",
        ));
    }
    let class_of: Vec<Option<u32>> = set.classes.iter().map(|c| real.class_index(c)).collect();
    let source = set.source_rows();
    let labels = set
        .labels
        .iter()
        .enumerate()
        .map(|(i, &l)| {
            class_of[l as usize].ok_or_else(|| {
                Error::input_at(
                    path,
                    format!("labels, row {}", source[i]),
                    format!(
                        "external set '{name}': row {} has class '{}', which the real data does not have",
                        source[i], set.classes[l as usize]
                    ),
                    "label each augmented row with one of the real data's classes (a transform may change the class, but not invent one)",
                )
            })
        })
        .collect::<Result<Vec<u32>>>()?;
    let lookup = ParentLookup::new(real);
    let parent = parents
        .iter()
        .enumerate()
        .map(|(i, p)| {
            lookup.find(p).ok_or_else(|| {
                Error::input_at(
                    path,
                    format!("{PARENT_KEY}, row {}", source[i]),
                    format!(
                        "external set '{name}': row {} names parent '{p}', which is no {} of the real data",
                        source[i],
                        lookup.what()
                    ),
                    lookup.fix(),
                )
            })
        })
        .collect::<Result<Vec<usize>>>()?;
    FileRows::external(name, set.x.clone(), labels, parent)
}

/// Finds a real row from a parent as written: by id when the real data has ids (an id held by
/// two rows names neither), else by row index in the real file.
enum ParentLookup {
    Ids(HashMap<String, Option<usize>>),
    Rows(HashMap<i64, usize>),
}

impl ParentLookup {
    fn new(real: &Dataset) -> Self {
        match &real.ids {
            Some(ids) => {
                let mut map: HashMap<String, Option<usize>> = HashMap::with_capacity(ids.len());
                for (row, id) in ids.iter().enumerate() {
                    map.entry(id.clone())
                        .and_modify(|r| *r = None)
                        .or_insert(Some(row));
                }
                ParentLookup::Ids(map)
            }
            None => ParentLookup::Rows(
                real.source_rows()
                    .into_iter()
                    .enumerate()
                    .map(|(row, file_row)| (file_row, row))
                    .collect(),
            ),
        }
    }

    fn find(&self, parent: &str) -> Option<usize> {
        match self {
            ParentLookup::Ids(map) => map.get(parent.trim()).copied().flatten(),
            ParentLookup::Rows(map) => map.get(&parent.trim().parse::<i64>().ok()?).copied(),
        }
    }

    fn what(&self) -> &'static str {
        match self {
            ParentLookup::Ids(_) => "id (held by exactly one row)",
            ParentLookup::Rows(_) => "row index",
        }
    }

    fn fix(&self) -> &'static str {
        match self {
            ParentLookup::Ids(_) => {
                "give as parent the id of the real row each augmented sample was made from"
            }
            ParentLookup::Rows(_) => {
                "give as parent the row (counted from 0) of the real file each augmented sample was made from"
            }
        }
    }
}

/// A class where an external set had fewer eligible rows than its budget asked for.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(super) struct Shortfall {
    pub class: u32,
    pub wanted: usize,
    pub had: usize,
}

/// The eligible rows a fold uses under `budget`: per class, a seeded draw without
/// replacement (all rows when there are too few), in set order. Under `Match` only the
/// classes `plan` grows get rows, as many as it adds.
pub(super) fn draw(
    rows: &FileRows,
    eligible: &[usize],
    budget: ExternalBudget,
    plan: &Plan,
    seed: u64,
    stream: &[u64],
) -> (Vec<usize>, Vec<Shortfall>) {
    if budget == ExternalBudget::All {
        return (eligible.to_vec(), Vec::new());
    }
    let mut by_class: std::collections::BTreeMap<u32, Vec<usize>> = Default::default();
    for &i in eligible {
        by_class.entry(rows.labels()[i]).or_default().push(i);
    }
    if budget == ExternalBudget::Match {
        for (c, &add) in plan.add.iter().enumerate() {
            if add > 0 {
                by_class.entry(c as u32).or_default();
            }
        }
    }
    let mut keep = Vec::new();
    let mut short = Vec::new();
    for (c, of) in by_class {
        let wanted = match budget {
            ExternalBudget::Match => plan.add.get(c as usize).copied().unwrap_or(0),
            ExternalBudget::PerClass(n) => n,
            ExternalBudget::All => of.len(),
        };
        if wanted == 0 {
            continue;
        }
        if of.len() <= wanted {
            if of.len() < wanted && budget == ExternalBudget::Match {
                short.push(Shortfall {
                    class: c,
                    wanted,
                    had: of.len(),
                });
            }
            keep.extend(of);
            continue;
        }
        let mut path = stream.to_vec();
        path.push(u64::from(c));
        let mut rng = seed::stream(seed, &path);
        keep.extend(
            index::sample(&mut rng, of.len(), wanted)
                .into_iter()
                .map(|k| of[k]),
        );
    }
    keep.sort_unstable();
    (keep, short)
}

/// The stream path of an external set's draw in one fold (the class is appended).
pub(super) fn stream(id: &MethodId, repeat: usize, fold: usize) -> [u64; 4] {
    [
        seed::tag("external"),
        seed::tag(&id.name()),
        repeat as u64,
        fold as u64,
    ]
}

/// Rows made before the split and how an assessment uses them: a grown file's origins and the
/// external sets (each a [`FileRows`]), the budget and unions, and what results.json records
/// about each external set's file.
#[derive(Debug, Clone, Copy)]
pub struct RowSets<'a> {
    /// The rows of every grown-file origin and external set, each a method of its own.
    pub rows: &'a [FileRows],
    /// The budget and the unions.
    pub config: &'a ExternalConfig,
    /// What results.json records about each external set's file.
    pub sets: &'a [ExternalSetInfo],
}

/// No budget and no unions: what an assessment without external sets uses.
static NO_EXTERNAL: ExternalConfig = ExternalConfig {
    budget: ExternalBudget::Match,
    unions: Vec::new(),
};

impl<'a> RowSets<'a> {
    /// A grown file's rows alone (or none).
    pub fn files(rows: &'a [FileRows]) -> Self {
        RowSets {
            rows,
            config: &NO_EXTERNAL,
            sets: &[],
        }
    }

    /// What results.json records, when there is anything external to record.
    pub(super) fn record(&self) -> Option<ExternalRecord> {
        (!self.sets.is_empty() || !self.config.unions.is_empty()).then(|| ExternalRecord {
            budget: self.config.budget,
            sets: self.sets.to_vec(),
            unions: self.config.unions.clone(),
        })
    }
}
