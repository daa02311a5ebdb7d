"""Reference for tests/augment_methods.rs (principal-noise covariance).

Draws one class of 300 rows in 5 dimensions with a known covariance (a random rotation of
variances 10, 5, 1, 0.1, 0.05), then computes with numpy what principal-noise must reproduce:
the sample covariance (n - 1 denominator, as numpy.cov), its eigendecomposition
(numpy.linalg.eigh), the number k of leading directions whose variance shares first reach
`variance_kept`, the restricted covariance V_k diag(s^2) V_k^T and the discarded directions.

Deterministic: fixed seed; writes tests/fixtures/augment/principal_noise_cov.json.
"""

import json
from pathlib import Path

import numpy as np

VARIANCE_KEPT = 0.95

rng = np.random.default_rng(20261201)
q, _ = np.linalg.qr(rng.standard_normal((5, 5)))
scales = np.sqrt(np.array([10.0, 5.0, 1.0, 0.1, 0.05]))
rows = (rng.standard_normal((300, 5)) * scales) @ q.T + np.array([1.0, -2.0, 0.5, 3.0, 0.0])
rows = rows.astype(np.float32)

x = rows.astype(np.float64)
cov = np.cov(x, rowvar=False, ddof=1)
vals, vecs = np.linalg.eigh(cov)
order = np.argsort(vals)[::-1]
vals, vecs = vals[order], vecs[:, order]
ratios = vals / vals.sum()
cum = np.cumsum(ratios)
k = int(np.searchsorted(cum, VARIANCE_KEPT) + 1)  # smallest k with cum[k-1] >= VARIANCE_KEPT
vk = vecs[:, :k]
restricted = vk @ np.diag(vals[:k]) @ vk.T

out = {
    "source": "numpy.cov(ddof=1) + numpy.linalg.eigh, tests/reference/principal_noise_cov.py",
    "variance_kept": VARIANCE_KEPT,
    "rows": rows.tolist(),
    "k": k,
    "cumulative_ratio": cum.tolist(),
    "restricted_cov": restricted.tolist(),
    "discarded_directions": vecs[:, k:].T.tolist(),
}
path = Path(__file__).resolve().parent.parent / "fixtures" / "augment" / "principal_noise_cov.json"
path.write_text(json.dumps(out, indent=1) + "\n")
print(f"k = {k}, cumulative ratios = {np.round(cum, 4)}")
