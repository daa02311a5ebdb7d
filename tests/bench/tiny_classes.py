"""Invented data with many tiny classes, for timing `embloom assess` as the class count grows.

N classes of R rows each (default R = 1), or with --sizes A,B,... class i gets the i-th size
cyclically (so 2,6 mixes classes a probe can learn with classes the plan grows): every class is a random gaussian centre in D dims
(default 16) and its rows are the centre plus small noise, f32. Labels are strings "c0".."cN-1"
so the label encoder sees as many distinct names as classes.

usage: python tiny_classes.py OUT.npz --classes N [--rows-per-class R | --sizes A,B] [--dims D]
       [--seed S]

See tests/bench/README.md for the timing runs this feeds.
"""

import argparse

import numpy as np


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("out")
    ap.add_argument("--classes", type=int, required=True)
    ap.add_argument("--rows-per-class", type=int, default=1)
    ap.add_argument("--sizes", default=None)
    ap.add_argument("--dims", type=int, default=16)
    ap.add_argument("--seed", type=int, default=3)
    a = ap.parse_args()
    rng = np.random.default_rng(a.seed)
    n, d = a.classes, a.dims
    if a.sizes:
        cycle = [int(v) for v in a.sizes.split(",")]
        r = np.array([cycle[i % len(cycle)] for i in range(n)])
    else:
        r = np.full(n, a.rows_per_class)
    centres = rng.standard_normal((n, d))
    x = np.repeat(centres, r, axis=0) + 0.05 * rng.standard_normal((int(r.sum()), d))
    y = np.repeat(np.array([f"c{i}" for i in range(n)]), r)
    np.savez(a.out, embeddings=x.astype(np.float32), labels=y)


if __name__ == "__main__":
    main()
