"""Writes the dtype round-trip inputs under tests/fixtures/io/dtypes/ with numpy, h5py and
safetensors: the same 10 x 3 matrix stored as float64 and as float16 in every binary format.

  X[i, j] = (i + 1) / 3 + (j + 1) / 7   (float64; not exact in float32, so an f32 detour shows)
  row 2 holds NaN and row 6 +inf         (for --drop-nonfinite)
  labels  = LABELS below (class 1 is the rare one)
  group   = 20 + i // 2 (int64), id = 1000 + i (int32)
The .npz and .safetensors f16 files use the older key names `groups`/`ids`, which embloom
still reads. tests/reference/io_check_dtypes.py checks what `embloom grow` writes from them.
Run: python3 tests/reference/io_make_dtypes.py
"""
import os

import h5py
import numpy as np
from safetensors.numpy import save_file

OUT = os.path.join(os.path.dirname(__file__), "..", "fixtures", "io", "dtypes")
os.makedirs(OUT, exist_ok=True)

N, D = 10, 3
X = (np.arange(N)[:, None] + 1) / 3 + (np.arange(D)[None, :] + 1) / 7
X[2, 1] = np.nan
X[6, 0] = np.inf
LABELS = np.array([0, 1, 0, 0, 1, 0, 1, 0, 0, 1], dtype=np.int64)
GROUP = (20 + np.arange(N) // 2).astype(np.int64)
ID = (1000 + np.arange(N)).astype(np.int32)


def p(name):
    return os.path.join(OUT, name)


np.save(p("labels.npy"), LABELS)
for name, dtype in [("f64", np.float64), ("f16", np.float16)]:
    x = X.astype(dtype)
    np.save(p(f"x_{name}.npy"), x)
    old = name == "f16"
    roles = {"groups": GROUP, "ids": ID} if old else {"group": GROUP, "id": ID}
    np.savez(p(f"set_{name}.npz"), embeddings=x, labels=LABELS, **roles)
    save_file({"embeddings": x, "labels": LABELS, **roles}, p(f"set_{name}.safetensors"))
    with h5py.File(p(f"set_{name}.h5"), "w", track_order=True) as f:
        f.create_dataset("embeddings", data=x)
        f.create_dataset("labels", data=LABELS)
        f.create_dataset("group", data=GROUP)
        f.create_dataset("id", data=ID)
