"""Prints the table of tests/bench/assess_compare.sh from its measurements.

usage: python assess_summary.py DIR SET...  (DIR holds, per SET, SET.NAME.time and
SET.NAME/results.json for NAME in default, nodiag, knn, linear, and SET.reference.time and
SET.reference.json when the reference pipeline ran)
"""

import json
import re
import sys
from pathlib import Path

from gnu_time import time_v

d = Path(sys.argv[1])
MIB = 1 << 20


for name in sys.argv[2:]:
    runs = {k: time_v(d / f"{name}.{k}.time") for k in ("default", "nodiag", "knn", "linear")}
    res = json.loads((d / f"{name}.default" / "results.json").read_text())
    ref = None
    if (d / f"{name}.reference.json").exists():
        ref = json.loads((d / f"{name}.reference.json").read_text())
        r_secs, r_rss = time_v(d / f"{name}.reference.time")
    rows, dims = res["input"]["rows"], res["input"]["dims"]
    input_bytes = rows * dims * 4
    synth_rows = max(f["train_synthetic"] for f in res["folds"])
    budget = 1.25 * (input_bytes + synth_rows * dims * 4) + 64 * MIB
    e_secs, e_rss = runs["default"]
    print(f"== {name} set: {rows} rows x {dims} dims, {len(res['input']['classes'])} classes "
          f"(invented, Zipf sizes); input {input_bytes / MIB:.1f} MiB, largest synthetic set "
          f"{synth_rows} rows")
    print(f"{'':34}{'embloom':>10}{'numpy/sklearn':>15}{'ratio':>9}")

    def line(label, ours, theirs=None, unit="s"):
        fmt = "{:10.1f}"
        t = f"{theirs:15.1f}" if theirs is not None else f"{'-':>15}"
        r = f"{theirs / ours:8.1f}x" if theirs is not None and ours > 0 else f"{'-':>9}"
        print(f"{label:34}{fmt.format(ours)}{t}{r}")

    line("wall time, defaults (s)", e_secs, r_secs if ref else None)
    line("peak RSS, defaults (MiB)", e_rss / MIB, r_rss / MIB if ref else None)
    line("wall time, no diagnostics (s)", runs["nodiag"][0])
    line("k-NN part: knn probe only (s)", runs["knn"][0], ref["knn_seconds"] if ref else None)
    line("linear part: linear only (s)", runs["linear"][0],
         ref["linear_seconds"] if ref else None)
    diag = e_secs - runs["nodiag"][0]
    print(f"diagnostics add {diag:.1f} s = {100 * diag / runs['nodiag'][0]:.0f}% "
          "to the run (target <= 20%)")
    print(f"peak RSS / budget 1.25 x (input + largest synthetic) + 64 MiB = "
          f"{e_rss / budget:.2f} (target <= 1)")
    w = res["work"]
    its = f"L-BFGS iterations: embloom {w['linear_iterations_total']} over {w['linear_fits']} fits"
    if ref:
        its += f", scikit-learn {ref['linear_iterations_total']}"
    print(its)
    print(f"{'probe':8}{'method':18}{'embloom':>10}{'sklearn':>10}{'diff':>9}")
    ours = {(r["probe"], r["method"]): r["mean"] for r in res["summary"]
            if r["metric"] == "balanced_accuracy"}
    for probe in ("knn", "linear"):
        for method in res["methods"]:
            a = ours[(probe, method)]
            if ref:
                b = ref["balanced_accuracy"][f"{probe}/{method}"]
                print(f"{probe:8}{method:18}{a:10.3f}{b:10.3f}{a - b:+9.3f}")
            else:
                print(f"{probe:8}{method:18}{a:10.3f}{'-':>10}{'-':>9}")
    print()
