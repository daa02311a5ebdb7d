//! The header of a table and what each column is for: the label, the row id, the group, the
//! fold, ignored columns, embloom's own provenance columns (in a file it grew), and every
//! other column a numeric feature.

use std::collections::HashMap;
use std::path::Path;

use super::super::export::{PARTNER_LABEL, PROVENANCE, SOURCE_ROW};
use super::super::{DEFAULT_FOLD_KEY, OLD_FOLD_KEY, ReadOptions};
use crate::error::{Error, Result};

/// What a column is used for.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub enum Role {
    Label,
    Id,
    Group,
    Fold,
    Feature,
    /// Named by the caller as carrying nothing embloom uses (free text, say); read past.
    Ignored,
    /// Provenance written by embloom itself; skipped on reading.
    Provenance,
    /// The parent of each row of an external set, as text (see `ReadOptions::parent_key`).
    ParentRef,
}

/// A table's header: column names, their roles, and how the header was read.
pub struct Columns {
    pub names: Vec<String>,
    pub roles: Vec<Role>,
    /// The table carries all four provenance columns: a file embloom grew.
    pub is_export: bool,
    /// Where a role was found under an older name, for [`super::super::Loaded::notes`].
    pub notes: Vec<String>,
}

impl Columns {
    /// The name of the (single) column with `role`, if any.
    pub fn name_of(&self, role: Role) -> Option<&str> {
        self.roles
            .iter()
            .position(|r| *r == role)
            .map(|i| self.names[i].as_str())
    }

    pub fn has(&self, role: Role) -> bool {
        self.roles.contains(&role)
    }

    /// Number of feature columns.
    pub fn dims(&self) -> usize {
        self.roles.iter().filter(|r| **r == Role::Feature).count()
    }
}

fn no_column(path: &Path, at: &str, what: &str, name: &str, names: &[String]) -> Error {
    Error::input_at(
        path,
        format!("{at}, column '{name}'"),
        format!(
            "no {what} column '{name}'; columns present: {}",
            names.join(", ")
        ),
        format!("name an existing column as the {what} column"),
    )
}

/// Resolves the header `names` (trimmed) into roles as `opts` asks. `at` says where the names
/// are, for messages (`line 1` of a text table, `schema` of a columnar file): the columnar
/// formats share these rules so a role option means the same thing in every table.
pub fn resolve(path: &Path, at: &str, names: Vec<String>, opts: &ReadOptions) -> Result<Columns> {
    let mut seen: HashMap<&str, usize> = HashMap::new();
    for (i, n) in names.iter().enumerate() {
        if n.is_empty() {
            return Err(Error::input_at(
                path,
                format!("{at}, column {}", i + 1),
                "a column has no name (often a pandas index written by to_csv)",
                "name every column, or write the table with index=False",
            ));
        }
        if let Some(first) = seen.insert(n, i) {
            return Err(Error::input_at(
                path,
                format!("{at}, column '{n}'"),
                format!(
                    "column name '{n}' appears twice (columns {} and {})",
                    first + 1,
                    i + 1
                ),
                "give every column a distinct name",
            ));
        }
    }
    if !seen.contains_key(opts.label_column.as_str()) {
        return Err(Error::input_at(
            path,
            format!("{at}, column '{}'", opts.label_column),
            format!(
                "no label column '{}'; columns present: {}",
                opts.label_column,
                names.join(", ")
            ),
            "pass `label_column` with the name of the label column",
        ));
    }
    let mut roles = vec![Role::Feature; names.len()];
    let mut notes = Vec::new();
    let assign = |i: usize, role: Role, roles: &mut Vec<Role>| -> Result<()> {
        if roles[i] != Role::Feature && roles[i] != role {
            return Err(Error::input_at(
                path,
                format!("{at}, column '{}'", names[i]),
                format!(
                    "column '{}' is given two roles ({:?} and {:?})",
                    names[i], roles[i], role
                ),
                "give each column at most one role",
            ));
        }
        roles[i] = role;
        Ok(())
    };
    assign(seen[opts.label_column.as_str()], Role::Label, &mut roles)?;
    if let Some(key) = opts.parent_key.as_deref() {
        match seen.get(key) {
            Some(&i) => assign(i, Role::ParentRef, &mut roles)?,
            None => {
                return Err(Error::input_at(
                    path,
                    at.to_string(),
                    format!(
                        "no column '{key}' naming each row's parent; columns present: {}",
                        names.join(", ")
                    ),
                    format!(
                        "add a '{key}' column holding the id (or row index) of the real row each row was made from"
                    ),
                ));
            }
        }
    }
    // An id or group column named by the caller must exist; the default names fall back to
    // the plural names embloom once wrote, with a note (as the tensor formats do).
    for (given, default, old, role, what) in [
        (&opts.id_column, "id", "ids", Role::Id, "id"),
        (&opts.group_column, "group", "groups", Role::Group, "group"),
    ] {
        match given {
            Some(name) => match seen.get(name.as_str()) {
                Some(&i) => assign(i, role, &mut roles)?,
                None => return Err(no_column(path, at, what, name, &names)),
            },
            None => {
                if let Some(&i) = seen.get(default) {
                    assign(i, role, &mut roles)?;
                } else if let Some(&i) = seen.get(old) {
                    assign(i, role, &mut roles)?;
                    notes.push(format!(
                        "read column '{old}' as the row {default}s; embloom now names it '{default}'"
                    ));
                }
            }
        }
    }
    match &opts.fold_column {
        Some(name) => match seen.get(name.as_str()) {
            Some(&i) => assign(i, Role::Fold, &mut roles)?,
            None => return Err(no_column(path, at, "fold", name, &names)),
        },
        None => {
            if let Some(&i) = seen.get(opts.fold_key.as_str()) {
                assign(i, Role::Fold, &mut roles)?;
            } else if opts.fold_key == DEFAULT_FOLD_KEY
                && let Some(&i) = seen.get(OLD_FOLD_KEY)
            {
                assign(i, Role::Fold, &mut roles)?;
                notes.push(format!(
                    "read column '{OLD_FOLD_KEY}' as the row folds; embloom names it '{DEFAULT_FOLD_KEY}'"
                ));
            }
        }
    }
    for name in &opts.ignore_columns {
        match seen.get(name.as_str()) {
            Some(&i) => assign(i, Role::Ignored, &mut roles)?,
            None => return Err(no_column(path, at, "ignored", name, &names)),
        }
    }
    // An embloom export carries all four provenance columns; they are not features.
    let is_export = PROVENANCE.iter().all(|p| seen.contains_key(p));
    if is_export {
        for p in PROVENANCE.iter().chain([&SOURCE_ROW, &PARTNER_LABEL]) {
            if let Some(&i) = seen.get(p)
                && roles[i] == Role::Feature
            {
                roles[i] = Role::Provenance;
            }
        }
    }
    Ok(Columns {
        names,
        roles,
        is_export,
        notes,
    })
}
