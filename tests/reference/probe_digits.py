"""Reference figures for the k-NN and linear probes on scikit-learn's bundled digits set.

Writes (relative to the repository root):
  tests/fixtures/probe/digits.csv            label, fold, f0..f63 (pixel / 16)
  tests/fixtures/probe/digits_expected.json  per-fold scikit-learn predictions and scores

Deterministic: the data ship with scikit-learn, the folds come from StratifiedKFold with a
fixed random_state, and every estimator used is deterministic.
"""

import json
import pathlib

import numpy as np
from sklearn.datasets import load_digits
from sklearn.linear_model import LogisticRegression
from sklearn.metrics import log_loss
from sklearn.model_selection import StratifiedKFold
from sklearn.neighbors import KNeighborsClassifier

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "fixtures" / "probe"

N_FOLDS = 5
TEMPERATURE = 0.07
L2 = 1e-3  # lambda in  mean CE + lambda/2 ||W||^2  (bias not penalised)


def weighted_cosine(d):
    """exp(similarity / T) with similarity = 1 - cosine distance (the probe's weighted vote)."""
    return np.exp((1.0 - d) / TEMPERATURE)


KNN_SETTINGS = {
    "cosine_uniform_k10": dict(n_neighbors=10, metric="cosine", weights="uniform"),
    "cosine_weighted_k10": dict(n_neighbors=10, metric="cosine", weights=weighted_cosine),
    "euclidean_uniform_k5": dict(n_neighbors=5, metric="euclidean", weights="uniform"),
}


def boundary_ties(model, x_test, k):
    """Test rows whose k-th and (k+1)-th neighbour are equidistant (tie order is then arbitrary)."""
    dist, _ = model.kneighbors(x_test, n_neighbors=min(k + 1, model.n_samples_fit_))
    if dist.shape[1] <= k:
        return 0
    return int(np.sum(dist[:, k - 1] == dist[:, k]))


def stable_euclidean_uniform(x_train, y_train, x_test, k):
    """Uniform k-NN votes with exact integer squared distances (pixels are integers / 16) and
    ties broken by the lower training index, the order the probe's neighbour engine uses."""
    a = np.rint(x_test * 16).astype(np.int64)
    b = np.rint(x_train * 16).astype(np.int64)
    d2 = (a * a).sum(1)[:, None] + (b * b).sum(1)[None, :] - 2 * a @ b.T
    order = np.argsort(d2, axis=1, kind="stable")[:, :k]
    counts = np.zeros((len(a), 10), dtype=np.int64)
    for i in range(len(a)):
        for j in order[i]:
            counts[i, y_train[j]] += 1
    return counts.argmax(axis=1)


def main():
    digits = load_digits()
    x = digits.data.astype(np.float64) / 16.0
    y = digits.target.astype(np.int64)

    folds = np.empty(len(y), dtype=np.int64)
    skf = StratifiedKFold(n_splits=N_FOLDS, shuffle=True, random_state=0)
    for f, (_, test) in enumerate(skf.split(x, y)):
        folds[test] = f

    OUT.mkdir(parents=True, exist_ok=True)
    with open(OUT / "digits.csv", "w", newline="\n") as fh:
        fh.write(",".join(["label", "fold"] + [f"f{j}" for j in range(x.shape[1])]) + "\n")
        for i in range(len(y)):
            vals = [np.format_float_positional(v, trim="-") for v in x[i]]
            fh.write(",".join([str(int(y[i])), str(int(folds[i]))] + vals) + "\n")

    out = {
        "source": "scikit-learn load_digits, X/16, StratifiedKFold(5, shuffle=True, random_state=0)",
        "sklearn_version": __import__("sklearn").__version__,
        "temperature": TEMPERATURE,
        "l2": L2,
        "folds": [],
    }
    for f in range(N_FOLDS):
        tr, te = folds != f, folds == f
        entry = {"fold": f, "n_train": int(tr.sum()), "n_test": int(te.sum()), "knn": {}}
        for name, kw in KNN_SETTINGS.items():
            model = KNeighborsClassifier(algorithm="brute", **kw).fit(x[tr], y[tr])
            pred = model.predict(x[te])
            entry["knn"][name] = {
                "predictions": [int(p) for p in pred],
                "boundary_ties": boundary_ties(model, x[te], kw["n_neighbors"]),
            }
            if kw["metric"] == "euclidean":
                # The tie order at the k-th neighbour is arbitrary in scikit-learn; confirm the
                # predictions do not depend on it (the probe resolves ties by lower index).
                stable = stable_euclidean_uniform(x[tr], y[tr], x[te], kw["n_neighbors"])
                entry["knn"][name]["stable_order_disagreements"] = int(np.sum(stable != pred))
        n_train = int(tr.sum())
        lr = LogisticRegression(
            C=1.0 / (L2 * n_train), solver="lbfgs", tol=1e-8, max_iter=5000
        ).fit(x[tr], y[tr])
        proba = lr.predict_proba(x[te])
        entry["linear"] = {
            "accuracy": float(np.mean(lr.predict(x[te]) == y[te])),
            "log_loss": float(log_loss(y[te], proba, labels=np.arange(10))),
            "n_iter": int(np.max(lr.n_iter_)),
        }
        out["folds"].append(entry)

    with open(OUT / "digits_expected.json", "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
