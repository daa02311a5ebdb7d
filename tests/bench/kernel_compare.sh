#!/usr/bin/env bash
# The exact k-NN kernel against numpy's float32 matrix product on the same shape (not a test):
# ROUNDS rounds (default 5), each running `cargo bench --bench knn_kernel` (the exact search
# only, cosine and euclidean, k = 10) and then tests/bench/numpy_matmul.py on the same file,
# so the two sides alternate on a shared machine. Prints every round's GFLOP/s (wall) and
# GFLOP per CPU-second (the process's CPU time, which other jobs on the machine disturb less),
# the medians, and the medians of the per-round ratios (kernel / numpy), with the load
# average before and after.
#
#   tests/bench/kernel_compare.sh [DATA.npz]   default: the benchmark set from make_data.py
#
# Needs: a Rust toolchain, python3 with numpy.
set -euo pipefail
cd "$(dirname "$0")/../.."
out="${BENCH_OUT:-target/bench-kernel}"
rounds="${ROUNDS:-5}"
mkdir -p "$out"
data="${1:-$out/data.npz}"
[[ -f "$data" ]] || python3 tests/bench/make_data.py "$data"
cargo bench --quiet --bench knn_kernel --no-run
echo "load before: $(cut -d' ' -f1-3 /proc/loadavg)"
for r in $(seq "$rounds"); do
    KNN_BENCH_DATA="$data" KNN_BENCH_PARTS=exact cargo bench --quiet --bench knn_kernel >"$out/round$r.kernel.txt"
    python3 tests/bench/numpy_matmul.py "$data" --cpu >"$out/round$r.numpy.txt"
done
echo "load after: $(cut -d' ' -f1-3 /proc/loadavg)"
python3 - "$out" "$rounds" <<'PY'
import re, statistics, sys
out, rounds = sys.argv[1], int(sys.argv[2])
rows = []
for r in range(1, rounds + 1):
    text = open(f"{out}/round{r}.kernel.txt").read()
    pat = r"knn_within (\w+) .*?([\d.]+) GFLOP/s, ([\d.]+) GFLOP per CPU"
    gf = {m: (float(w), float(c)) for m, w, c in re.findall(pat, text)}
    npy = tuple(float(v) for v in open(f"{out}/round{r}.numpy.txt").read().split())
    rows.append((gf["Cosine"], gf["Euclidean"], npy))
    print(f"round {r}: wall GFLOP/s: kernel cosine {gf['Cosine'][0]:.1f}, euclidean "
          f"{gf['Euclidean'][0]:.1f}, numpy {npy[0]:.1f}; per CPU-second: "
          f"{gf['Cosine'][1]:.1f}, {gf['Euclidean'][1]:.1f}, {npy[1]:.1f}")
for j, what in ((0, "wall GFLOP/s"), (1, "GFLOP per CPU-second")):
    med = [statistics.median(row[i][j] for row in rows) for i in range(3)]
    ratio = [statistics.median(row[i][j] / row[2][j] for row in rows) for i in (0, 1)]
    print(f"{what}: median kernel cosine {med[0]:.1f}, euclidean {med[1]:.1f}, numpy "
          f"{med[2]:.1f}; median of the per-round ratios kernel/numpy: cosine {ratio[0]:.2f}, "
          f"euclidean {ratio[1]:.2f}")
PY
