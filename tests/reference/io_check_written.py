"""Checks files embloom wrote, reading them with numpy / csv / safetensors / h5py.

Usage: python3 io_check_written.py FILE...   (names start with 'text_' or 'int_'; see SETS)
Exits non-zero with a message on the first mismatch. The expected sets mirror
tests/library/io_roundtrip.rs (`text_set`, `int_set`): x[i, j] = f32(3 i + j) / f32(7) - f32(1).
Role keys are `id` and `group` in every format; integer ids and groups stay int64.
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
    "text": dict(id=["r0", "r1", "r2", "r3", "r4"], labels=["cat", 'dog, "x"', "cat", "cat", 'dog, "x"'],
                 group=["a", "a", "b", "b", "c"], fold=[0, 1, 0, 1, 0], source_row=[0, 1, 2, 3, 4], **PROV),
    "int": dict(id=[10, 11, 12, -1, -1], labels=[7, -2, 7, 7, -2], group=[5, 5, 6, -1, -1],
                source_row=[4, 6, 9, 4, 6], **PROV),
}
# Columns that must be stored as int64 in the binary formats, per set.
INTS = {"text": ["fold", "source_row", "parent", "partner"], "int": ["id", "labels", "group", "source_row", "parent", "partner"]}
LEAD = ["id", "labels", "group", "fold", "source_row"]
TABLE = {"labels": "label"}


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


def check_ints(path, ints, dtype_of):
    for k in ints:
        if dtype_of(k) != np.int64:
            fail(path, f"{k} should be stored as int64, got {dtype_of(k)}")


def check_npz(path, exp, ints):
    with np.load(path, allow_pickle=False) as z:
        if z["embeddings"].dtype != np.float32 or not np.array_equal(z["embeddings"], X):
            fail(path, "embeddings differ")
        check_ints(path, ints, lambda k: z[k].dtype)
        check_columns(path, exp, lambda k: z[k].tolist())


def check_table(path, exp, sep):
    with open(path, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f, delimiter=sep))
    head = rows[0]
    lead = [TABLE.get(k, k) for k in LEAD if k in exp]
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
        if isinstance(exp[k][0], int):
            return [int(v) for v in vals]
        return vals

    check_columns(path, exp, col)


def check_safetensors(path, exp, ints):
    from safetensors import safe_open

    with safe_open(path, framework="np") as f:
        meta = f.metadata() or {}
        t = {k: f.get_tensor(k) for k in f.keys()}
    if t["embeddings"].dtype != np.float32 or not np.array_equal(t["embeddings"], X):
        fail(path, "embeddings differ")
    # Integers are stored as themselves, not as codes into a name table.
    check_ints(path, ints, lambda k: t[k].dtype if f"{k}.names" not in meta else "codes")

    def col(k):
        v = t[k].tolist()
        names = meta.get(f"{k}.names")
        return [json.loads(names)[c] for c in v] if names else v

    check_columns(path, exp, col)


def check_h5(path, exp, ints):
    import h5py

    with h5py.File(path, "r") as f:
        if f["embeddings"].dtype != np.float32 or not np.array_equal(f["embeddings"][()], X):
            fail(path, "embeddings differ")
        check_ints(path, ints, lambda k: f[k].dtype)

        def col(k):
            v = f[k][()]
            return [s.decode("utf-8") for s in v] if v.dtype.kind == "O" else v.tolist()

        check_columns(path, exp, col)


def main():
    for path in sys.argv[1:]:
        name = os.path.basename(path)
        which = name.split("_")[0]
        exp, ints = SETS[which], INTS[which]
        ext = name.rsplit(".", 1)[1]
        {"npz": check_npz, "csv": lambda p, e, i: check_table(p, e, ","), "tsv": lambda p, e, i: check_table(p, e, "\t"),
         "safetensors": check_safetensors, "h5": check_h5}[ext](path, exp, ints)
        print(f"ok {path}")


if __name__ == "__main__":
    main()
