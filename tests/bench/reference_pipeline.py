"""The benchmark's reference pipeline: what `embloom assess` does in tests/bench/compare.sh,
written with numpy and scikit-learn at equal settings.

For every given fold (the `fold` member): grow each class of the real training rows to the
median class count (upper median) with none / interpolate / extrapolate / principal-noise,
then fit a k-NN probe (KNeighborsClassifier, k = 10, brute-force cosine, uniform vote) and a
linear probe (StandardScaler fitted on the training rows, then LogisticRegression lbfgs,
C = 1 / (lambda * n_train) with lambda = 1e-4, which is embloom's objective
mean cross-entropy + lambda/2 ||W||^2, tol 1e-6 on the largest gradient component, at most 500
iterations) and score balanced accuracy on the real test rows.

Growth rules (as in embloom's README): interpolate x + u (n - x), u ~ U(0, 1), n one of the
K = 5 nearest same-class rows (exact euclidean); extrapolate x + 0.5 (x - n); principal-noise
x + sum_j z_j s_j v_j * 0.5 over the class's principal directions keeping 95% of the variance
(s_j the standard deviation along v_j, ddof = 1); synthetic rows renormalised to unit length
because the input rows are. Random draws differ from embloom's, so balanced accuracies agree
only within noise.

usage: python reference_pipeline.py DATA.npz  (prints one JSON object)
"""

import json
import resource
import sys
import time

import numpy as np
from sklearn.linear_model import LogisticRegression
from sklearn.metrics import balanced_accuracy_score
from sklearn.neighbors import KNeighborsClassifier
from sklearn.preprocessing import StandardScaler

METHODS = ["none", "interpolate", "extrapolate", "principal-noise"]
K_SMOTE = 5
MAGNITUDE = 0.5
VARIANCE_KEPT = 0.95
L2 = 1e-4


def same_class_neighbours(xc, k):
    """Exact euclidean k nearest other rows of xc (ties by lower index)."""
    sq = (xc.astype(np.float64) ** 2).sum(1)
    d2 = sq[:, None] + sq[None, :] - 2.0 * (xc.astype(np.float64) @ xc.T.astype(np.float64))
    np.fill_diagonal(d2, np.inf)
    return np.argsort(d2, axis=1, kind="stable")[:, :k]


def grow(method, x, y, n_classes, rng):
    counts = np.bincount(y, minlength=n_classes)
    present = np.sort(counts[counts > 0])
    goal = present[len(present) // 2]
    rows = []
    labels = []
    if method == "none":
        return np.zeros((0, x.shape[1]), np.float32), np.zeros(0, np.int64)
    for c in range(n_classes):
        add = goal - counts[c]
        if counts[c] == 0 or add <= 0:
            continue
        xc = x[y == c]
        m = len(xc)
        base = rng.integers(0, m, size=add)
        if method in ("interpolate", "extrapolate"):
            if m < 2:
                continue
            nn = same_class_neighbours(xc, min(K_SMOTE, m - 1))
            partner = nn[base, rng.integers(0, nn.shape[1], size=add)]
            a, b = xc[base].astype(np.float64), xc[partner].astype(np.float64)
            if method == "interpolate":
                s = a + rng.random((add, 1)) * (b - a)
            else:
                s = a + MAGNITUDE * (a - b)
        else:
            xc64 = xc.astype(np.float64)
            centred = xc64 - xc64.mean(0)
            _, sv, vt = np.linalg.svd(centred, full_matrices=False)
            var = sv**2 / max(m - 1, 1)
            if var.sum() <= 0:
                continue
            keep = int(np.searchsorted(np.cumsum(var) / var.sum(), VARIANCE_KEPT) + 1)
            keep = min(keep, len(var))
            z = rng.standard_normal((add, keep))
            s = xc64[base] + (z * np.sqrt(var[:keep]) * MAGNITUDE) @ vt[:keep]
        s /= np.linalg.norm(s, axis=1, keepdims=True)
        rows.append(s.astype(np.float32))
        labels.append(np.full(add, c))
    if not rows:
        return np.zeros((0, x.shape[1]), np.float32), np.zeros(0, np.int64)
    return np.concatenate(rows), np.concatenate(labels)


def main():
    started = time.perf_counter()
    z = np.load(sys.argv[1])
    x = z["embeddings"]
    names, y = np.unique(z["labels"], return_inverse=True)
    folds = z["fold"]
    n_classes = len(names)
    rng = np.random.default_rng(0)
    scores = {(m, p): [] for m in METHODS for p in ("knn", "linear")}
    knn_fits = 0
    iterations = 0
    knn_seconds = 0.0
    linear_seconds = 0.0
    for f in np.unique(folds):
        tr, te = folds != f, folds == f
        xtr, ytr, xte, yte = x[tr], y[tr], x[te], y[te]
        for m in METHODS:
            xs, ys = grow(m, xtr, ytr, n_classes, rng)
            xa = np.concatenate([xtr, xs])
            ya = np.concatenate([ytr, ys])
            t = time.perf_counter()
            knn = KNeighborsClassifier(
                n_neighbors=10, metric="cosine", algorithm="brute", weights="uniform"
            ).fit(xa, ya)
            knn_fits += 1
            scores[(m, "knn")].append(balanced_accuracy_score(yte, knn.predict(xte)))
            knn_seconds += time.perf_counter() - t
            t = time.perf_counter()
            scaler = StandardScaler().fit(xa)
            lin = LogisticRegression(
                C=1.0 / (L2 * len(ya)), solver="lbfgs", tol=1e-6, max_iter=500
            ).fit(scaler.transform(xa), ya)
            iterations += int(np.max(lin.n_iter_))
            scores[(m, "linear")].append(
                balanced_accuracy_score(yte, lin.predict(scaler.transform(xte)))
            )
            linear_seconds += time.perf_counter() - t
    out = {
        "seconds": time.perf_counter() - started,
        "peak_rss_kib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss,
        "knn_fits": knn_fits,
        "knn_seconds": knn_seconds,
        "linear_seconds": linear_seconds,
        "linear_iterations_total": iterations,
        "balanced_accuracy": {f"{p}/{m}": float(np.mean(v)) for (m, p), v in scores.items()},
    }
    print(json.dumps(out))


if __name__ == "__main__":
    main()
