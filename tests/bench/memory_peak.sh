#!/usr/bin/env bash
# Peak memory benchmark (not a test): `embloom assess` with its defaults (diagnostics on) and
# `embloom grow` (interpolate, grown to the median) on the benchmark set of
# tests/bench/make_data.py (20 000 rows x 512 dims f32, 100 Zipf-sized classes), each under
# GNU time, printing peak resident memory (VmHWM) against the budget
# 1.25 x (input matrix + largest synthetic set) + 64 MiB (tests/bench/memory_summary.py).
# Memory figures do not depend on the machine's load, so one run is enough.
#
#   tests/bench/memory_peak.sh                 build, make the set, run both commands
#   BIN=path/to/embloom tests/bench/memory_peak.sh   measure another binary
#
# Needs: a Rust toolchain, python3 with numpy, GNU time (/usr/bin/time).
set -euo pipefail
cd "$(dirname "$0")/../.."
out="${BENCH_OUT:-target/bench-memory}"
mkdir -p "$out"
if [[ ! -x /usr/bin/time ]]; then
    echo "GNU time is missing: install it (e.g. apt-get install -y time)" >&2
    exit 1
fi
if [[ -z "${BIN:-}" ]]; then
    echo "== building (release)" >&2
    cargo build --release --quiet
    BIN="${CARGO_TARGET_DIR:-target}/release/embloom"
fi
[[ -f "$out/easy.npz" ]] || python3 tests/bench/make_data.py "$out/easy.npz"
echo "== embloom assess (defaults)" >&2
/usr/bin/time -v -o "$out/assess.time" "$BIN" assess "$out/easy.npz" --quiet --force \
    --report "$out/assess" >/dev/null
echo "== embloom grow (interpolate, median)" >&2
/usr/bin/time -v -o "$out/grow.time" "$BIN" grow "$out/easy.npz" -o "$out/grown.npz" \
    --method interpolate --quiet --force >/dev/null
python3 tests/bench/memory_summary.py "$out"
