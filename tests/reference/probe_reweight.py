"""Reference for the linear probe with balanced class weights (the `reweight` method).

scikit-learn's LogisticRegression(class_weight="balanced") minimises
    sum_i w_i l_i + 1/(2C) ||W||^2,   w_i = n / (C_present * n_{y_i})  (King & Zeng 2001),
which equals n * (sum_i w_i l_i / n + lambda/2 ||W||^2) with C = 1/(lambda n): the probe's
objective with the same lambda mapping as probe_digits.py. Fitted without standardisation on
an imbalanced subset of the bundled digits (classes 0, 1, 2 with 90, 30 and 8 rows).

Writes tests/fixtures/probe/reweight_expected.json: the rows, their labels, the fitted
coefficients and intercepts, the objective at the optimum (per row, as the probe reports it),
and the predicted probabilities on every row.
"""

import json
import pathlib

import numpy as np
from sklearn.datasets import load_digits
from sklearn.linear_model import LogisticRegression
from sklearn.utils.class_weight import compute_class_weight

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "fixtures" / "probe"

L2 = 1e-2
COUNTS = {0: 90, 1: 30, 2: 8}


def main():
    digits = load_digits()
    x_all = digits.data.astype(np.float64) / 16.0
    y_all = digits.target.astype(np.int64)
    rows = np.concatenate([np.flatnonzero(y_all == c)[:n] for c, n in COUNTS.items()])
    x, y = x_all[rows], y_all[rows]
    n = len(y)
    lr = LogisticRegression(C=1.0 / (L2 * n), class_weight="balanced", solver="lbfgs",
                            tol=1e-10, max_iter=10000).fit(x, y)
    weights = compute_class_weight("balanced", classes=np.arange(3), y=y)
    proba = lr.predict_proba(x)
    log_p = np.log(proba[np.arange(n), y])
    objective = float(-(weights[y] * log_p).sum() / n + 0.5 * L2 * (lr.coef_ ** 2).sum())
    out = {
        "source": "scikit-learn LogisticRegression(class_weight='balanced', C=1/(l2*n)) on "
                  "load_digits()/16, first 90/30/8 rows of classes 0/1/2",
        "sklearn_version": __import__("sklearn").__version__,
        "l2": L2,
        "class_weights": [float(w) for w in weights],
        "x": [[float(v) for v in r] for r in x],
        "y": [int(v) for v in y],
        "coef": [[float(v) for v in r] for r in lr.coef_],
        "intercept": [float(v) for v in lr.intercept_],
        "objective": objective,
        "proba": [[float(v) for v in r] for r in proba],
    }
    OUT.mkdir(parents=True, exist_ok=True)
    with open(OUT / "reweight_expected.json", "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
