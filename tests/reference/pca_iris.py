"""Reference PCA results for tests/pca_iris.rs, computed with numpy's SVD.

Writes, under tests/fixtures/pca/:
  iris.csv        the 150 x 4 iris features bundled with scikit-learn (no header)
  iris.json       PCA of all 150 rows (n > d: exercises the covariance path)
  wide.csv        20 x 50 standard-normal rows, numpy default_rng(20240611)
  wide.json       PCA of those rows (n < d: exercises the Gram path)

JSON: components (one unit row per direction, by decreasing variance), explained_variance
(n - 1 denominator) and explained_variance_ratio, keeping min(n - 1, d) directions.
Deterministic: re-running rewrites identical files.
"""

import json
import pathlib

import numpy as np
from sklearn.datasets import load_iris

OUT = pathlib.Path(__file__).resolve().parent.parent / "fixtures" / "pca"


def pca_svd(x):
    n, d = x.shape
    c = x - x.mean(axis=0)
    _, s, vt = np.linalg.svd(c, full_matrices=False)
    var = s**2 / (n - 1)
    total = var.sum()
    keep = min(n - 1, d)
    return {
        "components": vt[:keep].tolist(),
        "explained_variance": var[:keep].tolist(),
        "explained_variance_ratio": (var[:keep] / total).tolist(),
    }


def write(name, x):
    # Values written with repr precision of float32 so Rust's f32 parse sees the same numbers
    # numpy used (the PCA is computed on the float32 values, promoted to float64).
    x32 = x.astype(np.float32)
    with open(OUT / f"{name}.csv", "w") as f:
        for row in x32:
            f.write(",".join(repr(float(v)) for v in row) + "\n")
    with open(OUT / f"{name}.json", "w") as f:
        json.dump(pca_svd(x32.astype(np.float64)), f, indent=1)
        f.write("\n")


def main():
    OUT.mkdir(parents=True, exist_ok=True)
    write("iris", load_iris().data)
    rng = np.random.default_rng(20240611)
    write("wide", rng.standard_normal((20, 50)))


if __name__ == "__main__":
    main()
