"""Reference for tests/library/augment_calibrated.rs (distribution calibration).

A numpy transcription of Yang, Liu & Xu 2021 ("Free lunch for few-shot learning: distribution
calibration", ICLR), section 3: base-class statistics mu_i = mean, Sigma_i = np.cov (n - 1
denominator); for a rare row x, the k base classes whose means are nearest to x (euclidean),
calibrated mean (sum mu_i + x) / (k + 1) and covariance sum Sigma_i / k + alpha, alpha added
to every entry as in the authors' released code (np.mean(cov[index], axis=0) + alpha).
The same again after Tukey's ladder of powers x -> x^0.5 applied to every row.

Data: three lending classes (40, 70, 55 rows) in 4 dimensions with different covariances,
positive values (so the Tukey variant applies), a one-row rare class and a three-row one.
Deterministic: fixed seed; writes tests/fixtures/augment/calibrated_stats.json.
"""

import json
from pathlib import Path

import numpy as np

K = 2
ALPHA = 0.21
TUKEY = 0.5

rng = np.random.default_rng(20261202)
d = 4
centres = np.array([[8.0, 6.0, 5.0, 7.0], [5.0, 9.0, 6.0, 5.0], [6.0, 5.0, 9.0, 8.0]])
rows, labels = [], []
for c, n in enumerate([40, 70, 55]):
    q, _ = np.linalg.qr(rng.standard_normal((d, d)))
    sd = np.array([0.6, 0.4, 0.3, 0.2]) * (1.0 + 0.3 * c)
    rows.append((rng.standard_normal((n, d)) * sd) @ q.T + centres[c])
    labels += [c] * n
rare = {3: np.array([[7.0, 7.0, 6.0, 6.5]]), 4: np.array([[6.0, 7.5, 7.0, 6.0], [5.5, 8.0, 6.5, 5.5], [7.5, 5.5, 8.0, 7.5]])}
for c, r in rare.items():
    rows.append(r)
    labels += [c] * len(r)
x32 = np.concatenate(rows).astype(np.float32)
labels = np.array(labels)


def calibrate(x):
    """Per rare row: the chosen lenders, calibrated mean and covariance."""
    means = [x[labels == c].mean(axis=0) for c in range(3)]
    covs = [np.cov(x[labels == c], rowvar=False, ddof=1) for c in range(3)]
    out = []
    for i in np.flatnonzero(labels >= 3):
        dist = [np.linalg.norm(x[i] - m) for m in means]
        near = np.argsort(dist, kind="stable")[:K]
        mean = (np.sum([means[j] for j in near], axis=0) + x[i]) / (K + 1)
        cov = np.mean([covs[j] for j in near], axis=0) + ALPHA
        out.append({"row": int(i), "lenders": near.tolist(), "mean": mean.tolist(), "cov": cov.tolist()})
    return out


x = x32.astype(np.float64)
result = {
    "source": "numpy transcription of the calibration step of Yang, Liu & Xu 2021, tests/reference/calibrated_stats.py",
    "k": K,
    "alpha": ALPHA,
    "tukey": TUKEY,
    "rows": x32.tolist(),
    "labels": labels.tolist(),
    "plain": calibrate(x),
    "tukey_transformed": calibrate(np.power(x, TUKEY)),
}
path = Path(__file__).resolve().parent.parent / "fixtures" / "augment" / "calibrated_stats.json"
path.write_text(json.dumps(result, indent=1) + "\n")
print("lenders per rare row:", [r["lenders"] for r in result["plain"]])
