"""Checks a file `embloom grow --drop-nonfinite` wrote from one of the inputs
io_make_dtypes.py writes, reading both with numpy / safetensors / h5py.

Usage: python3 io_check_dtypes.py INPUT OUTPUT [INPUT OUTPUT ...]
(for a .npy INPUT the labels are tests/fixtures/io/dtypes/labels.npy)
Checks: the embeddings keep the input's dtype; the real rows (the input's finite rows, in
order) are bit-identical; `source_row` is each real row's index in the input and each
synthetic row's parent's; `id` and `group` (never `ids`/`groups`) keep their integer type,
synthetic rows holding -1. Exits non-zero with a message on the first mismatch.
"""
import json
import os
import sys

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
LABELS = os.path.join(HERE, "..", "fixtures", "io", "dtypes", "labels.npy")


def fail(path, msg):
    sys.exit(f"{path}: {msg}")


def load(path):
    """Every array of the file, text columns decoded, as a dict of numpy arrays."""
    ext = path.rsplit(".", 1)[1]
    if ext == "npy":
        return {"embeddings": np.load(path), "labels": np.load(LABELS)}
    if ext == "npz":
        with np.load(path, allow_pickle=False) as z:
            return {k: z[k] for k in z.files}
    if ext == "safetensors":
        from safetensors import safe_open

        with safe_open(path, framework="np") as f:
            meta = f.metadata() or {}
            out = {k: f.get_tensor(k) for k in f.keys()}
        for k in list(out):
            if f"{k}.names" in meta:
                out[k] = np.array(json.loads(meta[f"{k}.names"]))[out[k]]
        return out
    if ext == "h5":
        import h5py

        with h5py.File(path, "r") as f:
            out = {k: f[k][()] for k in f.keys()}
        return {k: np.array([s.decode() for s in v]) if v.dtype.kind == "O" else v for k, v in out.items()}
    fail(path, f"unknown extension .{ext}")


def bits(a):
    return a.view({2: np.uint16, 4: np.uint32, 8: np.uint64}[a.dtype.itemsize])


def check(inp, outp):
    a, b = load(inp), load(outp)
    x, y = a["embeddings"], b["embeddings"]
    if y.dtype != x.dtype:
        fail(outp, f"embeddings are {y.dtype}, the input's are {x.dtype}")
    finite = np.isfinite(x).all(axis=1)
    kept = np.flatnonzero(finite)
    n_real = len(kept)
    origin = b["origin"]
    if list(origin[:n_real]) != ["real"] * n_real or "real" in set(origin[n_real:]):
        fail(outp, f"origin {list(origin)}: want {n_real} real rows first")
    if not np.array_equal(bits(y[:n_real]), bits(x[kept])):
        fail(outp, "real rows are not bit-identical to the input's finite rows")
    if len(y) == n_real:
        fail(outp, "no synthetic rows were written")
    source = b["source_row"]
    if source.dtype != np.int64:
        fail(outp, f"source_row is {source.dtype}, want int64")
    if not np.array_equal(source[:n_real], kept):
        fail(outp, f"source_row of real rows {source[:n_real].tolist()}, want {kept.tolist()}")
    parent = b["parent"][n_real:]
    if not np.array_equal(source[n_real:], kept[parent]):
        fail(outp, f"source_row of synthetic rows {source[n_real:].tolist()}, want {kept[parent].tolist()}")
    for old in ("ids", "groups"):
        if old in b:
            fail(outp, f"key '{old}' written; embloom writes 'id' and 'group'")
    for role, older in (("id", "ids"), ("group", "groups")):
        want = a[role] if role in a else a.get(older)
        if want is None:
            continue
        got = b[role]
        if got.dtype != np.int64:
            fail(outp, f"{role} is {got.dtype}, want int64 (the input's are integers)")
        if not np.array_equal(got[:n_real], want[kept]) or not (got[n_real:] == -1).all():
            fail(outp, f"{role} {got.tolist()}: want the input's for real rows, -1 for synthetic")
    if not np.array_equal(b["labels"][:n_real], a["labels"][kept]):
        fail(outp, "labels of real rows differ")


def main():
    args = sys.argv[1:]
    if len(args) % 2:
        sys.exit("usage: io_check_dtypes.py INPUT OUTPUT [INPUT OUTPUT ...]")
    for inp, outp in zip(args[::2], args[1::2]):
        check(inp, outp)
        print(f"ok {outp}")


if __name__ == "__main__":
    main()
