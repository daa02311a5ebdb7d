"""Reference for the nearest-centroid probe (the prototype classifier, Snell et al. 2017).

Euclidean: scikit-learn's NearestCentroid (class mean, smallest euclidean distance, ties to
the first class in sorted label order). Cosine: a numpy transcription of the probe's rule:
scale every row to unit length, average each class's scaled rows, and take the class with
the largest cosine similarity to the test row (ties to the lowest class index).

Data: scikit-learn's bundled wine set (178 rows, 13 features, 3 classes), rounded to float32
as the probe reads it; rows with an index divisible by 3 are the test rows, the rest train.
The test rows are also predicted from an imbalanced training subset (classes 0/1/2 kept at
their first 40/10/4 training rows) so the class sizes differ sharply.

Writes tests/fixtures/probe/centroid.json: the rows, their labels, the split, and the
predicted class of every test row for both metrics and both training sets.
"""

import json
import pathlib

import numpy as np
import sklearn
from sklearn.datasets import load_wine
from sklearn.neighbors import NearestCentroid

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "fixtures" / "probe"
IMBALANCED = {0: 40, 1: 10, 2: 4}


def unit_rows(x):
    norm = np.linalg.norm(x, axis=1, keepdims=True)
    return np.divide(x, norm, out=np.zeros_like(x), where=norm > 0)


def cosine_centroid(x_train, y_train, x_test, n_classes):
    xs = unit_rows(x_train)
    means = np.stack([xs[y_train == c].mean(axis=0) for c in range(n_classes)])
    sim = unit_rows(x_test) @ unit_rows(means).T
    return np.argmax(sim, axis=1)  # first maximum: the lowest class index


def euclidean_centroid(x_train, y_train, x_test):
    return NearestCentroid(metric="euclidean").fit(x_train, y_train).predict(x_test)


def main():
    wine = load_wine()
    x = wine.data.astype(np.float32).astype(np.float64)
    y = wine.target.astype(np.int64)
    n_classes = int(y.max()) + 1
    idx = np.arange(len(y))
    test = idx[idx % 3 == 0]
    train = idx[idx % 3 != 0]
    small = np.concatenate([train[y[train] == c][:n] for c, n in IMBALANCED.items()])
    predictions = {}
    for name, rows in (("balanced", train), ("imbalanced", small)):
        predictions[name] = {
            "train": [int(i) for i in rows],
            "euclidean": [int(v) for v in euclidean_centroid(x[rows], y[rows], x[test])],
            "cosine": [int(v) for v in cosine_centroid(x[rows], y[rows], x[test], n_classes)],
        }
    out = {
        "source": "scikit-learn NearestCentroid (euclidean) and a numpy transcription (cosine) "
                  "on load_wine() as float32; test rows are those with index % 3 == 0",
        "sklearn_version": sklearn.__version__,
        "x": [[float(v) for v in r] for r in x],
        "y": [int(v) for v in y],
        "n_classes": n_classes,
        "test": [int(i) for i in test],
        "predictions": predictions,
    }
    OUT.mkdir(parents=True, exist_ok=True)
    with open(OUT / "centroid.json", "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
