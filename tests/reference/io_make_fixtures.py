"""Writes the small input fixtures under tests/fixtures/io/ with numpy, h5py and safetensors.

Values are deterministic (np.arange based), so the Rust tests recompute them exactly:
  X[i, j] = i * 0.5 + j * 0.25 - 1      (6 x 4; every value exact in f16/f32/f64)
  labels  = [3, 1, 3, 2, 1, 3]           (ints) or ["cat", "dog", "cat", "émeu", "dog", "cat"]
  groups  = ["g0", "g0", "g1", "g1", "g2", "g2"], ids = [100..105], fold = [0, 1, 0, 1, 0, 1]
Run: python3 tests/reference/io_make_fixtures.py
"""
import os

import h5py
import numpy as np
from safetensors.numpy import save_file

OUT = os.path.join(os.path.dirname(__file__), "..", "fixtures", "io")
os.makedirs(OUT, exist_ok=True)


def p(name):
    return os.path.join(OUT, name)


X = (np.arange(6)[:, None] * 0.5 + np.arange(4)[None, :] * 0.25 - 1).astype(np.float64)
LABELS = np.array([3, 1, 3, 2, 1, 3], dtype=np.int64)
TEXT = np.array(["cat", "dog", "cat", "émeu", "dog", "cat"])
GROUPS = np.array(["g0", "g0", "g1", "g1", "g2", "g2"])
IDS = np.arange(100, 106, dtype=np.int32)
FOLD = np.array([0, 1, 0, 1, 0, 1], dtype=np.int8)

np.save(p("x_f16.npy"), X.astype(np.float16))
np.save(p("x_f32.npy"), X.astype(np.float32))
np.save(p("x_f64.npy"), X)
np.save(p("x_f32_be.npy"), X.astype(">f4"))
np.save(p("x_f64_fortran.npy"), np.asfortranarray(X))
np.save(p("labels_i16.npy"), LABELS.astype(np.int16))
np.save(p("labels_u16_be.npy"), LABELS.astype(">u2"))
np.save(p("labels_f64.npy"), LABELS.astype(np.float64))
np.save(p("labels_text.npy"), TEXT)
np.save(p("labels_bytes.npy"), np.array([s.encode("utf-8") for s in TEXT]))
np.save(p("x_int.npy"), np.arange(24, dtype=np.int32).reshape(6, 4))
np.save(p("x_3d.npy"), np.zeros((2, 3, 4), dtype=np.float32))
np.save(p("labels_object.npy"), np.array(["a", 1], dtype=object), allow_pickle=True)

np.savez(p("set_stored.npz"), embeddings=X.astype(np.float32), labels=TEXT, groups=GROUPS, ids=IDS, fold=FOLD)
np.savez_compressed(p("set_deflated.npz"), embeddings=X.astype(np.float32), labels=LABELS, groups=GROUPS, ids=IDS, fold=FOLD)
np.savez(p("set_object.npz"), embeddings=X.astype(np.float32), labels=np.array(["a", None] * 3, dtype=object))

with h5py.File(p("set.h5"), "w") as f:
    f.create_dataset("feats/emb", data=X.astype(np.float32), chunks=(2, 4), compression="gzip", compression_opts=4)
    f.create_dataset("meta/labels", data=list(TEXT), dtype=h5py.string_dtype("utf-8"), chunks=(3,), compression="gzip")
    f.create_dataset("meta/labels_fixed", data=np.array([s.encode("utf-8") for s in TEXT]))
    f.create_dataset("meta/labels_int", data=LABELS.astype(np.int32))
    f.create_dataset("groups", data=list(GROUPS), dtype=h5py.string_dtype("utf-8"))
    f.create_dataset("fold", data=FOLD)

save_file(
    {"embeddings": X.astype(np.float16), "labels": LABELS.astype(np.int32), "groups": np.array([7, 7, 8, 8, 9, 9], dtype=np.int64)},
    p("set_f16.safetensors"),
)
save_file({"emb": X.astype(np.float32), "y": LABELS.astype(np.float32)}, p("set_f32.safetensors"))

with open(p("table.csv"), "w", encoding="utf-8", newline="") as f:
    f.write("\ufeffid,a,b,label,c,d,group,fold\r\n")
    for i in range(6):
        a, b, c, d = X[i]
        lab = TEXT[i] if i != 1 else 'dog, "the good one"'
        lab = '"' + lab.replace('"', '""') + '"' if "," in lab else lab
        f.write(f"{IDS[i]},{float(a)!r},{float(b)!r},{lab},{float(c)!r},{float(d)!r},{GROUPS[i]},{FOLD[i]}\r\n")
with open(p("table.tsv"), "w", encoding="utf-8") as f:
    f.write("label\tx0\tx1\tx2\tx3\n")
    for i in range(6):
        f.write(TEXT[i] + "\t" + "\t".join(repr(float(v)) for v in X[i]) + "\n")
