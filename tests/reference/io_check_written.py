"""Checks files embloom wrote, reading them with numpy / csv / safetensors / h5py.

Usage: python3 io_check_written.py FILE...   (names start with 'text_' or 'int_'; see SETS)
Exits non-zero with a message on the first mismatch. The expected sets mirror
tests/io_roundtrip.rs (`text_set`, `int_set`): x[i, j] = f32(3 i + j) / f32(7) - f32(1).
"""
import csv
import json
import os
import sys

import numpy as np

N, D = 5, 3
X = np.array([[np.float32(3 * i + j) / np.float32(7) - np.float32(1) for j in range(D)] for i in range(N)], dtype=np.float32)
PROV = {
    "origin": ["real", "real", "real", "interpolate", "interpolate"],
    "parent": [0, 1, 2, 0, 1],
    "partner": [-1, -1, -1, 2, 4],
    "weight": np.array([0, 0, 0, 0.25, 0.1], dtype=np.float32),
}
SETS = {
    "text": dict(labels=["cat", 'dog, "x"', "cat", "cat", 'dog, "x"'], ids=["r0", "r1", "r2", "r3", "r4"],
                 groups=["a", "a", "b", "b", "c"], fold=[0, 1, 0, 1, 0], **PROV),
    "int": dict(labels=[7, -2, 7, 7, -2], **PROV),
}
TABLE = {"ids": "id", "labels": "label", "groups": "group", "fold": "fold"}


def fail(path, msg):
    sys.exit(f"{path}: {msg}")


def same(path, key, got, want):
    got, want = list(got), list(want)
    if got != want:
        fail(path, f"{key}: got {got!r}, want {want!r}")


def check_columns(path, exp, get):
    for key, want in exp.items():
        got = get(key)
        if key == "weight":
            same(path, key, np.asarray(got, dtype=np.float32).view(np.uint32), want.view(np.uint32))
        else:
            same(path, key, got, want)


def check_npz(path, exp):
    with np.load(path, allow_pickle=False) as z:
        if z["embeddings"].dtype != np.float32 or not np.array_equal(z["embeddings"], X):
            fail(path, "embeddings differ")
        if isinstance(exp["labels"][0], int) and z["labels"].dtype != np.int64:
            fail(path, f"integer class names should be stored as int64, got {z['labels'].dtype}")
        check_columns(path, exp, lambda k: z[k].tolist())


def check_table(path, exp, sep):
    with open(path, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f, delimiter=sep))
    head = rows[0]
    lead = [TABLE[k] for k in ["ids", "labels", "groups", "fold"] if k in exp]
    want_head = lead + [f"f{j}" for j in range(D)] + ["origin", "parent", "partner", "weight"]
    same(path, "header", head, want_head)
    body = rows[1:]
    if len(body) != N:
        fail(path, f"{len(body)} rows, want {N}")
    feats = np.array([[np.float32(r[head.index(f"f{j}")]) for j in range(D)] for r in body], dtype=np.float32)
    if not np.array_equal(feats.view(np.uint32), X.view(np.uint32)):
        fail(path, "features do not read back bit for bit")

    def col(k):
        vals = [r[head.index(TABLE.get(k, k))] for r in body]
        if k in ("parent", "partner", "fold") or (k == "labels" and isinstance(exp["labels"][0], int)):
            return [int(v) for v in vals]
        return vals

    check_columns(path, exp, col)


def check_safetensors(path, exp):
    from safetensors import safe_open

    with safe_open(path, framework="np") as f:
        meta = f.metadata() or {}
        t = {k: f.get_tensor(k) for k in f.keys()}
    if t["embeddings"].dtype != np.float32 or not np.array_equal(t["embeddings"], X):
        fail(path, "embeddings differ")

    def col(k):
        v = t[k].tolist()
        names = meta.get(f"{k}.names")
        return [json.loads(names)[c] for c in v] if names else v

    check_columns(path, exp, col)


def check_h5(path, exp):
    import h5py

    with h5py.File(path, "r") as f:
        if f["embeddings"].dtype != np.float32 or not np.array_equal(f["embeddings"][()], X):
            fail(path, "embeddings differ")

        def col(k):
            v = f[k][()]
            return [s.decode("utf-8") for s in v] if v.dtype.kind == "O" else v.tolist()

        check_columns(path, exp, col)


def main():
    for path in sys.argv[1:]:
        name = os.path.basename(path)
        exp = SETS[name.split("_")[0]]
        ext = name.rsplit(".", 1)[1]
        {"npz": check_npz, "csv": lambda p, e: check_table(p, e, ","), "tsv": lambda p, e: check_table(p, e, "\t"),
         "safetensors": check_safetensors, "h5": check_h5}[ext](path, exp)
        print(f"ok {path}")


if __name__ == "__main__":
    main()
