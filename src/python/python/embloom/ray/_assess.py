"""``assess_dataset``: the assessment's (fold, method) steps as Ray tasks.

The rows are gathered once, put in canonical order, and placed in the object store; every
step task reads that one copy, runs one step in the Rust core and returns its part as bytes.
The driver combines the parts into the results ``embloom.assess`` gives for the same rows in
the same order and the same seed.
"""

from __future__ import annotations

from typing import Any, Optional, Sequence, Union

import numpy as np

from .. import Results, _assess_config, _embloom, _labels, _optional, _rows
from .._embloom import InputError
from ._columns import canonical_order, matrix, values
from ._fault import crash_once
from ._progress import bar


def _step(x, labels, names, config, groups, folds, fold, method):
    crash_once()
    return _embloom.assess_step_part(x, labels, names, config, fold, method, groups, folds)


def collect(
    ds: Any,
    label_column: str,
    embedding_column: str,
    id_column: Optional[str],
    group_column: Optional[str],
    fold_column: Optional[str],
) -> dict:
    """Every row of ``ds`` in canonical order: by ``id_column`` (unique ids), else by the
    embedding's values and then the label.

    Returns ``x``, ``y`` and, when asked for, ``ids``, ``groups`` and ``folds``.
    """
    import pyarrow as pa
    import ray

    wanted = [c for c in (label_column, embedding_column, id_column, group_column, fold_column) if c]
    tables = [t for t in ray.get(ds.select_columns(wanted).to_arrow_refs()) if t.num_rows]
    if not tables:
        raise InputError("the dataset has no rows\n  fix: read the shards that hold the rows")
    table = pa.concat_tables(tables)
    x = matrix(table, embedding_column)
    y = values(table, label_column, "label_column")
    ids = values(table, id_column, "id_column") if id_column else None
    if ids is not None:
        order = canonical_order(x, ids)
    else:
        _, codes = np.unique(y, return_inverse=True)
        bits = x.view(np.uint32)
        order = np.lexsort([codes.reshape(-1)] + list(bits.T[::-1]))
    out = {"x": np.ascontiguousarray(x[order]), "y": y[order]}
    if ids is not None:
        out["ids"] = ids[order]
    if group_column:
        out["groups"] = values(table, group_column, "group_column")[order]
    if fold_column:
        out["folds"] = values(table, fold_column, "fold_column")[order]
    return out


def assess_dataset(
    ds: Any,
    *,
    label_column: str,
    embedding_column: str,
    id_column: Optional[str] = None,
    group_column: Optional[str] = None,
    fold_column: Optional[str] = None,
    methods: Sequence[str] = ("none", "interpolate", "extrapolate", "principal-noise"),
    probes: Sequence[str] = ("knn", "linear"),
    folds: int = 5,
    repeats: int = 1,
    seed: int = 0,
    progress: bool = True,
    workers: Optional[int] = None,
    num_cpus: float = 1.0,
    max_retries: int = 3,
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
    **method_params: Any,
) -> Results:
    """Assess ``methods`` on the rows of ``ds`` (a ``ray.data.Dataset``), one Ray task per
    (fold, method) step, with the settings of ``embloom.assess``.

    The rows are taken in canonical order (by ``id_column``, else by embedding values then
    label); ``embloom.assess`` on the rows in that order, with the same settings and seed,
    gives the same results (every figure; only ``elapsed_seconds`` differs). The matrix is put
    in Ray's object store once and read by every step. ``workers`` bounds the steps running at
    once (each asks Ray for ``num_cpus``); ``max_retries`` is how often a step whose worker
    died is run again. ``progress=True`` draws a bar (tqdm's if installed) of steps done.

    The rows must fit in the driver's memory and in each worker's (the probes of a fold are
    fitted on all its training rows). External sets are not taken here: assess them with
    ``embloom.assess(external=...)`` on one machine.
    """
    import ray

    rows = collect(ds, label_column, embedding_column, id_column, group_column, fold_column)
    x = _rows(rows["x"])
    labels, names = _labels(rows["y"], x.shape[0])
    groups = _optional(rows.get("groups"), x.shape[0])
    fold_ids = None if "folds" not in rows else [int(f) for f in rows["folds"]]
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
        external_budget="match",
        method_params=method_params,
    )
    n_folds, method_names = _embloom.assess_plan(x, labels, names, config, groups, fold_ids)
    steps = [(f, m) for f in range(n_folds) for m in range(len(method_names))]
    shared = [ray.put(v) for v in (x, labels, names, config, groups, fold_ids)]
    task = ray.remote(_step).options(max_retries=int(max_retries), num_cpus=float(num_cpus))
    limit = len(steps) if workers is None else max(1, int(workers))
    pending: dict = {}
    parts: dict = {}
    todo = list(steps)
    shown = bar(len(steps), "assess steps", progress)
    try:
        while todo or pending:
            while todo and len(pending) < limit:
                f, m = todo.pop(0)
                pending[task.remote(*shared, f, m)] = (f, m)
            ready, _ = ray.wait(list(pending), num_returns=1)
            for ref in ready:
                parts[pending.pop(ref)] = ray.get(ref)
                shown.update(1)
    except BaseException:
        for ref in pending:
            ray.cancel(ref, force=True)
        raise
    finally:
        shown.close()
    inner, notes = _embloom.assess_combine(
        x, labels, names, config, [parts[s] for s in steps], groups, fold_ids
    )
    import warnings

    for note in notes:
        warnings.warn(note, stacklevel=2)
    return Results(inner, notes)
