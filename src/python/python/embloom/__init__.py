"""embloom: feature-space augmentation of embedding matrices, from Python.

The same Rust library as the ``embloom`` command line: for the same arrays and seed, ``grow``
returns the very rows ``embloom grow`` writes.

    >>> import numpy as np, embloom
    >>> grown = embloom.grow(x, y, method="interpolate", target="median", seed=0)
    >>> grown.x.shape, grown.origin[:3]
"""

from __future__ import annotations

import json
import sys
import time
import warnings
from dataclasses import dataclass
from os import PathLike
from typing import Any, Optional, Sequence, Union

import numpy as np

from . import _embloom
from ._embloom import InputError, ParameterError

__all__ = [
    "Dataset",
    "Grown",
    "InputError",
    "ParameterError",
    "Results",
    "Stream",
    "assess",
    "grow",
    "inspect",
    "read",
    "write",
]


@dataclass
class Dataset:
    """Rows and labels as read from a file.

    ``x`` is ``(n, d)`` float32, ``y`` the class name of each row, and ``ids``, ``groups``,
    ``folds`` are ``None`` when the file has none.
    """

    x: np.ndarray
    y: np.ndarray
    ids: Optional[np.ndarray]
    groups: Optional[np.ndarray]
    folds: Optional[np.ndarray]
    notes: list


@dataclass
class Grown:
    """Real rows first, then synthetic rows, with provenance per row.

    ``origin`` is ``"real"`` or the method's name, ``parent`` the real row a synthetic row was
    made from, ``partner`` the neighbour used (-1 for none), ``weight`` the method's u, λ or
    noise magnitude (0 for real rows). For ``mix`` rows ``partner_label`` is the partner's
    class (empty for other rows; ``None`` when no row is mixed): the row's soft target is
    ``weight`` on ``y`` and ``1 - weight`` on ``partner_label``.
    """

    x: np.ndarray
    y: np.ndarray
    origin: np.ndarray
    parent: np.ndarray
    partner: np.ndarray
    weight: np.ndarray
    partner_label: Optional[np.ndarray] = None


def _rows(x: Any) -> np.ndarray:
    """``x`` as C-contiguous float32, converting once (with a warning) when it is not."""
    arr = np.asarray(x)
    if arr.ndim != 2:
        raise InputError(f"x has {arr.ndim} dimensions, not 2\n  fix: pass an (n, d) matrix")
    if arr.dtype == np.float32 and arr.flags.c_contiguous:
        return arr
    warnings.warn(
        f"x is {arr.dtype}{'' if arr.flags.c_contiguous else ', not C-contiguous'}; "
        "converting once to C-contiguous float32",
        stacklevel=3,
    )
    return np.ascontiguousarray(arr, dtype=np.float32)


def _labels(y: Any, n: int) -> tuple:
    """Class indices and names, in numpy ``unique`` order (the order the files' reader uses)."""
    arr = np.asarray(y)
    if arr.ndim != 1 or arr.shape[0] != n:
        raise InputError(
            f"y has shape {arr.shape}, expected ({n},)\n  fix: pass one label per row of x"
        )
    names, index = np.unique(arr, return_inverse=True)
    return index.astype(np.uint32).reshape(-1), [str(c) for c in names.tolist()]


def _dtype_name(dtype: np.dtype) -> str:
    """A numpy dtype as the file readers spell an element type ("f32", "f64", "i64", ...)."""
    kind = {"f": "f", "i": "i", "u": "u"}.get(dtype.kind)
    return f"{kind}{dtype.itemsize * 8}" if kind else str(dtype)


def _optional(values: Any, n: int) -> Optional[list]:
    return None if values is None else [str(v) for v in np.asarray(values).tolist()]


def read(
    path: Union[str, PathLike],
    *,
    embeddings_key: str = "embeddings",
    labels_key: str = "labels",
    label_column: str = "label",
    fold_key: str = "fold",
    labels_file: Optional[Union[str, PathLike]] = None,
    drop_nonfinite: bool = False,
) -> Dataset:
    """Read an embedding file (.npz, .npy with ``labels_file``, .csv/.tsv, .safetensors, .h5).

    Raises ``InputError`` naming the file, key or row and a fix when the file cannot be used.
    """
    (x, labels, classes, ids, groups, folds, *_), notes = _embloom.read(
        str(path),
        embeddings_key,
        labels_key,
        label_column,
        fold_key,
        None if labels_file is None else str(labels_file),
        drop_nonfinite,
    )
    y = np.asarray(classes, dtype=object)[labels] if classes else np.empty(0, dtype=object)
    return Dataset(
        x=x,
        y=y,
        ids=None if ids is None else np.asarray(ids, dtype=object),
        groups=None if groups is None else np.asarray(groups, dtype=object),
        folds=None if folds is None else np.asarray(folds, dtype=np.int64),
        notes=list(notes),
    )


def write(
    path: Union[str, PathLike],
    x: Any,
    y: Any,
    *,
    ids: Optional[Sequence] = None,
    groups: Optional[Sequence] = None,
    folds: Optional[Sequence[int]] = None,
    force: bool = False,
) -> None:
    """Write rows and labels to ``path`` (format from the extension), all or nothing.

    An existing file is refused unless ``force=True``.
    """
    rows = _rows(x)
    labels, classes = _labels(y, rows.shape[0])
    _embloom.write(
        str(path),
        rows,
        labels,
        classes,
        _optional(ids, rows.shape[0]),
        _optional(groups, rows.shape[0]),
        None if folds is None else [int(f) for f in folds],
        force,
    )


def grow(
    x: Any,
    y: Any,
    *,
    method: str = "interpolate",
    target: str = "median",
    classes: Optional[Sequence[str]] = None,
    seed: int = 0,
    unit_norm: str = "auto",
    **method_params: Any,
) -> Grown:
    """Add synthetic rows to the classes below ``target`` with ``method``.

    ``target`` is ``largest``, ``median``, a count (``"500"``) or a multiple (``"2x"``);
    ``classes`` limits growth to the named classes. ``method_params`` are the method's
    parameters: ``k``, ``magnitude``, ``variance_kept``, ``metric``, ``index``, ``strict``,
    ``danger_neighbours`` (borderline's m), ``path`` (``"chord"`` or ``"sphere"``, for interpolate and extrapolate),
    ``borrowed_classes`` and ``tukey`` (``None``/``"off"`` or the power; calibrated's), as
    the command line's ``--path``, ``--borrowed-classes`` and ``--tukey``.
    The result equals what ``embloom grow`` writes for the same rows, labels and seed.
    """
    rows = _rows(x)
    labels, names = _labels(y, rows.shape[0])
    out = _embloom.grow(
        rows,
        labels,
        names,
        method,
        str(target),
        None if classes is None else [str(c) for c in classes],
        int(seed),
        unit_norm,
        method_params,
    )
    gx, glabels, gclasses, _ids, _groups, _folds, origin, parent, partner, weight, plabel = out
    return Grown(
        x=gx,
        y=np.asarray(gclasses, dtype=object)[glabels],
        origin=np.asarray(origin, dtype=object),
        parent=parent,
        partner=partner,
        weight=weight,
        partner_label=None if plabel is None else np.asarray(plabel, dtype=object),
    )


class Results:
    """An assessment's results: the figures of ``embloom assess``'s results.json.

    ``summary`` has one dict per (method, probe, metric) with the mean and the paired
    difference against ``none``; ``per_class`` one per (method, probe, class);
    ``confusion_changes`` one per (true class, predicted class) pair whose count over the test
    folds moved most against ``none`` (the matrices are in ``data["confusion"]``).
    ``str(results)`` is the table the command line prints.
    """

    def __init__(self, inner: Any, warnings_: list) -> None:
        self._inner = inner
        self._json = inner.to_json()
        data = json.loads(self._json)
        self.data: dict = data
        self.summary: list = data["summary"]
        self.per_class: list = data["per_class"]
        self.confusion_changes: list = data["confusion_changes"]
        self.warnings: list = data["warnings"]

    def to_json(self) -> str:
        """results.json's text."""
        return self._json

    def to_pandas(self) -> Any:
        """``summary`` as a pandas DataFrame (needs pandas, which embloom does not depend on)."""
        try:
            import pandas as pd
        except ImportError as err:
            raise ImportError("to_pandas needs pandas: pip install pandas") from err
        return pd.DataFrame(self.summary)

    def write_report(self, dir: Union[str, PathLike], *, force: bool = False) -> None:
        """Write results.json, the CSV tables and report.html to ``dir``, all or nothing."""
        self._inner.write_report(str(dir), force)

    def __str__(self) -> str:
        return self._inner.table()

    def __repr__(self) -> str:
        return f"<embloom.Results: {len(self.summary)} summary rows>"


class _Bar:
    """A one-line progress bar on stderr, redrawn from the library's progress callback."""

    def __init__(self) -> None:
        self.start = time.monotonic()

    def __call__(self, done: int, total: int, fold: int, folds: int, method: str) -> None:
        width = 30
        filled = width * done // max(total, 1)
        elapsed = time.monotonic() - self.start
        sys.stderr.write(
            f"\r{'#' * filled}{'-' * (width - filled)} {done}/{total} "
            f"fold {fold}/{folds} {method} [{elapsed:.0f}s]\x1b[K"
        )
        sys.stderr.flush()

    def finish(self) -> None:
        sys.stderr.write("\r\x1b[K")
        sys.stderr.flush()


def _external_set(name: Any, value: Any, dims: int) -> tuple:
    """One ``external`` entry as the binding takes it: rows, class indices and names, parents."""
    try:
        x_e, y_e, parent = value
    except (TypeError, ValueError):
        raise ParameterError(
            f"external set '{name}' is not an (x, y, parent) triple\n"
            "  fix: pass external={name: (rows, labels, parent rows)}"
        ) from None
    rows = _rows(x_e)
    labels, names = _labels(y_e, rows.shape[0])
    parents = np.asarray(parent).reshape(-1)
    if parents.dtype.kind not in "iu":
        raise InputError(
            f"external set '{name}': parent is {parents.dtype}, not integers\n"
            "  fix: give each augmented row the row of x (counted from 0) it was made from"
        )
    return (str(name), rows, labels, names, [str(int(p)) for p in parents])


def _assess_config(
    *,
    methods: Sequence[str],
    probes: Sequence[str],
    folds: int,
    repeats: int,
    seed: int,
    target: str,
    classes: Optional[Sequence[str]],
    unit_norm: str,
    knn_k: Optional[int],
    knn_metric: Optional[str],
    knn_standardize: Optional[bool],
    linear_l2: Optional[float],
    linear_max_iter: Optional[int],
    interval: Optional[str],
    diagnostics: bool,
    external_budget: Union[str, int],
    method_params: dict,
) -> dict:
    """The assessment's settings as the binding reads them (shared with ``embloom.ray``)."""
    return {
        "methods": [str(m) for m in methods],
        "probes": [str(p) for p in probes],
        "folds": int(folds),
        "repeats": int(repeats),
        "seed": int(seed),
        "target": str(target),
        "classes": None if classes is None else [str(c) for c in classes],
        "unit_norm": unit_norm,
        "knn_k": knn_k,
        "knn_metric": knn_metric,
        "knn_standardize": knn_standardize,
        "linear_l2": linear_l2,
        "linear_max_iter": linear_max_iter,
        "interval": interval,
        "diagnostics": bool(diagnostics),
        "external_budget": str(external_budget),
        "method_params": dict(method_params),
    }


def assess(
    x: Any,
    y: Any,
    *,
    methods: Sequence[str] = ("none", "interpolate", "extrapolate", "principal-noise"),
    probes: Sequence[str] = ("knn", "linear"),
    folds: int = 5,
    repeats: int = 1,
    groups: Optional[Sequence] = None,
    fold: Optional[Sequence[int]] = None,
    seed: int = 0,
    progress: bool = True,
    target: str = "median",
    classes: Optional[Sequence[str]] = None,
    unit_norm: str = "auto",
    knn_k: Optional[int] = None,
    knn_metric: Optional[str] = None,
    knn_standardize: Optional[bool] = None,
    linear_l2: Optional[float] = None,
    linear_max_iter: Optional[int] = None,
    interval: Optional[str] = None,
    diagnostics: bool = True,
    external: Optional[dict] = None,
    external_budget: Union[str, int] = "match",
    **method_params: Any,
) -> Results:
    """Compare ``methods`` against ``none`` on k-NN and linear probes, as ``embloom assess``.

    Stratified k-fold (grouped when ``groups`` is given, the given folds with ``fold``); each
    method is fitted on a fold's real training rows only and probes are scored on real
    held-out rows only. ``progress=True`` draws a bar on stderr. Ctrl-C raises
    KeyboardInterrupt within a fraction of a second; nothing is written.

    ``external`` compares input-space augmentation with the feature-space methods: a dict
    ``{name: (x_e, y_e, parent)}`` of your backbone's embeddings of augmented samples, their
    labels (from the set, not the parent: a transform may change the class) and, per row, the
    row of ``x`` it was made from. Each set is a method called ``name``; in each fold a row is
    used only when its parent is a training row. ``external_budget`` is ``"match"`` (as many
    rows per grown class as the feature-space methods add), ``"all"`` or a count per class.
    A ``methods`` entry joined by ``+`` (``"flips+interpolate"``) trains on the union.

    ``probes`` may also name ``"centroid"`` (nearest class mean under the k-NN metric).
    ``knn_standardize=True`` centres and scales features for the k-NN probe with each fold's
    real training rows, as ``--knn-standardize on``. ``method_params`` are ``grow``'s
    (``k``, ``magnitude``, ..., ``path``, ``borrowed_classes``, ``tukey``) and ``tau``.
    """
    rows = _rows(x)
    labels, names = _labels(y, rows.shape[0])
    sets = [_external_set(name, value, rows.shape[1]) for name, value in (external or {}).items()]
    config = _assess_config(
        methods=methods,
        probes=probes,
        folds=folds,
        repeats=repeats,
        seed=seed,
        target=target,
        classes=classes,
        unit_norm=unit_norm,
        knn_k=knn_k,
        knn_metric=knn_metric,
        knn_standardize=knn_standardize,
        linear_l2=linear_l2,
        linear_max_iter=linear_max_iter,
        interval=interval,
        diagnostics=diagnostics,
        external_budget=external_budget,
        method_params=method_params,
    )
    bar = _Bar() if progress else None
    try:
        inner, notes = _embloom.assess(
            rows,
            labels,
            names,
            config,
            _optional(groups, rows.shape[0]),
            None if fold is None else [int(f) for f in fold],
            bar,
            sets,
        )
    finally:
        if bar is not None:
            bar.finish()
    for note in notes:
        warnings.warn(note, stacklevel=2)
    return Results(inner, notes)


def inspect(
    x: Any,
    y: Any = None,
    *,
    ids: Optional[Sequence] = None,
    groups: Optional[Sequence] = None,
    folds: Optional[Sequence[int]] = None,
    name: str = "(arrays)",
) -> dict:
    """What is in ``x`` (and its labels ``y``): the dict ``embloom inspect --json`` prints.

    Keys: ``file`` (``name``), ``rows``, ``dims``, ``dtype`` (of ``x`` as given: ``"f32"``,
    ``"f64"``, ...), ``classes`` (name and count, largest first), ``imbalance_ratio``, the
    row norms' ``norm_min``/``norm_median``/``norm_max`` and ``unit_norm``,
    ``nonfinite_rows``/``first_nonfinite_row``, ``duplicate_rows``, ``has_ids``/``has_groups``/
    ``has_folds``, ``grown_file`` and ``labelled``. Without ``y`` the rows are described and
    the classes are not (``labelled`` is False). Rows holding NaN/Inf are counted, not refused.
    """
    arr = np.asarray(x)
    dtype = _dtype_name(arr.dtype)
    if arr.ndim != 2:
        raise InputError(f"x has {arr.ndim} dimensions, not 2\n  fix: pass an (n, d) matrix")
    rows = np.ascontiguousarray(arr, dtype=np.float32)
    if y is None:
        labels, names = None, []
    else:
        labels, names = _labels(y, rows.shape[0])
    text = _embloom.inspect(
        rows,
        labels,
        names,
        dtype,
        _optional(ids, rows.shape[0]),
        _optional(groups, rows.shape[0]),
        None if folds is None else [int(f) for f in folds],
        str(name),
    )
    return json.loads(text)


_ScheduleSpec = Union[None, str, tuple]


def _schedule(spec: _ScheduleSpec, what: str) -> tuple:
    """``(kind, start, steps)`` from a schedule spelling (see ``Stream``)."""
    if spec is None or spec == "constant":
        return ("constant", 1.0, [])
    if spec == "linear":
        return ("linear", 0.0, [])
    if isinstance(spec, (tuple, list)) and len(spec) == 2 and spec[0] == "linear":
        return ("linear", float(spec[1]), [])
    if isinstance(spec, (tuple, list)) and len(spec) == 2 and spec[0] == "steps":
        return ("steps", 1.0, [(int(e), float(f)) for e, f in spec[1]])
    raise ParameterError(
        f"{what}: {spec!r} is not a schedule\n"
        '  fix: use "constant", "linear", ("linear", start) or ("steps", [(epoch, factor), ...])'
    )


class Stream:
    """Mini-batches for a training loop: real rows mixed with freshly drawn synthetic rows.

    Each epoch visits every real row once, in a new shuffled order, and every batch adds new
    synthetic rows of the classes ``target`` grows (only those named in ``classes``, when
    given), drawn by ``method`` fitted once on all real rows. The grown set is never held in
    memory. Iterating yields ``(xb, yb, is_synthetic)``: float32 rows, their labels (values of
    ``y``; ``stream.classes`` lists them in index order) and a boolean mask.

    ``synthetic_share`` is the share of each batch that is synthetic; when ``None`` it is
    derived from the target: the share synthetic rows would have in the set ``grow`` writes,
    planned ÷ (real + planned). A full batch holds ``round(share × batch_size)`` synthetic
    rows and the rest real; the last batch of an epoch keeps that proportion.

    ``schedule`` moves the share (a single spelling) or, with a dict
    ``{"share": ..., "magnitude": ...}``, the share and the method's magnitude over epochs,
    as a factor of the value given: ``"constant"``; ``"linear"`` (from 0 at the first epoch to
    the full value at the last) or ``("linear", start)``; ``("steps", [(epoch, factor), ...])``
    (from each epoch on, the value × factor; the full value before the first step).

    A batch is fixed by (seed, epoch, batch index) whatever the number of threads. ``len()``
    is the number of batches over all epochs. ``method_params`` are ``grow``'s (``k``,
    ``magnitude``, ..., ``path``, ``borrowed_classes``, ``tukey``).
    """

    def __init__(
        self,
        x: Any,
        y: Any,
        *,
        method: str = "interpolate",
        target: str = "median",
        classes: Optional[Sequence[str]] = None,
        batch_size: int = 256,
        epochs: int = 1,
        synthetic_share: Optional[float] = None,
        schedule: Union[_ScheduleSpec, dict] = "constant",
        unit_norm: str = "auto",
        seed: int = 0,
        **method_params: Any,
    ) -> None:
        rows = _rows(x)
        labels, names = _labels(y, rows.shape[0])
        self.classes: np.ndarray = np.unique(np.asarray(y))
        if isinstance(schedule, dict):
            unknown = set(schedule) - {"share", "magnitude"}
            if unknown:
                raise ParameterError(
                    f"schedule: unknown key(s) {sorted(unknown)}\n"
                    '  fix: use the keys "share" and "magnitude"'
                )
            share_s = _schedule(schedule.get("share"), "share-schedule")
            magnitude_s = _schedule(schedule.get("magnitude"), "magnitude-schedule")
        else:
            share_s = _schedule(schedule, "share-schedule")
            magnitude_s = _schedule(None, "magnitude-schedule")
        if int(batch_size) < 0 or int(epochs) < 0:
            raise ParameterError(
                "batch-size and epochs must be positive\n  fix: pass e.g. batch_size=256, epochs=10"
            )
        self._inner = _embloom.stream(
            rows,
            labels,
            names,
            method,
            str(target),
            None if classes is None else [str(c) for c in classes],
            int(batch_size),
            int(epochs),
            None if synthetic_share is None else float(synthetic_share),
            share_s,
            magnitude_s,
            unit_norm,
            int(seed),
            method_params,
        )
        self.epochs: int = self._inner.epochs()
        self.notes: list = self._inner.notes()
        for note in self.notes:
            warnings.warn(note, stacklevel=2)

    def __len__(self) -> int:
        return len(self._inner)

    def batches_in(self, epoch: int) -> int:
        """Number of batches in ``epoch`` (0-based)."""
        return self._inner.batches_in(int(epoch))

    def epoch(self, epoch: int) -> Any:
        """The batches of one epoch (0-based), as ``(xb, yb, is_synthetic)``."""
        for i in range(self._inner.batches_in(int(epoch))):
            xb, lb, mask = self._inner.batch(int(epoch), i)
            yield xb, self.classes[lb], mask

    def __iter__(self) -> Any:
        for e in range(self.epochs):
            yield from self.epoch(e)

    def __repr__(self) -> str:
        return f"<embloom.Stream: {self.epochs} epochs, {len(self)} batches>"
