"""Invented long-tailed benchmark data for tests/bench/compare.sh (not real embeddings).

100 classes whose sizes fall like a Zipf law (n_c proportional to 1/(c+1)), unit-norm f32 rows
in 512 dims: each class is a random mean direction plus noise confined mostly to a class-
specific 24-dimensional subspace, plus weak isotropic noise. A `fold` member (0..4) gives
both pipelines the same stratified folds.

With --hard the class means shrink to half their length (--mean-length sets it directly),
so classes overlap (class means close compared with the spread within a class) and the linear
probe needs a few hundred L-BFGS iterations. Measured with scikit-learn's lbfgs at embloom's
defaults on the training rows of fold 0, 20 000 rows: mean length 0.4 took 428 iterations
(test accuracy 0.39), 0.55 took 208 (0.59), 0.7 took 107 (0.77); 0.25 (the earlier --hard)
did not converge in 500.

usage: python make_data.py OUT.npz [--rows N] [--dims D] [--classes C] [--seed S] [--hard]
                           [--mean-length L]
"""

import argparse

import numpy as np

HARD_MEAN_LENGTH = 0.5


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("out")
    ap.add_argument("--rows", type=int, default=20000)
    ap.add_argument("--dims", type=int, default=512)
    ap.add_argument("--classes", type=int, default=100)
    ap.add_argument("--folds", type=int, default=5)
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--hard", action="store_true")
    ap.add_argument("--mean-length", type=float, default=None)
    a = ap.parse_args()
    if a.mean_length is None:
        a.mean_length = HARD_MEAN_LENGTH if a.hard else 1.0
    rng = np.random.default_rng(a.seed)
    c, d = a.classes, a.dims
    w = 1.0 / np.arange(1, c + 1)
    sizes = np.maximum(np.floor(a.rows * w / w.sum()).astype(int), 2 * a.folds)
    sizes[0] += a.rows - sizes.sum()
    rank = 24
    xs, ys, fs = [], [], []
    for k, n in enumerate(sizes):
        mean = rng.standard_normal(d)
        mean /= np.linalg.norm(mean)
        basis = np.linalg.qr(rng.standard_normal((d, rank)))[0]
        spread = np.linspace(1.0, 0.2, rank) * 1.0
        z = rng.standard_normal((n, rank)) * spread
        x = a.mean_length * mean + z @ basis.T + 0.15 * rng.standard_normal((n, d))
        xs.append(x)
        ys.append(np.full(n, k))
        # Stratified given folds: a shuffled round robin inside each class.
        f = np.arange(n) % a.folds
        rng.shuffle(f)
        fs.append(f)
    x = np.concatenate(xs).astype(np.float64)
    x /= np.linalg.norm(x, axis=1, keepdims=True)
    y = np.concatenate(ys)
    f = np.concatenate(fs)
    order = rng.permutation(len(y))
    labels = np.array([f"c{k:03d}" for k in y[order]])
    np.savez(
        a.out,
        embeddings=x[order].astype(np.float32),
        labels=labels,
        fold=f[order].astype(np.int64),
    )


if __name__ == "__main__":
    main()
