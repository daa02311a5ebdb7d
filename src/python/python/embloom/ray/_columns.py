"""Rows, labels and ids out of Arrow tables as Ray Data hands them to a task."""

from __future__ import annotations

from typing import Any, Optional

import numpy as np

from .._embloom import InputError


def matrix(table: Any, column: str) -> np.ndarray:
    """The embedding column as a C-contiguous ``(n, d)`` float32 matrix.

    Each value is a list of numbers (Arrow list, large list or fixed-size list); all rows
    must have the same length. Values are cast to float32, as the single-machine module does.
    """
    import pyarrow as pa
    import pyarrow.compute as pc

    if column not in table.column_names:
        raise InputError(
            f"the data has no column '{column}' (columns: {', '.join(table.column_names)})\n"
            "  fix: pass embedding_column= the column holding each row's embedding"
        )
    col = table.column(column).combine_chunks()
    n = len(col)
    if n == 0:
        return np.zeros((0, 0), dtype=np.float32)
    if not (
        pa.types.is_list(col.type)
        or pa.types.is_large_list(col.type)
        or pa.types.is_fixed_size_list(col.type)
    ):
        raise InputError(
            f"column '{column}' holds {col.type}, not a list of numbers per row\n"
            "  fix: store each embedding as a list (or fixed-size list) of floats"
        )
    if col.null_count:
        first = int(np.flatnonzero(col.is_null().to_numpy(zero_copy_only=False))[0])
        raise InputError(
            f"column '{column}' is empty (null) in row {first} of a block\n"
            "  fix: drop rows without an embedding before growing"
        )
    lengths = pc.list_value_length(col).to_numpy(zero_copy_only=False)
    d = int(lengths[0])
    if (lengths != d).any():
        bad = int(np.flatnonzero(lengths != d)[0])
        raise InputError(
            f"column '{column}': row {bad} of a block has {int(lengths[bad])} values, "
            f"the first row {d}\n  fix: give every embedding the same length"
        )
    values = pc.list_flatten(col).to_numpy(zero_copy_only=False)
    return np.ascontiguousarray(values.astype(np.float32, copy=False).reshape(n, d))


def values(table: Any, column: str, what: str) -> np.ndarray:
    """A scalar column (labels or ids) as a numpy array, refusing nulls."""
    if column not in table.column_names:
        raise InputError(
            f"the data has no column '{column}' (columns: {', '.join(table.column_names)})\n"
            f"  fix: pass {what}= the column that holds them"
        )
    col = table.column(column)
    if col.null_count:
        raise InputError(
            f"column '{column}' has {col.null_count} empty (null) values\n"
            f"  fix: give every row a value in '{column}'"
        )
    return np.asarray(col.to_numpy(zero_copy_only=False))


def canonical_order(x: np.ndarray, ids: Optional[np.ndarray]) -> np.ndarray:
    """The order of a class's rows that no sharding can change: by id when there are ids,
    else by the embedding's values (rows with equal values are interchangeable)."""
    if ids is not None:
        order = np.argsort(ids, kind="stable")
        sorted_ids = ids[order]
        if len(sorted_ids) > 1:
            same = sorted_ids[1:] == sorted_ids[:-1]
            if np.any(same):
                dup = sorted_ids[1:][same][0]
                raise InputError(
                    f"id {dup!r} is on more than one row of a class\n"
                    "  fix: give every row its own id, so parents join back to one row"
                )
        return order
    if x.shape[0] == 0:
        return np.arange(0)
    # Bit patterns, so -0.0 and 0.0 (and NaN payloads) are told apart and the order is total.
    bits = x.view(np.uint32)
    return np.lexsort(bits.T[::-1])
