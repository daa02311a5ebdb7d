"""Reference values for src/eval/metrics.rs, from scikit-learn.

Six classes: class 4 occurs in y_true but is never predicted, class 5 is predicted but never
occurs in y_true, so the default label sets of balanced accuracy (y_true) and macro-F1
(y_true ∪ y_pred) differ. Writes tests/fixtures/eval/metrics.json. Deterministic (fixed seed).
"""

import json
import pathlib
import warnings

import numpy as np
import sklearn
from sklearn.metrics import (
    accuracy_score,
    balanced_accuracy_score,
    f1_score,
    log_loss,
    precision_recall_fscore_support,
)

rng = np.random.default_rng(20240611)
n = 80
y_true = rng.choice([0, 1, 2, 3, 4], size=n, p=[0.3, 0.25, 0.2, 0.15, 0.1])
# Predictions: correct 55% of the time, otherwise a random class from {0,1,2,3,5}.
wrong = rng.choice([0, 1, 2, 3, 5], size=n)
y_pred = np.where(rng.random(n) < 0.55, y_true, wrong)
y_pred = np.where(y_pred == 4, 5, y_pred)  # class 4 is never predicted
assert 4 not in set(y_pred) and 5 not in set(y_true) and 5 in set(y_pred)

with warnings.catch_warnings():
    warnings.simplefilter("ignore")  # zero-division and "y_pred contains classes not in y_true"
    p, r, f, s = precision_recall_fscore_support(
        y_true, y_pred, labels=list(range(6)), zero_division=0
    )
    out = {
        "sklearn_version": sklearn.__version__,
        "y_true": y_true.tolist(),
        "y_pred": y_pred.tolist(),
        "accuracy": accuracy_score(y_true, y_pred),
        "balanced_accuracy": balanced_accuracy_score(y_true, y_pred),
        "macro_f1": f1_score(y_true, y_pred, average="macro", zero_division=0),
        "precision": p.tolist(),
        "recall": r.tolist(),
        "f1": f.tolist(),
        "support": s.tolist(),
    }

# Probabilities for log loss: Dirichlet rows, plus rows with exact 0 and 1 entries so the
# clipping to [eps, 1 - eps] (eps = finfo(float64).eps) is exercised in both directions.
m = 20
proba = rng.dirichlet(np.ones(6), size=m)
proba[0] = [0, 1, 0, 0, 0, 0]
proba[1] = [0, 0, 0, 1, 0, 0]
proba_true = rng.choice(6, size=m)
proba_true[0] = 1  # p = 1 -> clipped to 1 - eps
proba_true[1] = 2  # p = 0 -> clipped to eps
out["proba"] = proba.tolist()
out["proba_true"] = proba_true.tolist()
out["log_loss"] = log_loss(proba_true, proba, labels=list(range(6)))

path = pathlib.Path(__file__).resolve().parents[1] / "fixtures" / "eval" / "metrics.json"
path.write_text(json.dumps(out, indent=1) + "\n")
print(f"wrote {path}")
