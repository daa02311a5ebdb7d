"""numpy's float32 matrix-multiply throughput on the benchmark's shape (rows x dims against
itself, 2 * n^2 * d flops, computed in blocks of 2048 rows so the result fits in memory): the
yardstick for the k-NN kernel's GFLOP/s in tests/bench/compare.sh.

usage: python numpy_matmul.py DATA.npz [--cpu]
  prints GFLOP/s of the best of 3 passes; with --cpu also GFLOP per CPU-second of that pass
  (the process's CPU time, all BLAS threads), which a shared machine disturbs less.
"""

import sys
import time

import numpy as np

x = np.ascontiguousarray(np.load(sys.argv[1])["embeddings"], dtype=np.float32)
n, d = x.shape
best, cpu = float("inf"), 0.0
for _ in range(3):
    t, c = time.perf_counter(), time.process_time()
    for i in range(0, n, 2048):
        g = x[i : i + 2048] @ x.T
    wall = time.perf_counter() - t
    if wall < best:
        best, cpu = wall, time.process_time() - c
gflop = 2.0 * n * n * d / 1e9
if "--cpu" in sys.argv[2:]:
    print(f"{gflop / best:.1f} {gflop / cpu:.1f}")
else:
    print(f"{gflop / best:.1f}")
