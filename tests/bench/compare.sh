#!/usr/bin/env bash
# The performance benchmark (not a test): embloom assess against the equivalent numpy +
# scikit-learn pipeline (tests/bench/reference_pipeline.py) on invented long-tailed data, on
# this machine, in one run. Prints wall times, peak memory, balanced accuracies side by side,
# the k-NN kernel's GFLOP/s beside numpy's float32 matmul, and the k-d tree mode's recall@10.
#
#   tests/bench/compare.sh           full size: 20 000 rows x 512 dims, 100 classes
#   tests/bench/compare.sh --quick   5 000 rows x 512 dims, 50 classes
#   tests/bench/compare.sh [--quick] --diagnostics   assess as by default, diagnostics on
#                                    (the reference computes none, so embloom does more work)
#
# Needs: a Rust toolchain, python3 with numpy and scikit-learn, GNU time (/usr/bin/time).
set -euo pipefail
cd "$(dirname "$0")/../.."
rows=20000
classes=100
diagnostics="--no-diagnostics"
for arg in "$@"; do
    case "$arg" in
    --quick) rows=5000 classes=50 ;;
    --diagnostics) diagnostics="" ;;
    *) echo "unknown option $arg (use --quick, --diagnostics)" >&2; exit 2 ;;
    esac
done
out="${BENCH_OUT:-target/bench-compare}"
mkdir -p "$out"
if [[ ! -x /usr/bin/time ]]; then
    echo "GNU time is missing: install it (e.g. apt-get install -y time)" >&2
    exit 1
fi
echo "== machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'), $(free -g | awk '/Mem:/ {print $2}') GiB RAM" >&2
echo "== building (release)" >&2
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/embloom"
echo "== generating invented data: $rows rows, $classes classes" >&2
python3 tests/bench/make_data.py "$out/data.npz" --rows "$rows" --classes "$classes"
echo "== embloom assess" >&2
/usr/bin/time -v -o "$out/embloom.time" "$bin" assess "$out/data.npz" \
    --methods none,interpolate,extrapolate,principal-noise --probes knn,linear \
    --knn-k 10 --knn-metric cosine --knn-vote uniform --linear-l2 1e-4 \
    --target median $diagnostics --quiet --report "$out/report" --force >/dev/null
echo "== numpy / scikit-learn reference pipeline" >&2
/usr/bin/time -v -o "$out/reference.time" python3 tests/bench/reference_pipeline.py \
    "$out/data.npz" >"$out/reference.json"
echo "== k-NN kernel and k-d tree recall" >&2
KNN_BENCH_DATA="$out/data.npz" cargo bench --quiet --bench knn_kernel >"$out/kernel.txt"
python3 tests/bench/numpy_matmul.py "$out/data.npz" >"$out/numpy_gflops.txt"
echo
python3 tests/bench/summarise.py "$out"
