"""Reference predictions for k-NN vote ties, from scikit-learn's KNeighborsClassifier.

A small set built so that many test rows see a tied vote among their k nearest training rows.
Labels are listed in the file in an order that is NOT their sorted order, so a tool that
numbers classes in first-seen order breaks ties differently from scikit-learn, which takes
the lowest label in numpy.unique order.

Writes (relative to the repository root):
  tests/fixtures/probe/knn_ties_int.csv    label (integers), fold (0 train, 1 test), f0, f1
  tests/fixtures/probe/knn_ties_text.csv   the same rows with text labels
  tests/fixtures/probe/knn_ties_expected.json  scikit-learn predictions per test row

Deterministic: integer coordinates (exact squared distances), a fixed numpy seed, and test
rows kept only where the k-th and (k+1)-th neighbours are not equidistant, so neighbour
order at the boundary cannot matter.
"""

import json
import pathlib

import numpy as np
from sklearn.neighbors import KNeighborsClassifier

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "fixtures" / "probe"
K = 4
# First-seen order in the file: 9, 3, 12, 1 (numeric order 1, 3, 9, 12). Text names sort
# lexicographically as n1, n12, n3, n9: a different order again.
INT_CLASSES = [9, 3, 12, 1]
TEXT = {c: f"n{c}" for c in INT_CLASSES}


def main():
    rng = np.random.default_rng(20240611)
    n_train = 40
    train_x = rng.integers(0, 40, size=(n_train, 2))
    train_y = np.array([INT_CLASSES[i % 4] for i in range(n_train)])
    cand = np.unique(rng.integers(0, 40, size=(4000, 2)), axis=0)
    model = KNeighborsClassifier(n_neighbors=K, metric="euclidean", algorithm="brute")
    model.fit(train_x.astype(np.float64), train_y)
    dist, idx = model.kneighbors(cand.astype(np.float64), n_neighbors=K + 1)
    keep, pairs = [], {}
    for q in range(len(cand)):
        d = dist[q]
        if np.any(d[:K] == d[K]) or np.any(np.diff(d[:K]) == 0):
            continue  # any equal distance makes neighbour order arbitrary
        classes, counts = np.unique(train_y[idx[q, :K]], return_counts=True)
        tied = tuple(classes[counts == counts.max()])
        # Two-way ties (2 + 2 votes) between every pair of classes, a few of each.
        if len(tied) == 2 and pairs.get(tied, 0) < 5:
            pairs[tied] = pairs.get(tied, 0) + 1
            keep.append(q)
    assert len(keep) >= 10, f"only {len(keep)} tied rows"
    test_x = cand[keep]
    pred_int = model.predict(test_x.astype(np.float64))
    text_model = KNeighborsClassifier(n_neighbors=K, metric="euclidean", algorithm="brute")
    text_model.fit(train_x.astype(np.float64), np.array([TEXT[c] for c in train_y]))
    pred_text = text_model.predict(test_x.astype(np.float64))
    OUT.mkdir(parents=True, exist_ok=True)
    for name, label in (("int", str), ("text", lambda c: TEXT[c])):
        lines = ["label,fold,f0,f1"]
        lines += [f"{label(y)},0,{a},{b}" for y, (a, b) in zip(train_y, train_x)]
        # Test rows carry a placeholder label (the first class) so every class name still
        # comes from the training rows.
        lines += [f"{label(INT_CLASSES[0])},1,{a},{b}" for a, b in test_x]
        (OUT / f"knn_ties_{name}.csv").write_text("\n".join(lines) + "\n")
    expected = {
        "k": K,
        "source": "sklearn.neighbors.KNeighborsClassifier(n_neighbors=4, metric='euclidean', algorithm='brute')",
        "tied_test_rows": len(keep),
        "int_predictions": [int(p) for p in pred_int],
        "text_predictions": [str(p) for p in pred_text],
    }
    (OUT / "knn_ties_expected.json").write_text(json.dumps(expected, indent=1) + "\n")


if __name__ == "__main__":
    main()
