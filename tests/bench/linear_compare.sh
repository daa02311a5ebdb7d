#!/usr/bin/env bash
# The linear-probe benchmark (not a test): one embloom fit (tests/bench/linear_fit.rs) against
# one scikit-learn lbfgs fit (tests/bench/linear_fit.py) on the same rows (the training rows of
# given fold 0), the same objective (mean cross-entropy + lambda/2 ||W||^2, lambda = 1e-4,
# standardised columns) and the same stopping rule (largest gradient component <= 1e-6, at most
# 500 iterations; scipy also stops on a relative decrease below 64 machine epsilons), on two
# invented sets of 20 000 rows x 512 dims, 100 Zipf-sized classes (tests/bench/make_data.py):
# the benchmark set of compare.sh and its --hard variant (class means closer, a few hundred
# iterations). Each side reports its best of REPEATS wall times; the two run one after the
# other in the same run, so their ratio is what to read on a shared machine. embloom is also
# fitted on 1 thread to check that the weights are bit-identical across thread counts.
#
#   tests/bench/linear_compare.sh            both sets, 3 repeats
#   REPEATS=1 tests/bench/linear_compare.sh
#
# Needs: a Rust toolchain, python3 with numpy, scipy and scikit-learn.
set -euo pipefail
cd "$(dirname "$0")/../.."
out="${BENCH_OUT:-target/bench-linear}"
repeats="${REPEATS:-3}"
mkdir -p "$out"
echo "== machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')" >&2
echo "== building (release)" >&2
cargo bench --quiet --bench linear_fit --no-run
for set in easy hard; do
    flag=""
    [[ "$set" == hard ]] && flag="--hard"
    echo "== $set set" >&2
    python3 tests/bench/make_data.py "$out/$set.npz" $flag
    LINEAR_BENCH_DATA="$out/$set.npz" LINEAR_BENCH_REPEATS="$repeats" \
        cargo bench --quiet --bench linear_fit >"$out/$set.embloom.json"
    LINEAR_BENCH_DATA="$out/$set.npz" LINEAR_BENCH_REPEATS=1 RAYON_NUM_THREADS=1 \
        cargo bench --quiet --bench linear_fit >"$out/$set.embloom1.json"
    python3 -W ignore tests/bench/linear_fit.py "$out/$set.npz" --repeats "$repeats" \
        >"$out/$set.sklearn.json"
done
echo
python3 tests/bench/linear_summary.py "$out"
