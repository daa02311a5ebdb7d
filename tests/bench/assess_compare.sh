#!/usr/bin/env bash
# End-to-end benchmark (not a test): `embloom assess` with its defaults (diagnostics on)
# against the numpy + scikit-learn pipeline (tests/bench/reference_pipeline.py) on both
# invented sets of tests/bench/make_data.py (20 000 rows x 512 dims, 100 Zipf-sized classes):
# the benchmark set and its --hard variant (class means close compared with the spread within
# a class, so the linear probe needs a few hundred iterations). Per set it runs, one after the
# other in the same run:
#   1. embloom assess, defaults (diagnostics on)         -> wall time, peak RSS (VmHWM)
#   2. embloom assess --no-diagnostics                   -> what the diagnostics add
#   3. embloom assess --probes knn --no-diagnostics      -> the k-NN part
#   4. embloom assess --probes linear --no-diagnostics   -> the linear part
#   5. the reference pipeline                            -> its wall time, RSS and part times
# and prints one table (tests/bench/assess_summary.py): wall time, peak RSS, part times,
# L-BFGS iterations, balanced accuracies side by side, and the ratios.
#
#   tests/bench/assess_compare.sh              both sets
#   SETS=hard tests/bench/assess_compare.sh    one set
#   REFERENCE=0 tests/bench/assess_compare.sh  embloom only (the pipeline is slow)
#
# Needs: a Rust toolchain, python3 with numpy and scikit-learn, GNU time (/usr/bin/time).
set -euo pipefail
cd "$(dirname "$0")/../.."
out="${BENCH_OUT:-target/bench-assess}"
sets="${SETS:-easy hard}"
reference="${REFERENCE:-1}"
mkdir -p "$out"
if [[ ! -x /usr/bin/time ]]; then
    echo "GNU time is missing: install it (e.g. apt-get install -y time)" >&2
    exit 1
fi
echo "== machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'), load $(cut -d' ' -f1-3 /proc/loadavg)" >&2
echo "== building (release)" >&2
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/embloom"
common=(--methods none,interpolate,extrapolate,principal-noise --knn-k 10 --knn-metric cosine
    --knn-vote uniform --linear-l2 1e-4 --target median --quiet --force)
run() { # NAME, then assess options
    local name="$1"
    shift
    echo "== $set: embloom $name" >&2
    /usr/bin/time -v -o "$out/$set.$name.time" "$bin" assess "$out/$set.npz" "${common[@]}" \
        --report "$out/$set.$name" "$@" >/dev/null
}
for set in $sets; do
    flag=""
    [[ "$set" == hard ]] && flag="--hard"
    python3 tests/bench/make_data.py "$out/$set.npz" $flag
    run default --probes knn,linear
    run nodiag --probes knn,linear --no-diagnostics
    run knn --probes knn --no-diagnostics
    run linear --probes linear --no-diagnostics
    if [[ "$reference" == 1 ]]; then
        echo "== $set: numpy / scikit-learn pipeline" >&2
        /usr/bin/time -v -o "$out/$set.reference.time" python3 -W ignore \
            tests/bench/reference_pipeline.py "$out/$set.npz" >"$out/$set.reference.json"
    fi
done
echo "== load at the end: $(cut -d' ' -f1-3 /proc/loadavg)" >&2
echo
python3 tests/bench/assess_summary.py "$out" $sets
