"""Invented long-tailed benchmark data for tests/bench/compare.sh (not real embeddings).

100 classes whose sizes fall like a Zipf law (n_c proportional to 1/(c+1)), unit-norm f32 rows
in 512 dims: each class is a random mean direction plus noise confined mostly to a class-
specific 24-dimensional subspace, plus weak isotropic noise. A `fold` member (0..4) gives
both pipelines the same stratified folds.

With --hard the class means shrink to a quarter of their length, so classes overlap
(class means close compared with the spread within a class) and the linear probe needs many
L-BFGS iterations.

usage: python make_data.py OUT.npz [--rows N] [--dims D] [--classes C] [--seed S] [--hard]
"""

import argparse

import numpy as np


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("out")
    ap.add_argument("--rows", type=int, default=20000)
    ap.add_argument("--dims", type=int, default=512)
    ap.add_argument("--classes", type=int, default=100)
    ap.add_argument("--folds", type=int, default=5)
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--hard", action="store_true")
    a = ap.parse_args()
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
        x = (0.25 if a.hard else 1.0) * mean + z @ basis.T + 0.15 * rng.standard_normal((n, d))
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
