"""Reference values for src/eval/stats.rs, from scipy.stats.t.

Nadeau & Bengio (2003) corrected resampled t: se = sqrt((1/J + n_test/n_train) * s^2),
s^2 the sample variance (ddof=1), t with J-1 degrees of freedom, two-sided. The Student-t
quantiles and tail probabilities come from scipy. Also raw t.cdf / t.ppf values over a grid.
Writes tests/fixtures/eval/stats.json. Deterministic (fixed seed).
"""

import json
import pathlib

import numpy as np
import scipy
from scipy import stats

rng = np.random.default_rng(7)


def corrected(diffs, n_train, n_test, level):
    d = np.asarray(diffs, dtype=np.float64)
    j = d.size
    mean = d.mean()
    var = d.var(ddof=1)
    se = np.sqrt((1.0 / j + n_test / n_train) * var)
    df = j - 1
    t = mean / se
    q = stats.t.ppf(1.0 - (1.0 - level) / 2.0, df)
    return {
        "diffs": d.tolist(),
        "n_train": n_train,
        "n_test": n_test,
        "level": level,
        "mean": mean,
        "low": mean - q * se,
        "high": mean + q * se,
        "p_value": 2.0 * stats.t.sf(abs(t), df),
    }


cases = [
    # 10-fold, 1 repeat, 900 rows: a small positive shift.
    corrected(rng.normal(0.01, 0.02, size=10), 810.0, 90.0, 0.95),
    # 5-fold x 10 repeats, 250 rows: no real shift.
    corrected(rng.normal(0.0, 0.03, size=50), 200.0, 50.0, 0.90),
    # 5-fold x 2 repeats: a large shift, far into the tail.
    corrected(rng.normal(0.2, 0.01, size=10), 80.0, 20.0, 0.99),
    # The smallest case: two folds.
    corrected([0.05, -0.01], 50.0, 50.0, 0.95),
]

cdf = []
for df in [1.0, 2.0, 3.5, 9.0, 29.0, 120.0]:
    for t in [-6.0, -2.1, -0.5, 0.0, 0.7, 1.96, 4.0, 12.0]:
        cdf.append({"df": df, "t": t, "cdf": stats.t.cdf(t, df)})
ppf = []
for df in [1.0, 2.0, 3.5, 9.0, 29.0, 120.0]:
    for p in [0.001, 0.025, 0.3, 0.5, 0.8, 0.95, 0.975, 0.995, 0.9995]:
        ppf.append({"df": df, "p": p, "ppf": stats.t.ppf(p, df)})

out = {"scipy_version": scipy.__version__, "cases": cases, "cdf": cdf, "ppf": ppf}
path = pathlib.Path(__file__).resolve().parents[1] / "fixtures" / "eval" / "stats.json"
path.write_text(json.dumps(out, indent=1) + "\n")
print(f"wrote {path}")
