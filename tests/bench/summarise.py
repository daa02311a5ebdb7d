"""Prints the side-by-side table of tests/bench/compare.sh from its measurements.

usage: python summarise.py DIR  (DIR holds embloom.time, reference.time, reference.json,
report/results.json, kernel.txt, numpy_gflops.txt, data.npz)
"""

import json
import re
import sys
from pathlib import Path

from gnu_time import time_v

d = Path(sys.argv[1])


res = json.loads((d / "report" / "results.json").read_text())
ref = json.loads((d / "reference.json").read_text())
e_secs, e_rss = time_v(d / "embloom.time")
r_secs, r_rss = time_v(d / "reference.time")
rows, dims = res["input"]["rows"], res["input"]["dims"]
input_bytes = rows * dims * 4
synth_rows = max(f["train_synthetic"] for f in res["folds"])
synth_bytes = synth_rows * dims * 4
mib = 1 << 20

print(f"data: {rows} rows x {dims} dims, {len(res['input']['classes'])} classes (invented, Zipf sizes)")
print(f"input matrix {input_bytes / mib:.1f} MiB; largest synthetic set {synth_rows} rows = {synth_bytes / mib:.1f} MiB")
print()
print(f"{'':28}{'embloom':>12}{'numpy/sklearn':>16}{'ratio':>10}")
print(f"{'wall time (s)':28}{e_secs:12.1f}{r_secs:16.1f}{r_secs / e_secs:9.1f}x")
print(f"{'peak RSS (MiB)':28}{e_rss / mib:12.1f}{r_rss / mib:16.1f}{r_rss / e_rss:9.1f}x")
budget = 2 * input_bytes + synth_bytes
print(f"embloom peak RSS / (2 x input + synthetic) = {e_rss / budget:.2f}  (target <= 1)")
print()
print("balanced accuracy (mean over the 5 given folds)")
print(f"{'probe':8}{'method':18}{'embloom':>10}{'sklearn':>10}{'diff':>9}")
ours = {
    (r["probe"], r["method"]): r["mean"]
    for r in res["summary"]
    if r["metric"] == "balanced_accuracy"
}
for probe in ("knn", "linear"):
    for method in res["methods"]:
        a = ours[(probe, method)]
        b = ref["balanced_accuracy"][f"{probe}/{method}"]
        print(f"{probe:8}{method:18}{a:10.3f}{b:10.3f}{a - b:+9.3f}")
print()
w = res["work"]
print(
    "shared work (embloom counters): "
    f"{w['test_real_knn_passes']} test-to-real k-NN passes, "
    f"{w['test_synthetic_knn_passes']} test-to-synthetic passes merged into them; "
    f"{w['linear_warm_starts']} of {w['linear_fits']} linear fits warm-started from none, "
    f"{w['linear_iterations_total']} L-BFGS iterations in all "
    f"(scikit-learn: {ref['knn_fits']} k-NN fits over real+synthetic rows, "
    f"{ref['linear_iterations_total']} lbfgs iterations)"
)
print()
kernel = (d / "kernel.txt").read_text()
numpy_gflops = float((d / "numpy_gflops.txt").read_text())
m = re.search(r"knn_within Cosine .*?([\d.]+) GFLOP/s", kernel)
ours_gflops = float(m.group(1))
print(kernel.strip())
print(f"numpy float32 matmul (same shape, same machine): {numpy_gflops:.1f} GFLOP/s")
print(f"k-NN kernel / numpy matmul = {ours_gflops / numpy_gflops:.2f}  (target >= 0.60)")
