"""Reference values for src/eval/diagnostics.rs: a numpy transcription of the definitions.

PRDC follows Naeem et al. 2020, "Reliable Fidelity and Diversity Metrics for Generative
Models" (ICML), eqs. 3-6, with the ball B(x, r) = {y : d(x, y) <= r} and r(x) the distance to
the k-th nearest other row of x's own set (k = 5, or min(5, N-1, M-1) when a set is small):
  precision = 1/M sum_j 1[Y_j in some real ball]
  recall    = 1/N sum_i 1[X_i in some fake ball]
  density   = 1/(kM) sum_j sum_i 1[Y_j in B(X_i, r(X_i))]
  coverage  = 1/N sum_i 1[min_j d(X_i, Y_j) <= r(X_i)]
The intrusion shares and the distance ratio are embloom's own definitions (see the doc
comments of ClassDiagnostics). Euclidean distance throughout, in float64, on data that is
exactly representable in float32 (the Rust side stores embeddings as f32).
Writes tests/fixtures/eval/prdc.json. Deterministic (fixed seed).
"""

import json
import pathlib

import numpy as np

rng = np.random.default_rng(2021)


def f32(a):
    return np.asarray(a, dtype=np.float32).astype(np.float64)


def pairwise(a, b):
    return np.sqrt(((a[:, None, :] - b[None, :, :]) ** 2).sum(axis=2))


def kth_other(x, k):
    d = pairwise(x, x)
    np.fill_diagonal(d, np.inf)
    return np.sort(d, axis=1)[:, k - 1]


def prdc(real, fake, k_max=5):
    n, m = len(real), len(fake)
    k = min(k_max, n - 1, m - 1)
    if k < 1:
        return {"precision": None, "recall": None, "density": None, "coverage": None, "k": 0}
    r_real = kth_other(real, k)
    r_fake = kth_other(fake, k)
    d = pairwise(real, fake)  # N x M
    # The Rust side computes distances in f32; keep every comparison well clear of its
    # threshold so that rounding cannot flip it.
    assert min(np.abs(d - r_real[:, None]).min(), np.abs(d - r_fake[None, :]).min()) > 1e-4
    in_real_ball = d <= r_real[:, None]
    in_fake_ball = d <= r_fake[None, :]
    return {
        "precision": float(in_real_ball.any(axis=0).mean()),
        "recall": float(in_fake_ball.any(axis=1).mean()),
        "density": float(in_real_ball.sum() / (k * m)),
        "coverage": float((d.min(axis=1) <= r_real).mean()),
        "k": int(k),
    }


def median_or_none(v):
    return float(np.median(v)) if len(v) else None


def diagnostics(train_x, train_y, synth_x, synth_y, test_x, test_y, classes):
    d_st = pairwise(synth_x, train_x)
    nn_synth = d_st.argmin(axis=1)
    d_tt = pairwise(train_x, train_x)
    np.fill_diagonal(d_tt, np.inf)
    nn_real = d_tt.argmin(axis=1)
    out = []
    for c in classes:
        s = np.flatnonzero(synth_y == c)
        r = np.flatnonzero(train_y == c)
        t = np.flatnonzero(test_y == c)
        num = median_or_none(d_st[s, nn_synth[s]])
        den = median_or_none(d_tt[r, nn_real[r]])
        row = {
            "class": int(c),
            "synthetic": int(len(s)),
            "intrusion_synthetic": float((train_y[nn_synth[s]] != c).mean()) if len(s) else None,
            "intrusion_real": float((train_y[nn_real[r]] != c).mean()) if len(r) else None,
            "distance_ratio": num / den if num is not None and den else None,
        }
        row.update(prdc(test_x[t], synth_x[s]))
        out.append(row)
    return out


dims = 6
centres = rng.normal(0.0, 1.2, size=(3, dims))


def draw(counts):
    x = np.concatenate([centres[c] + rng.normal(size=(n, dims)) for c, n in enumerate(counts)])
    y = np.concatenate([np.full(n, c) for c, n in enumerate(counts)])
    return f32(x), y


train_x, train_y = draw([30, 20, 8])
test_x, test_y = draw([15, 10, 4])
# Synthetic rows for classes 1 and 2 only, spread wider than the real data so that some
# intrude into class 0.
synth_x = f32(np.concatenate([centres[1] + 1.4 * rng.normal(size=(12, dims)),
                              centres[2] + 0.8 * rng.normal(size=(10, dims))]))
synth_y = np.array([1] * 12 + [2] * 10)

# A plain PRDC case with a shifted fake set.
real = f32(rng.normal(size=(40, 8)))
fake = f32(rng.normal(0.3, 1.1, size=(30, 8)))

out = {
    "prdc": {"real": real.tolist(), "fake": fake.tolist(), **prdc(real, fake)},
    "diagnostics": {
        "train_x": train_x.tolist(), "train_y": train_y.tolist(),
        "synth_x": synth_x.tolist(), "synth_y": synth_y.tolist(),
        "test_x": test_x.tolist(), "test_y": test_y.tolist(),
        "classes": [0, 1, 2],
        "expected": diagnostics(train_x, train_y, synth_x, synth_y, test_x, test_y, [0, 1, 2]),
    },
}
path = pathlib.Path(__file__).resolve().parents[1] / "fixtures" / "eval" / "prdc.json"
path.write_text(json.dumps(out) + "\n")
print(f"wrote {path}")
