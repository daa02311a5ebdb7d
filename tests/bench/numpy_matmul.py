"""numpy's float32 matrix-multiply throughput on the benchmark's shape (rows x dims against
itself, 2 * n^2 * d flops, computed in blocks of 2048 rows so the result fits in memory): the
yardstick for the k-NN kernel's GFLOP/s in tests/bench/compare.sh.

usage: python numpy_matmul.py DATA.npz   (prints GFLOP/s, best of 3)
"""

import sys
import time

import numpy as np

x = np.ascontiguousarray(np.load(sys.argv[1])["embeddings"], dtype=np.float32)
n, d = x.shape
best = float("inf")
for _ in range(3):
    t = time.perf_counter()
    for i in range(0, n, 2048):
        g = x[i : i + 2048] @ x.T
    best = min(best, time.perf_counter() - t)
print(f"{2.0 * n * n * d / best / 1e9:.1f}")
