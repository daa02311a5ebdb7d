"""The reference side of tests/bench/linear_fit.rs: one scikit-learn LogisticRegression(lbfgs)
fit on the rows whose `fold` member is not 0, StandardScaler first, with embloom's objective
(mean cross-entropy + lambda/2 ||W||^2, lambda = 1e-4, i.e. C = 1 / (lambda n)), tol 1e-6,
at most 500 iterations. Prints the best of three wall times (scaling included), the
iterations, the objective-and-gradient evaluations (scipy's nfev, read by wrapping
scipy.optimize.minimize, which scikit-learn calls once per fit) and the objective at the
solution evaluated in f64, as one JSON line. scipy's L-BFGS-B also stops when the objective's
relative decrease falls below 64 machine epsilons (scikit-learn's ftol); embloom stops on the
gradient alone.

usage: python linear_fit.py FILE.npz [--repeats R]
"""

import argparse
import json
import time

import numpy as np
from scipy import optimize
from scipy.special import logsumexp
from sklearn.linear_model import LogisticRegression
from sklearn.preprocessing import StandardScaler

L2 = 1e-4
RESULTS = []
_minimize = optimize.minimize


def counting_minimize(*args, **kwargs):
    res = _minimize(*args, **kwargs)
    RESULTS.append(res)
    return res


optimize.minimize = counting_minimize


def objective(z, y, w):
    lse = logsumexp(z, axis=1)
    ce = np.mean(lse - z[np.arange(len(y)), y])
    return ce + 0.5 * L2 * np.sum(w * w)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("data")
    ap.add_argument("--repeats", type=int, default=3)
    a = ap.parse_args()
    f = np.load(a.data)
    keep = f["fold"] != 0
    x = f["embeddings"][keep]
    _, y = np.unique(f["labels"][keep], return_inverse=True)
    best = float("inf")
    for _ in range(a.repeats):
        t = time.perf_counter()
        xs = StandardScaler().fit_transform(x.astype(np.float64))
        lr = LogisticRegression(C=1.0 / (L2 * len(y)), solver="lbfgs", tol=1e-6, max_iter=500)
        lr.fit(xs, y)
        best = min(best, time.perf_counter() - t)
    z = xs @ lr.coef_.T + lr.intercept_
    print(
        json.dumps(
            {
                "seconds": round(best, 4),
                "iterations": int(lr.n_iter_[0]),
                "evaluations": int(RESULTS[-1].nfev),
                "objective": float(objective(z, y, lr.coef_)),
                "rows": int(len(y)),
            }
        )
    )


if __name__ == "__main__":
    main()
