//! The Python module `embloom._embloom`: thin bindings of the embloom library. The Python
//! package (`python/embloom/__init__.py`) wraps these with keyword arguments, label encoding
//! and result objects; everything computed here is the same library call the binary makes, so
//! a seed gives the same bytes from either.

use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex, mpsc};
use std::time::Duration;

use embloom::Dataset;
use embloom::assess::{
    AssessConfig, AssessResults, ExternalBudget, ExternalConfig, ExternalSetInfo, FileRows,
    InputInfo, MethodId, Progress, RowSets, StepPart, UNION_JOIN, WorkItem, assess_sets_observed,
    assess_step, check_external_name, combine_steps, resolve_external, step_plan,
};
use embloom::augment::{
    AugmentParams, Epoch, MethodKind, ParamGuard, Plan, Schedule, Stream as LibStream,
    StreamParams, Target, UnitNorm, assemble, describe_notes, grow_dataset, plan_for,
};
use embloom::data::Inspection;
use embloom::eval::IntervalKind;
use embloom::io::{self, AugmentedSet, ReadOptions};
use embloom::neighbors::{IndexKind, Metric};
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use numpy::{IntoPyArray, PyArray1, PyArray2, PyArrayMethods, PyReadonlyArray1, PyReadonlyArray2};
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;
use pyo3::types::PyBytes;
use pyo3::types::PyDict;

pyo3::create_exception!(
    _embloom,
    InputError,
    PyValueError,
    "Bad input data or file."
);
pyo3::create_exception!(
    _embloom,
    ParameterError,
    PyValueError,
    "A parameter out of range."
);

/// The library's error as the Python exception of its kind, with the library's what/where/fix
/// text. Input, I/O, data and output problems are `InputError`; parameters and resource
/// limits (a job too big for the memory) are `ParameterError`.
fn to_py(e: embloom::Error) -> PyErr {
    let text = e.to_string();
    match e {
        embloom::Error::Param { .. } | embloom::Error::Resource { .. } => {
            ParameterError::new_err(text)
        }
        _ => InputError::new_err(text),
    }
}

fn param_err(name: &str, detail: String, fix: &str) -> PyErr {
    to_py(embloom::Error::param(name, detail, fix))
}

/// A dataset from the arrays Python passed: rows (copied once into the library's owned
/// matrix), class indices and class names.
fn dataset(
    x: PyReadonlyArray2<'_, f32>,
    labels: PyReadonlyArray1<'_, u32>,
    classes: Vec<String>,
) -> PyResult<Dataset> {
    let x = x.as_array().to_owned();
    let labels = labels
        .as_slice()
        .map(<[u32]>::to_vec)
        .unwrap_or_else(|_| labels.as_array().to_vec());
    if labels.len() != x.nrows() {
        return Err(to_py(embloom::Error::data(
            format!("x has {} rows but y has {} labels", x.nrows(), labels.len()),
            "pass one label per row",
        )));
    }
    if let Some(&bad) = labels.iter().find(|&&l| l as usize >= classes.len()) {
        return Err(to_py(embloom::Error::data(
            format!("label index {bad} has no class name"),
            "pass a class name for every label index",
        )));
    }
    Ok(Dataset::new(x, labels, classes))
}

/// The shared method parameters from Python keyword arguments (library names with `_` for `-`).
fn augment_params(params: Option<&Bound<'_, PyDict>>) -> PyResult<AugmentParams> {
    let mut p = AugmentParams::default();
    let Some(params) = params else { return Ok(p) };
    for (key, value) in params.iter() {
        let key: String = key.extract()?;
        match key.as_str() {
            "k" | "neighbours" => p.neighbours = value.extract()?,
            "magnitude" => p.magnitude = value.extract()?,
            "variance_kept" => p.variance_kept = value.extract()?,
            "strict" => p.strict = value.extract()?,
            "danger_neighbours" => p.danger_neighbours = value.extract()?,
            "tau" => p.tau = value.extract()?,
            "path" => p.path = value.extract::<String>()?.parse().map_err(to_py)?,
            "borrowed_classes" => p.borrowed_classes = value.extract()?,
            // `off` (or None) as the command line's `--tukey off`, else the power.
            "tukey" => {
                p.tukey = match value.extract::<Option<String>>() {
                    Ok(None) => None,
                    Ok(Some(s)) => embloom::augment::parse_tukey(&s).map_err(to_py)?,
                    Err(_) => Some(value.extract::<f64>()?),
                }
            }
            "metric" => p.metric = metric(&value.extract::<String>()?, "metric")?,
            "index" => {
                p.index = match value.extract::<String>()?.as_str() {
                    "exact" => IndexKind::Exact,
                    "kdtree" => IndexKind::KdTree,
                    s => {
                        return Err(param_err(
                            "index",
                            format!("'{s}' is not a neighbour index"),
                            "use exact or kdtree",
                        ));
                    }
                }
            }
            other => {
                return Err(param_err(
                    other,
                    format!("'{other}' is not a method parameter"),
                    "use k, magnitude, variance_kept, metric, index, strict, danger_neighbours, tau, path, borrowed_classes or tukey",
                ));
            }
        }
    }
    Ok(p)
}

/// A neighbour metric by name, as the binary spells them.
fn metric(s: &str, name: &str) -> PyResult<Metric> {
    match s {
        "cosine" => Ok(Metric::Cosine),
        "euclidean" => Ok(Metric::Euclidean),
        _ => Err(param_err(
            name,
            format!("'{s}' is not a metric"),
            "use cosine or euclidean",
        )),
    }
}

/// An augmented set as the tuple the Python side turns into an object.
type SetTuple<'py> = (
    Bound<'py, PyArray2<f32>>,
    Bound<'py, PyArray1<u32>>,
    Vec<String>,
    Option<Vec<String>>,
    Option<Vec<String>>,
    Option<Vec<i64>>,
    Vec<String>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray1<f32>>,
    Option<Vec<String>>,
);

fn set_tuple(py: Python<'_>, set: AugmentedSet) -> SetTuple<'_> {
    let AugmentedSet {
        data,
        origin,
        parent,
        partner,
        weight,
        partner_label,
    } = set;
    (
        data.x.into_pyarray(py),
        data.labels.into_pyarray(py),
        data.classes,
        data.ids,
        data.groups,
        data.folds,
        origin,
        parent.into_pyarray(py),
        partner.into_pyarray(py),
        weight.into_pyarray(py),
        partner_label,
    )
}

/// Grow `x` (rows) with `labels` (class indices into `classes`), exactly as `embloom grow`.
#[pyfunction]
#[pyo3(signature = (x, labels, classes, method, target, grow_classes, seed, unit_norm, params=None))]
#[allow(clippy::too_many_arguments)]
fn grow<'py>(
    py: Python<'py>,
    x: PyReadonlyArray2<'py, f32>,
    labels: PyReadonlyArray1<'py, u32>,
    classes: Vec<String>,
    method: &str,
    target: &str,
    grow_classes: Option<Vec<String>>,
    seed: u64,
    unit_norm: &str,
    params: Option<&Bound<'py, PyDict>>,
) -> PyResult<SetTuple<'py>> {
    let ds = dataset(x, labels, classes)?;
    let method: MethodKind = method.parse().map_err(to_py)?;
    let target: Target = target.parse().map_err(to_py)?;
    let unit_norm: UnitNorm = unit_norm.parse().map_err(to_py)?;
    let params = augment_params(params)?;
    let set = py
        .allow_threads(|| {
            embloom::neighbors::magnitude::check(&PathBuf::from("x"), ds.x.view())?;
            let plan = plan_for(&ds, target, grow_classes.as_deref())?;
            let grown = grow_dataset(&ds, &plan, method, &params, unit_norm, seed)?;
            assemble(&ds, &grown, method)
        })
        .map_err(to_py)?;
    Ok(set_tuple(py, set))
}

/// Rows to add per class for class counts `counts` (in class-index order), as `grow` plans
/// them: what a distributed run computes once from its counting pass.
#[pyfunction]
#[pyo3(signature = (counts, target, only=None))]
fn plan(counts: Vec<usize>, target: &str, only: Option<Vec<u32>>) -> PyResult<Vec<usize>> {
    let target: Target = target.parse().map_err(to_py)?;
    Ok(Plan::new(&counts, target, only.as_deref()).add)
}

/// Whether every row of `x` has unit norm, by the rule `unit_norm="auto"` applies to the
/// whole input; a distributed run asks it of each shard and needs every answer true.
#[pyfunction]
fn is_unit_norm(py: Python<'_>, x: PyReadonlyArray2<'_, f32>) -> bool {
    let x = x.as_array();
    py.allow_threads(|| embloom::data::is_unit_norm(x))
}

/// Grow one class alone: `x` holds all the real rows of class `class` (an index into
/// `classes`, the whole set's class names) in the set's row order, and `add` rows are drawn
/// from the stream the whole-set `grow` gives that class. `unit_norm` is already resolved
/// for the whole set ("on" or "off"). Parent and partner index the rows of `x`.
#[pyfunction]
#[pyo3(signature = (x, class, classes, method, add, seed, unit_norm, params=None))]
#[allow(clippy::too_many_arguments)]
fn grow_class<'py>(
    py: Python<'py>,
    x: PyReadonlyArray2<'py, f32>,
    class: u32,
    classes: Vec<String>,
    method: &str,
    add: usize,
    seed: u64,
    unit_norm: &str,
    params: Option<&Bound<'py, PyDict>>,
) -> PyResult<(SetTuple<'py>, Vec<String>)> {
    let n = x.as_array().nrows();
    if class as usize >= classes.len() {
        return Err(param_err(
            "class",
            format!("class index {class} is not among {} classes", classes.len()),
            "pass the class's index in the whole set's class names",
        ));
    }
    let labels = vec![class; n].into_pyarray(py).readonly();
    let ds = dataset(x, labels, classes)?;
    let method: MethodKind = method.parse().map_err(to_py)?;
    let unit_norm: UnitNorm = unit_norm.parse().map_err(to_py)?;
    let params = augment_params(params)?;
    let mut counts = vec![0; ds.n_classes()];
    counts[class as usize] = add;
    let plan = Plan { add: counts };
    let (set, notes) = py
        .allow_threads(|| {
            embloom::neighbors::magnitude::check(&PathBuf::from("x"), ds.x.view())?;
            let grown = grow_dataset(&ds, &plan, method, &params, unit_norm, seed)?;
            let notes = describe_notes(&grown.notes, &ds.classes, method);
            assemble(&ds, &grown, method).map(|set| (set, notes))
        })
        .map_err(to_py)?;
    Ok((set_tuple(py, set), notes))
}

/// Read a file as `embloom` reads it (keys as in the library's `ReadOptions`).
#[pyfunction]
#[pyo3(signature = (path, embeddings_key, labels_key, label_column, fold_key, labels_file=None, drop_nonfinite=false))]
#[allow(clippy::too_many_arguments)]
fn read<'py>(
    py: Python<'py>,
    path: PathBuf,
    embeddings_key: String,
    labels_key: String,
    label_column: String,
    fold_key: String,
    labels_file: Option<PathBuf>,
    drop_nonfinite: bool,
) -> PyResult<(SetTuple<'py>, Vec<String>)> {
    let opts = ReadOptions {
        labels_file,
        embeddings_key,
        labels_key,
        label_column,
        fold_key,
        drop_nonfinite,
        keep_nonfinite: false,
        ..ReadOptions::default()
    };
    let loaded = py.allow_threads(|| io::read(&path, &opts)).map_err(to_py)?;
    let n = loaded.dataset.n_rows();
    let set = AugmentedSet {
        origin: loaded.origin.unwrap_or_else(|| vec!["real".into(); n]),
        parent: loaded.parent.unwrap_or_else(|| (0..n as i64).collect()),
        partner: loaded.partner.unwrap_or_else(|| vec![-1; n]),
        weight: vec![0.0; n],
        partner_label: None,
        data: loaded.dataset,
    };
    Ok((set_tuple(py, set), loaded.notes))
}

/// Write rows, labels and optional ids/groups/folds to `path` (format by extension), all or
/// nothing, as every embloom output.
#[pyfunction]
#[pyo3(signature = (path, x, labels, classes, ids=None, groups=None, folds=None, force=false))]
#[allow(clippy::too_many_arguments)]
fn write(
    py: Python<'_>,
    path: PathBuf,
    x: PyReadonlyArray2<'_, f32>,
    labels: PyReadonlyArray1<'_, u32>,
    classes: Vec<String>,
    ids: Option<Vec<String>>,
    groups: Option<Vec<String>>,
    folds: Option<Vec<i64>>,
    force: bool,
) -> PyResult<()> {
    let mut ds = dataset(x, labels, classes)?;
    let n = ds.n_rows();
    for (name, len) in [
        ("ids", ids.as_ref().map(Vec::len)),
        ("groups", groups.as_ref().map(Vec::len)),
        ("folds", folds.as_ref().map(Vec::len)),
    ] {
        if let Some(len) = len
            && len != n
        {
            return Err(to_py(embloom::Error::data(
                format!("x has {n} rows but {name} has {len} values"),
                format!("pass one value of {name} per row"),
            )));
        }
    }
    ds.ids = ids;
    ds.groups = groups;
    ds.folds = folds;
    let set = AugmentedSet::all_real(ds);
    py.allow_threads(|| {
        io::output_format(&path)?;
        io::write(&path, &set, force)
    })
    .map_err(to_py)
}

/// A finished assessment, kept whole so the report folder is rendered by the library itself.
#[pyclass(frozen)]
struct Results(AssessResults);

#[pymethods]
impl Results {
    /// results.json's text, as `embloom assess --json` prints it.
    fn to_json(&self) -> PyResult<String> {
        serde_json::to_string_pretty(&self.0).map_err(|e| {
            to_py(embloom::Error::data(
                format!("cannot serialise the results: {e}"),
                "report this as a bug",
            ))
        })
    }

    /// The terminal table `embloom assess` prints.
    fn table(&self) -> String {
        embloom::report::terminal_table(&self.0)
    }

    /// Write results.json, the CSV tables and report.html to `dir`, all or nothing.
    #[pyo3(signature = (dir, force=false))]
    fn write_report(&self, py: Python<'_>, dir: PathBuf, force: bool) -> PyResult<()> {
        py.allow_threads(|| embloom::report::write_report_dir_guarded(&dir, &self.0, force, &[]))
            .map_err(to_py)
    }
}

/// Why the worker stopped early: Python asked it to (Ctrl-C). Carried by an unwind that
/// `resume_unwind` starts without running the panic hook, so nothing is printed.
struct Cancelled;

/// What the worker thread sends the waiting Python thread.
enum Message {
    Step(Progress),
    /// Boxed: the results are large and sent once, the steps small and many.
    Done(Box<embloom::Result<AssessResults>>),
}

/// Assess `x`/`labels` as `embloom assess` does. The work runs on a thread of its own while
/// this thread, without the GIL, waits for its messages: every 100 ms it takes the GIL to let
/// Python handle signals (Ctrl-C raises KeyboardInterrupt here at once, and the worker is
/// stopped at its next step; nothing has been written) and to pass progress to `on_progress`.
#[pyfunction]
#[pyo3(signature = (x, labels, classes, config, groups=None, folds=None, on_progress=None, external=None))]
#[allow(clippy::too_many_arguments)]
fn assess<'py>(
    py: Python<'py>,
    x: PyReadonlyArray2<'py, f32>,
    labels: PyReadonlyArray1<'py, u32>,
    classes: Vec<String>,
    config: &Bound<'py, PyDict>,
    groups: Option<Vec<String>>,
    folds: Option<Vec<i64>>,
    on_progress: Option<Bound<'py, PyAny>>,
    external: Option<Vec<ExternalArrays<'py>>>,
) -> PyResult<(Results, Vec<String>)> {
    let mut ds = dataset(x, labels, classes)?;
    ds.groups = groups;
    ds.folds = folds;
    let (rows, sets) = external_sets(external.unwrap_or_default(), &ds)?;
    let names: Vec<String> = sets.iter().map(|s| s.name.clone()).collect();
    let (cfg, ext_cfg, warnings) = assess_config(config, &ds, &names)?;
    let input = InputInfo::in_memory("(arrays)", &ds);
    let cancelled = Arc::new(AtomicBool::new(false));
    let (tx, rx) = mpsc::channel();
    // A Receiver is not Sync; the lock lets the GIL-free wait borrow it.
    let rx = Mutex::new(rx);
    let stop = Arc::clone(&cancelled);
    std::thread::spawn(move || {
        let done_tx = tx.clone();
        let run = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            embloom::neighbors::magnitude::check(&PathBuf::from("x"), ds.x.view())?;
            let sets = RowSets {
                rows: &rows,
                config: &ext_cfg,
                sets: &sets,
            };
            assess_sets_observed(&ds, &cfg, input, sets, &mut |p| {
                if stop.load(Ordering::Relaxed) {
                    std::panic::resume_unwind(Box::new(Cancelled));
                }
                let _ = tx.send(Message::Step(p));
            })
        }));
        if let Ok(result) = run {
            let _ = done_tx.send(Message::Done(Box::new(result)));
        }
    });
    loop {
        let msg = py.allow_threads(|| match rx.lock() {
            Ok(rx) => rx.recv_timeout(Duration::from_millis(100)),
            Err(_) => Err(mpsc::RecvTimeoutError::Disconnected),
        });
        if let Err(e) = py.check_signals() {
            cancelled.store(true, Ordering::Relaxed);
            return Err(e);
        }
        match msg {
            Ok(Message::Step(p)) => {
                if let Some(cb) = &on_progress {
                    let method = p.method.to_string();
                    if let Err(e) = cb.call1((p.done, p.total, p.fold, p.folds, method)) {
                        cancelled.store(true, Ordering::Relaxed);
                        return Err(e);
                    }
                }
            }
            Ok(Message::Done(result)) => {
                let mut results = (*result).map_err(to_py)?;
                results.warnings.extend(warnings.iter().cloned());
                return Ok((Results(results), warnings));
            }
            Err(mpsc::RecvTimeoutError::Timeout) => {}
            Err(mpsc::RecvTimeoutError::Disconnected) => {
                return Err(to_py(embloom::Error::data(
                    "the assessment stopped without a result",
                    "report this as a bug",
                )));
            }
        }
    }
}

/// What every step of a distributed assessment starts from: the dataset, the configuration
/// as `assess` parses it (without external sets), its unions, and the configuration's
/// warnings.
struct StepInputs {
    ds: Dataset,
    cfg: AssessConfig,
    ext: ExternalConfig,
    warnings: Vec<String>,
}

impl StepInputs {
    fn new(
        x: PyReadonlyArray2<'_, f32>,
        labels: PyReadonlyArray1<'_, u32>,
        classes: Vec<String>,
        config: &Bound<'_, PyDict>,
        groups: Option<Vec<String>>,
        folds: Option<Vec<i64>>,
    ) -> PyResult<Self> {
        let mut ds = dataset(x, labels, classes)?;
        ds.groups = groups;
        ds.folds = folds;
        let (cfg, ext, warnings) = assess_config(config, &ds, &[])?;
        Ok(StepInputs {
            ds,
            cfg,
            ext,
            warnings,
        })
    }

    fn sets(&self) -> RowSets<'_> {
        RowSets {
            rows: &[],
            config: &self.ext,
            sets: &[],
        }
    }
}

/// The steps of an assessment: (folds, method names), steps numbered fold by fold.
#[pyfunction]
#[pyo3(signature = (x, labels, classes, config, groups=None, folds=None))]
fn assess_plan<'py>(
    py: Python<'py>,
    x: PyReadonlyArray2<'py, f32>,
    labels: PyReadonlyArray1<'py, u32>,
    classes: Vec<String>,
    config: &Bound<'py, PyDict>,
    groups: Option<Vec<String>>,
    folds: Option<Vec<i64>>,
) -> PyResult<(usize, Vec<String>)> {
    let s = StepInputs::new(x, labels, classes, config, groups, folds)?;
    let plan = py
        .allow_threads(|| {
            embloom::neighbors::magnitude::check(&PathBuf::from("x"), s.ds.x.view())?;
            step_plan(&s.ds, &s.cfg, s.sets())
        })
        .map_err(to_py)?;
    Ok((
        plan.folds,
        plan.methods.iter().map(ToString::to_string).collect(),
    ))
}

/// One (fold, method) step of an assessment, as bytes for `assess_combine`.
#[pyfunction]
#[pyo3(signature = (x, labels, classes, config, fold, method, groups=None, folds=None))]
#[allow(clippy::too_many_arguments)]
fn assess_step_part<'py>(
    py: Python<'py>,
    x: PyReadonlyArray2<'py, f32>,
    labels: PyReadonlyArray1<'py, u32>,
    classes: Vec<String>,
    config: &Bound<'py, PyDict>,
    fold: usize,
    method: usize,
    groups: Option<Vec<String>>,
    folds: Option<Vec<i64>>,
) -> PyResult<Bound<'py, PyBytes>> {
    let s = StepInputs::new(x, labels, classes, config, groups, folds)?;
    let input = InputInfo::in_memory("(arrays)", &s.ds);
    let bytes = py
        .allow_threads(|| {
            assess_step(&s.ds, &s.cfg, &input, s.sets(), WorkItem { fold, method })?.to_bytes()
        })
        .map_err(to_py)?;
    Ok(PyBytes::new(py, &bytes))
}

/// The results of an assessment from the bytes of all its steps' parts: equal to `assess`'s
/// on the same arrays and configuration.
#[pyfunction]
#[pyo3(signature = (x, labels, classes, config, parts, groups=None, folds=None))]
#[allow(clippy::too_many_arguments)]
fn assess_combine<'py>(
    py: Python<'py>,
    x: PyReadonlyArray2<'py, f32>,
    labels: PyReadonlyArray1<'py, u32>,
    classes: Vec<String>,
    config: &Bound<'py, PyDict>,
    parts: Vec<Bound<'py, PyBytes>>,
    groups: Option<Vec<String>>,
    folds: Option<Vec<i64>>,
) -> PyResult<(Results, Vec<String>)> {
    let s = StepInputs::new(x, labels, classes, config, groups, folds)?;
    let input = InputInfo::in_memory("(arrays)", &s.ds);
    let parts = parts
        .iter()
        .map(|b| StepPart::from_bytes(b.as_bytes()))
        .collect::<embloom::Result<Vec<_>>>()
        .map_err(to_py)?;
    let mut results = py
        .allow_threads(|| combine_steps(&s.ds, &s.cfg, input, s.sets(), &parts))
        .map_err(to_py)?;
    results.warnings.extend(s.warnings.iter().cloned());
    Ok((Results(results), s.warnings))
}

fn parse<T: std::str::FromStr<Err = embloom::Error>>(
    d: &Bound<'_, PyDict>,
    key: &str,
) -> PyResult<Option<T>> {
    match d.get_item(key)? {
        None => Ok(None),
        Some(v) if v.is_none() => Ok(None),
        Some(v) => {
            let s: String = v.str()?.extract()?;
            s.parse().map(Some).map_err(to_py)
        }
    }
}

fn get<'py, T: FromPyObject<'py>>(d: &Bound<'py, PyDict>, key: &str) -> PyResult<Option<T>> {
    match d.get_item(key)? {
        None => Ok(None),
        Some(v) if v.is_none() => Ok(None),
        Some(v) => v.extract().map(Some),
    }
}

/// One external set as the Python side passes it: its name, rows, class indices into its own
/// class names, and each row's parent (a row index of the real rows, as text).
type ExternalArrays<'py> = (
    String,
    PyReadonlyArray2<'py, f32>,
    PyReadonlyArray1<'py, u32>,
    Vec<String>,
    Vec<String>,
);

/// The external sets resolved against `real` by the library's own rule (classes by name,
/// parents by row index), and what results.json records of each: no file, so the path says
/// the rows came from arrays and there is no digest.
fn external_sets(
    sets: Vec<ExternalArrays<'_>>,
    real: &Dataset,
) -> PyResult<(Vec<FileRows>, Vec<ExternalSetInfo>)> {
    let mut rows = Vec::with_capacity(sets.len());
    let mut infos = Vec::with_capacity(sets.len());
    for (name, x, labels, classes, parents) in sets {
        check_external_name(&name).map_err(to_py)?;
        if infos.iter().any(|i: &ExternalSetInfo| i.name == name) {
            return Err(param_err(
                "external",
                format!("two external sets are named '{name}'"),
                "give each external set its own name",
            ));
        }
        let set = dataset(x, labels, classes)?;
        if parents.len() != set.n_rows() {
            return Err(to_py(embloom::Error::data(
                format!(
                    "external set '{name}' has {} rows but {} parents",
                    set.n_rows(),
                    parents.len()
                ),
                "pass one parent (a row index of x) per row of the set",
            )));
        }
        let where_ = PathBuf::from(format!("external set '{name}'"));
        let r = resolve_external(&name, &where_, &set, &parents, real).map_err(to_py)?;
        infos.push(ExternalSetInfo {
            name,
            path: "(arrays)".into(),
            sha256: String::new(),
            rows: r.n_rows(),
        });
        rows.push(r);
    }
    Ok((rows, infos))
}

/// The methods list as the binary reads its method entries: a method name, an external set's
/// name, or a union of either joined by `+` (its parts' methods are run too).
fn methods_and_unions(
    methods: Vec<String>,
    external: &[String],
) -> PyResult<(Vec<MethodKind>, Vec<MethodId>)> {
    let mut kinds = vec![MethodKind::None];
    let mut unions = Vec::new();
    for m in methods {
        if m.contains(UNION_JOIN) {
            let id: MethodId = m.parse().map_err(to_py)?;
            let parts = match &id {
                MethodId::Union(parts) => parts.as_slice(),
                _ => &[],
            };
            if parts.len() < 2 || parts.iter().any(|p| p.name().is_empty() || p.is_baseline()) {
                return Err(param_err(
                    "methods",
                    format!("'{m}' is not a union"),
                    "join two or more methods or external sets (not none) with +, e.g. flips+interpolate",
                ));
            }
            for p in parts {
                match p {
                    MethodId::Kind(k) if !kinds.contains(k) => kinds.push(*k),
                    MethodId::External(n) if !external.contains(n) => {
                        return Err(param_err(
                            "methods",
                            format!(
                                "{id} joins '{n}', which is neither a method nor an external set"
                            ),
                            "pass the external set in external, or join methods by their names",
                        ));
                    }
                    _ => {}
                }
            }
            if !unions.contains(&id) {
                unions.push(id);
            }
        } else if external.contains(&m) {
            // An external set is always assessed; naming it is allowed, as on the command line.
        } else {
            let k: MethodKind = m.parse().map_err(to_py)?;
            if !kinds.contains(&k) {
                kinds.push(k);
            }
        }
    }
    Ok((kinds, unions))
}

/// The assessment's configuration from the Python keywords, with the command line's defaults
/// (the library's own), and the k-NN k clamped to a fold's training rows as the binary does.
fn assess_config(
    d: &Bound<'_, PyDict>,
    ds: &Dataset,
    external: &[String],
) -> PyResult<(AssessConfig, ExternalConfig, Vec<String>)> {
    let methods: Vec<String> = get(d, "methods")?.unwrap_or_default();
    let (kinds, unions) = methods_and_unions(methods, external)?;
    let budget: ExternalBudget = parse(d, "external_budget")?.unwrap_or_default();
    let probes: Vec<String> =
        get(d, "probes")?.unwrap_or_else(|| vec!["knn".into(), "linear".into()]);
    let probes = probes
        .iter()
        .map(|p| p.parse::<ProbeKind>())
        .collect::<embloom::Result<Vec<_>>>()
        .map_err(to_py)?;
    let params: Option<Bound<'_, PyDict>> = get(d, "method_params")?;
    let mut knn = KnnParams::default();
    if let Some(k) = get(d, "knn_k")? {
        knn.k = k;
    }
    if let Some(m) = get::<String>(d, "knn_metric")? {
        knn.metric = metric(&m, "knn-metric")?;
    }
    if let Some(on) = get::<bool>(d, "knn_standardize")? {
        knn.standardize = on;
    }
    let mut linear = LinearParams::default();
    if let Some(l2) = get(d, "linear_l2")? {
        linear.l2 = l2;
    }
    if let Some(it) = get(d, "linear_max_iter")? {
        linear.max_iter = it;
    }
    let interval = match get::<String>(d, "interval")? {
        None => IntervalKind::default(),
        Some(s) => IntervalKind::parse(&s).ok_or_else(|| {
            param_err(
                "interval",
                format!("unknown interval '{s}'"),
                "use corrected-t or another interval the library names",
            )
        })?,
    };
    let mut cfg = AssessConfig {
        methods: kinds,
        probes,
        folds: get(d, "folds")?.unwrap_or(5),
        repeats: get(d, "repeats")?.unwrap_or(1),
        target: parse(d, "target")?.unwrap_or(Target::Median),
        classes: get(d, "classes")?,
        augment: augment_params(params.as_ref())?,
        unit_norm: parse(d, "unit_norm")?.unwrap_or(UnitNorm::Auto),
        knn,
        linear,
        interval,
        seed: get(d, "seed")?.unwrap_or(0),
        diagnostics: get(d, "diagnostics")?.unwrap_or(true),
    }
    .validated()
    .map_err(to_py)?;
    let mut warnings = Vec::new();
    if let Some(c) = cfg.clamp_knn_k(ds.n_rows()) {
        warnings.push(format!(
            "knn_k {} is more than the {} training rows of a fold; using k = {}",
            c.asked, c.train_rows, c.used
        ));
    }
    Ok((cfg, ExternalConfig { budget, unions }, warnings))
}

/// `inspect --json`'s text for rows and labels held in memory: the same library value the
/// binary prints. `labels=None` describes the rows only, as for a `.npy` without labels.
#[pyfunction]
#[pyo3(signature = (x, labels, classes, dtype, ids=None, groups=None, folds=None, name="(arrays)".to_string()))]
#[allow(clippy::too_many_arguments)]
fn inspect(
    py: Python<'_>,
    x: PyReadonlyArray2<'_, f32>,
    labels: Option<PyReadonlyArray1<'_, u32>>,
    classes: Vec<String>,
    dtype: String,
    ids: Option<Vec<String>>,
    groups: Option<Vec<String>>,
    folds: Option<Vec<i64>>,
    name: String,
) -> PyResult<String> {
    let file = PathBuf::from(name);
    let report = match labels {
        None => {
            let x = x.as_array().to_owned();
            py.allow_threads(|| Inspection::of_unlabelled(&file, x, dtype))
        }
        Some(labels) => {
            let mut ds = dataset(x, labels, classes)?;
            ds.stored_dtype = dtype;
            ds.ids = ids;
            ds.groups = groups;
            ds.folds = folds;
            py.allow_threads(|| Inspection::of(&file, &ds, None))
        }
    };
    serde_json::to_string_pretty(&report).map_err(|e| {
        to_py(embloom::Error::data(
            format!("cannot serialise the inspection: {e}"),
            "report this as a bug",
        ))
    })
}

/// A schedule from the Python side's normalised spelling: `(kind, start, steps)` with kind
/// `constant`, `linear` (from `start` × the value) or `steps`.
fn schedule(name: &str, spec: (String, f64, Vec<(usize, f64)>)) -> PyResult<Schedule> {
    let (kind, start, steps) = spec;
    match kind.as_str() {
        "constant" => Ok(Schedule::Constant),
        "linear" => Ok(Schedule::Linear { start }),
        "steps" => Ok(Schedule::Steps(steps)),
        other => Err(param_err(
            name,
            format!("'{other}' is not a schedule"),
            "use constant, linear, (\"linear\", start) or (\"steps\", [(epoch, factor), ...])",
        )),
    }
}

/// A training-loop stream: the library's `augment::Stream` and the epoch last asked for
/// (its shuffle and fitted method), so batches in order cost no refit or reshuffle.
#[pyclass(frozen)]
struct Stream {
    inner: LibStream,
    epoch: Mutex<Option<Epoch>>,
}

/// A batch as the tuple the Python side yields: rows, class indices, synthetic mask.
type BatchTuple<'py> = (
    Bound<'py, PyArray2<f32>>,
    Bound<'py, PyArray1<u32>>,
    Bound<'py, PyArray1<bool>>,
);

#[pymethods]
impl Stream {
    /// Batches over all epochs.
    fn __len__(&self) -> usize {
        self.inner.len()
    }

    /// Number of epochs.
    fn epochs(&self) -> usize {
        self.inner.epochs()
    }

    /// Batches in `epoch`.
    fn batches_in(&self, epoch: usize) -> usize {
        self.inner.batches_in(epoch)
    }

    /// What the fit clamped, adjusted or skipped, as the binary words it.
    fn notes(&self) -> Vec<String> {
        let method = self.inner.method();
        describe_notes(self.inner.notes(), &self.inner.data().classes, method)
    }

    /// Batch `index` of `epoch`, fixed by the seed, the epoch and the index alone.
    fn batch<'py>(&self, py: Python<'py>, epoch: usize, index: usize) -> PyResult<BatchTuple<'py>> {
        let b = py
            .allow_threads(|| {
                let mut cur = self.epoch.lock().unwrap_or_else(|p| p.into_inner());
                if cur.as_ref().is_none_or(|e| e.index() != epoch) {
                    *cur = Some(self.inner.epoch(epoch)?);
                }
                let e = cur.as_ref().expect("set above");
                self.inner.batch(e, index)
            })
            .map_err(to_py)?;
        Ok((
            b.x.into_pyarray(py),
            b.labels.into_pyarray(py),
            b.synthetic.into_pyarray(py),
        ))
    }
}

/// A stream over `x`/`labels` (see `augment::Stream`); the method is fitted here, once.
#[pyfunction]
#[pyo3(signature = (x, labels, classes, method, target, grow_classes, batch_size, epochs, synthetic_share, share_schedule, magnitude_schedule, unit_norm, seed, params=None))]
#[allow(clippy::too_many_arguments)]
fn stream(
    py: Python<'_>,
    x: PyReadonlyArray2<'_, f32>,
    labels: PyReadonlyArray1<'_, u32>,
    classes: Vec<String>,
    method: &str,
    target: &str,
    grow_classes: Option<Vec<String>>,
    batch_size: usize,
    epochs: usize,
    synthetic_share: Option<f64>,
    share_schedule: (String, f64, Vec<(usize, f64)>),
    magnitude_schedule: (String, f64, Vec<(usize, f64)>),
    unit_norm: &str,
    seed: u64,
    params: Option<&Bound<'_, PyDict>>,
) -> PyResult<Stream> {
    let ds = dataset(x, labels, classes)?;
    let params = StreamParams::new(method.parse().map_err(to_py)?)
        .augment(augment_params(params)?)
        .target(target.parse().map_err(to_py)?)
        .classes(grow_classes)
        .batch_size(batch_size)
        .epochs(epochs)
        .synthetic_share(synthetic_share)
        .share_schedule(schedule("share-schedule", share_schedule)?)
        .magnitude_schedule(schedule("magnitude-schedule", magnitude_schedule)?)
        .unit_norm(unit_norm.parse().map_err(to_py)?)
        .seed(seed)
        .check()
        .map_err(to_py)?;
    let inner = py
        .allow_threads(|| LibStream::new(ds, params))
        .map_err(to_py)?;
    Ok(Stream {
        inner,
        epoch: Mutex::new(None),
    })
}

#[pymodule]
fn _embloom(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("InputError", m.py().get_type::<InputError>())?;
    m.add("ParameterError", m.py().get_type::<ParameterError>())?;
    m.add_function(wrap_pyfunction!(grow, m)?)?;
    m.add_function(wrap_pyfunction!(assess, m)?)?;
    m.add_class::<Results>()?;
    m.add_function(wrap_pyfunction!(read, m)?)?;
    m.add_function(wrap_pyfunction!(write, m)?)?;
    m.add_function(wrap_pyfunction!(inspect, m)?)?;
    m.add_function(wrap_pyfunction!(stream, m)?)?;
    m.add_class::<Stream>()?;
    m.add_function(wrap_pyfunction!(plan, m)?)?;
    m.add_function(wrap_pyfunction!(is_unit_norm, m)?)?;
    m.add_function(wrap_pyfunction!(grow_class, m)?)?;
    m.add_function(wrap_pyfunction!(assess_plan, m)?)?;
    m.add_function(wrap_pyfunction!(assess_step_part, m)?)?;
    m.add_function(wrap_pyfunction!(assess_combine, m)?)?;
    Ok(())
}
