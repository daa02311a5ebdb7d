"""Reference for `borderline` and `adaptive`: numpy transcriptions of the papers' rules.

Borderline-SMOTE1 (Han, Wang & Mao 2005, section 3.1, steps 1-3): for every row p_i of the
minority class, find its m nearest neighbours in the whole training set (the row itself
excluded); m' of them belong to other classes. p_i is in DANGER when m/2 <= m' < m (m' = m is
noise, m' < m/2 safe).

ADASYN (He, Bai, Garcia & Li 2008, section 3.1, steps (a)-(d)): G synthetic rows are to be
made for the class; for every row x_i of the class, r_i = Delta_i / K with Delta_i the rows of
other classes among its K nearest neighbours in the whole training set; r_i is normalised,
r^_i = r_i / sum_j r_j, and row i's share is g_i = r^_i * G.

Data: scikit-learn's bundled wine set (178 rows, 13 features, 3 classes), standardised per
column (mean 0, population standard deviation 1) and rounded to float32, the type embloom
computes in; euclidean distance, computed in float64 from the float32 values. A row whose
m-th and (m+1)-th nearest other rows are within a relative 1e-4 of each other has a
neighbour set that rounding could change; such rows are listed in `fragile` so the tests can
leave them out.

Writes tests/fixtures/augment/borderline_adaptive.json.
"""

import json
import pathlib

import numpy as np
import sklearn
from sklearn.datasets import load_wine

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "fixtures" / "augment"
DANGER_M = (10, 6)
ADASYN_K = (5, 3)
ADASYN_G = 50
FRAGILE_RTOL = 1e-4


def neighbours(x, i, m):
    """The m nearest other rows of row i (ascending distance, ties by index), and whether the
    m-th and (m+1)-th distances are too close to call."""
    d = np.sqrt(((x - x[i]) ** 2).sum(axis=1))
    d[i] = np.inf
    order = np.lexsort((np.arange(len(d)), d))
    near = order[:m]
    fragile = bool(
        m < len(d) - 1 and abs(d[order[m]] - d[order[m - 1]]) <= FRAGILE_RTOL * d[order[m - 1]]
    )
    return near, fragile


def main():
    wine = load_wine()
    x = wine.data
    x = ((x - x.mean(axis=0)) / x.std(axis=0)).astype(np.float32)
    y = wine.target.astype(np.int64)
    x64 = x.astype(np.float64)
    n_classes = int(y.max()) + 1
    borderline = []
    for m in DANGER_M:
        for c in range(n_classes):
            rows = np.flatnonzero(y == c)
            danger, others_all, fragile = [], [], []
            for i in rows:
                near, frag = neighbours(x64, i, m)
                others = int((y[near] != c).sum())
                others_all.append(others)
                if frag:
                    fragile.append(int(i))
                if m / 2 <= others < m:
                    danger.append(int(i))
            borderline.append({
                "m": m,
                "class": c,
                "rows": [int(i) for i in rows],
                "other_class_counts": others_all,
                "danger": danger,
                "fragile": fragile,
            })
    adaptive = []
    for k in ADASYN_K:
        for c in range(n_classes):
            rows = np.flatnonzero(y == c)
            r, fragile = [], []
            for i in rows:
                near, frag = neighbours(x64, i, k)
                r.append((y[near] != c).sum() / k)
                if frag:
                    fragile.append(int(i))
            r = np.asarray(r, dtype=np.float64)
            total = r.sum()
            # No row near another class: the shares are undefined (0/0), written as null.
            g = [float(v) for v in r / total * ADASYN_G] if total > 0 else None
            adaptive.append({
                "k": k,
                "class": c,
                "g_total": ADASYN_G,
                "rows": [int(i) for i in rows],
                "r": [float(v) for v in r],
                "g": g,
                "fragile": fragile,
            })
    out = {
        "source": "numpy transcriptions of Borderline-SMOTE1 (Han, Wang & Mao 2005, steps 1-3) "
                  "and ADASYN (He, Bai, Garcia & Li 2008, steps (a)-(d)) on load_wine(), "
                  "standardised, as float32; euclidean",
        "sklearn_version": sklearn.__version__,
        "numpy_version": np.__version__,
        "x": [[float(v) for v in row] for row in x],
        "y": [int(v) for v in y],
        "classes": n_classes,
        "borderline": borderline,
        "adaptive": adaptive,
    }
    OUT.mkdir(parents=True, exist_ok=True)
    with open(OUT / "borderline_adaptive.json", "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
