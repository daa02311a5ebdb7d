"""``grow_dataset``: grow every class of a Ray Dataset, one Ray task per class.

A counting pass finds the classes, their sizes (for the ``median`` and ``largest`` targets)
and whether every row has unit norm (for ``unit_norm="auto"``). Then the rows are grouped by
label and each class is grown alone by the Rust core, from the random stream the
single-machine ``grow`` gives that class, so the rows are the same bits whatever the number
of shards or workers.
"""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Any, Optional, Sequence, Union

import numpy as np

from .. import _embloom
from .._embloom import InputError, ParameterError
from ._columns import canonical_order, matrix, values
from ._fault import crash_once
from ._output import Staging, write_table_whole

# Methods whose rows of a class depend only on that class's rows: each class can grow alone.
SINGLE_CLASS = ("interpolate", "extrapolate", "principal-noise", "gaussian-noise", "duplicate")

# Methods that read other classes, with what they read. Refused rather than approximated: a
# class task would need every other class's rows (or statistics) broadcast to it.
NEEDS_OTHER_CLASSES = {
    "borderline": "its danger test searches each row's neighbours among all classes",
    "adaptive": "its weights count each row's neighbours of other classes",
    "calibrated": "it borrows means and covariances from the nearest populous classes",
    "mix": "it mixes rows of different classes",
}

MANIFEST = "embloom-grow.json"


def check_method(method: str) -> None:
    """Refuse a method that cannot grow a class from that class's rows alone."""
    why = NEEDS_OTHER_CLASSES.get(method)
    if why is not None:
        raise ParameterError(
            f"{method} cannot grow a class on a Ray cluster: {why}, so a class cannot be grown "
            "from its own rows alone\n"
            f"  fix: grow with one of {', '.join(SINGLE_CLASS)}, or grow this set on one "
            f"machine with embloom.grow(..., method=\"{method}\")"
        )


def _batch_stats(table: Any, label_column: str, embedding_column: str, want_norm: bool) -> Any:
    """Per block: rows per label value, the embedding width, and whether every row is unit-norm."""
    import pyarrow as pa

    labels = values(table, label_column, "label_column")
    x = matrix(table, embedding_column)
    keys, counts = np.unique(labels, return_counts=True) if len(labels) else ([], [])
    unit = bool(_embloom.is_unit_norm(x)) if (want_norm and x.shape[0]) else True
    return pa.table(
        {
            "label": pa.array(list(keys)),
            "count": pa.array(np.asarray(counts, dtype=np.int64)),
            "dims": pa.array([x.shape[1]] * len(keys), type=pa.int64()),
            "unit_norm": pa.array([unit] * len(keys)),
        }
    )


def count_classes(ds: Any, label_column: str, embedding_column: str, want_norm: bool) -> tuple:
    """The counting pass: class values in numpy ``unique`` order (the single-machine module's
    class order), rows per class, the embedding width, and whether every row is unit-norm."""
    stats = ds.map_batches(
        _batch_stats,
        batch_format="pyarrow",
        fn_kwargs={
            "label_column": label_column,
            "embedding_column": embedding_column,
            "want_norm": want_norm,
        },
    ).take_all()
    if not stats:
        raise InputError("the dataset has no rows\n  fix: read the shards that hold the rows")
    totals: dict = {}
    dims = {int(s["dims"]) for s in stats}
    if len(dims) > 1:
        raise InputError(
            f"column '{embedding_column}' holds embeddings of {sorted(dims)} values in "
            "different blocks\n  fix: give every embedding the same length"
        )
    for s in stats:
        totals[s["label"]] = totals.get(s["label"], 0) + int(s["count"])
    keys = np.unique(np.asarray(list(totals)))
    counts = [totals[k] for k in keys.tolist()]
    unit = all(bool(s["unit_norm"]) for s in stats)
    return keys, counts, dims.pop(), unit


def _grow_class(table: Any, *, job: dict) -> Any:
    """One class: order its rows canonically, grow it, write its file, report its counts."""
    import pyarrow as pa

    labels = values(table, job["label_column"], "label_column")
    name = str(labels[0])
    index = job["names"].index(name)
    x = matrix(table, job["embedding_column"])
    id_column = job["id_column"]
    ids = values(table, id_column, "id_column") if id_column else None
    order = canonical_order(x, ids)
    x = np.ascontiguousarray(x[order])
    real = table.take(pa.array(order, type=pa.int64()))
    set_tuple, notes = _embloom.grow_class(
        x,
        index,
        job["names"],
        job["method"],
        job["plan"][index],
        job["seed"],
        job["unit_norm"],
        job["params"],
    )
    # The last member, `partner_label`, is set only for `mix`, which the cluster refuses.
    gx, _labels, _classes, _ids, _groups, _folds, origin, parent, partner, weight, _plabel = set_tuple
    n_real, n_syn = x.shape[0], gx.shape[0] - x.shape[0]
    label_type = real.column(job["label_column"]).type
    columns = {
        job["label_column"]: pa.concat_arrays(
            [
                real.column(job["label_column"]).combine_chunks(),
                pa.array([labels[0]] * n_syn, type=label_type),
            ]
        ),
        job["embedding_column"]: pa.FixedSizeListArray.from_arrays(
            pa.array(gx.reshape(-1), type=pa.float32()), gx.shape[1]
        ),
    }
    parent = np.asarray(parent, dtype=np.int64)
    partner = np.asarray(partner, dtype=np.int64)
    if id_column:
        id_values = real.column(id_column).combine_chunks()
        id_type = id_values.type
        columns[id_column] = pa.concat_arrays([id_values, pa.nulls(n_syn, type=id_type)])
        # Indices of this class's rows become the rows' ids (-1, no partner, becomes null).
        columns["parent"] = id_values.take(pa.array(parent, type=pa.int64()))
        columns["partner"] = id_values.take(
            pa.array(partner, type=pa.int64(), mask=partner < 0)
        )
    else:
        columns["parent"] = pa.array(parent, type=pa.int64())
        columns["partner"] = pa.array(partner, type=pa.int64())
    columns["origin"] = pa.array(list(origin), type=pa.string())
    columns["weight"] = pa.array(np.asarray(weight, dtype=np.float32), type=pa.float32())
    out = pa.table(columns)
    crash_once()
    write_table_whole(out, Path(job["tmp"]) / f"class-{index:06d}.parquet")
    return pa.table(
        {
            "class": [name],
            "index": [index],
            "real": [n_real],
            "synthetic": [n_syn],
            "notes": [json.dumps(list(notes))],
        }
    )


def grow_dataset(
    ds: Any,
    *,
    label_column: str,
    embedding_column: str,
    output: Union[str, os.PathLike],
    method: str = "interpolate",
    target: str = "median",
    classes: Optional[Sequence[str]] = None,
    seed: int = 0,
    unit_norm: str = "auto",
    id_column: Optional[str] = None,
    workers: Optional[int] = None,
    num_cpus: float = 1.0,
    max_retries: int = 3,
    force: bool = False,
    **method_params: Any,
) -> dict:
    """Grow the classes of ``ds`` (a ``ray.data.Dataset``) and write ``output``, a folder of
    Parquet files, one per class (``class-000003.parquet`` for class index 3, in the
    single-machine module's class order), each with the class's real rows then its
    synthetic rows.

    Columns: the label, the embedding (fixed-size list of float32), with ``id_column`` the
    id (empty for synthetic rows), then ``parent``, ``partner``, ``origin`` and ``weight`` as
    ``embloom.grow`` gives them. With ``id_column``, ``parent`` and ``partner`` hold input
    rows' ids, so every row joins back to the input whatever the sharding; without it they
    are rows of the class's file.

    Within a class the rows are ordered by ``id_column`` (ids must be unique within a class),
    or without it by the embedding's values. ``embloom.grow`` on the whole set in that order
    (rows by id) gives the same bits: the same synthetic rows, parents and partners.

    ``target`` and ``classes`` are as in ``embloom.grow``; the counts that ``median`` and
    ``largest`` need come from a first counting pass. ``workers`` bounds the class tasks
    running at once (each asks Ray for ``num_cpus``); ``max_retries`` is how often a task
    whose worker died is run again. The folder appears whole at the end, or not at all.

    Returns a dict with ``output``, ``classes`` (name, real and synthetic rows per class),
    ``unit_norm`` (as resolved) and ``notes`` (what the fits clamped or skipped).
    """
    check_method(method)
    if unit_norm not in ("auto", "on", "off"):
        raise ParameterError(f"unit-norm: '{unit_norm}' is not a choice\n  fix: use auto, on or off")
    staging = Staging(output, force)
    try:
        keys, counts, _dims, all_unit = count_classes(
            ds, label_column, embedding_column, unit_norm == "auto"
        )
        names = [str(k) for k in keys.tolist()]
        only = None
        if classes is not None:
            missing = [c for c in classes if str(c) not in names]
            if missing:
                raise ParameterError(
                    f"classes: {', '.join(map(str, missing))} not in the data\n"
                    f"  fix: name classes that occur in '{label_column}'"
                )
            only = [names.index(str(c)) for c in classes]
        plan = _embloom.plan(counts, str(target), only)
        resolved = unit_norm if unit_norm != "auto" else ("on" if all_unit else "off")
        job = {
            "label_column": label_column,
            "embedding_column": embedding_column,
            "id_column": id_column,
            "names": names,
            "plan": plan,
            "method": method,
            "seed": int(seed),
            "unit_norm": resolved,
            "params": dict(method_params),
            "tmp": str(staging.tmp),
        }
        import ray.data

        remote_args: dict = {"max_retries": int(max_retries), "num_cpus": float(num_cpus)}
        if workers is not None:
            remote_args["compute"] = ray.data.TaskPoolStrategy(size=int(workers))
        # One hash partition per class, up to Ray Data's usual parallelism: more would only
        # add empty shuffle tasks, since a class is grown whole by one task anyway.
        partitions = max(1, min(len(names), ray.data.DataContext.get_current().min_parallelism))
        done = (
            ds.groupby(label_column, num_partitions=partitions)
            .map_groups(_grow_class, batch_format="pyarrow", fn_kwargs={"job": job}, **remote_args)
            .take_all()
        )
        per_class = sorted(
            (
                {
                    "class": r["class"],
                    "index": int(r["index"]),
                    "real": int(r["real"]),
                    "synthetic": int(r["synthetic"]),
                }
                for r in done
            ),
            key=lambda r: r["index"],
        )
        notes = sorted({n for r in done for n in json.loads(r["notes"])})
        if [r["index"] for r in per_class] != list(range(len(names))):
            raise InputError(
                f"{len(per_class)} of {len(names)} classes came back from the class tasks\n"
                "  fix: rerun; if it persists, report it with the Ray version"
            )
        summary = {
            "method": method,
            "target": str(target),
            "seed": int(seed),
            "unit_norm": resolved == "on",
            "label_column": label_column,
            "embedding_column": embedding_column,
            "id_column": id_column,
            "row_order": f"by {id_column}" if id_column else "by embedding values",
            "classes": per_class,
            "notes": notes,
        }
        (staging.tmp / MANIFEST).write_text(json.dumps(summary, indent=2) + "\n")
        summary["output"] = str(staging.publish())
        return summary
    except BaseException:
        staging.discard()
        raise
