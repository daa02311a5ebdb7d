"""Reference k-NN predictions with standardised features, from scikit-learn.

scikit-learn's wine data (178 rows, 13 features whose scales differ by three orders of
magnitude: proline is in the hundreds to thousands, hue below 2). Fixed split: rows whose
index is a multiple of 3 are the test rows, the rest train. A StandardScaler is fitted on the
training rows only (population standard deviation, as embloom), applied to both parts, and a
KNeighborsClassifier (k = 5, euclidean, uniform vote, brute force) predicts the test rows.
The raw (unscaled) predictions are written too, to show standardisation changes the answer.

Features are rounded to float32 first, so both tools start from the same numbers. Test rows
whose 5th and 6th nearest training rows are within a relative 1e-4 in either space are
dropped, so float32 distances in embloom cannot reorder the boundary neighbour.

Writes tests/fixtures/probe/knn_standardize_wine.json (relative to the repository root).
"""

import json
import pathlib

import numpy as np
from sklearn.datasets import load_wine
from sklearn.neighbors import KNeighborsClassifier
from sklearn.preprocessing import StandardScaler

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "fixtures" / "probe" / "knn_standardize_wine.json"
K = 5


def stable(model, x):
    dist, _ = model.kneighbors(x, n_neighbors=K + 1)
    return (dist[:, K] - dist[:, K - 1]) > 1e-4 * np.maximum(dist[:, K], 1e-12)


def main():
    data = load_wine()
    x = data.data.astype(np.float32).astype(np.float64)
    y = data.target.astype(np.int64)
    test = np.arange(len(y)) % 3 == 0
    xtr, ytr, xte = x[~test], y[~test], x[test]
    scaler = StandardScaler().fit(xtr)
    scaled = KNeighborsClassifier(n_neighbors=K, metric="euclidean", algorithm="brute")
    scaled.fit(scaler.transform(xtr), ytr)
    raw = KNeighborsClassifier(n_neighbors=K, metric="euclidean", algorithm="brute")
    raw.fit(xtr, ytr)
    keep = stable(scaled, scaler.transform(xte)) & stable(raw, xte)
    xte = xte[keep]
    out = {
        "source": "scikit-learn load_wine; StandardScaler fitted on the training rows + "
        "KNeighborsClassifier(n_neighbors=5, metric='euclidean', algorithm='brute')",
        "sklearn_version": __import__("sklearn").__version__,
        "k": K,
        "train_x": xtr.tolist(),
        "train_y": ytr.tolist(),
        "test_x": xte.tolist(),
        "dropped_test_rows": int((~keep).sum()),
        "mean": scaler.mean_.tolist(),
        "scale": scaler.scale_.tolist(),
        "standardized_predictions": scaled.predict(scaler.transform(xte)).tolist(),
        "raw_predictions": raw.predict(xte).tolist(),
    }
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(json.dumps(out, indent=1) + "\n")
    diff = sum(a != b for a, b in zip(out["standardized_predictions"], out["raw_predictions"]))
    print(f"wrote {OUT}: {len(xte)} test rows ({out['dropped_test_rows']} dropped), "
          f"{diff} predictions change with standardisation")


if __name__ == "__main__":
    main()
