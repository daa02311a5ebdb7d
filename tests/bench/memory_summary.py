"""Prints peak resident memory of tests/bench/memory_peak.sh's runs against the budget
1.25 x (input matrix + largest synthetic set) + 64 MiB.

usage: python memory_summary.py DIR  (DIR holds assess.time, assess/results.json, grow.time
and grown.npz)
"""

import json
import sys
from pathlib import Path

import numpy as np

from gnu_time import time_v

MIB = 1 << 20
d = Path(sys.argv[1])

res = json.loads((d / "assess" / "results.json").read_text())
rows, dims = res["input"]["rows"], res["input"]["dims"]
input_bytes = rows * dims * 4
# assess: the largest synthetic set of any (fold, method); grow: the rows it added.
assess_synth = max(f["train_synthetic"] for f in res["folds"])
with np.load(d / "grown.npz") as z:
    grow_synth = int((z["origin"] != "real").sum())
print(f"input {rows} rows x {dims} dims = {input_bytes / MIB:.1f} MiB")
print(f"{'command':10}{'synthetic rows':>16}{'budget MiB':>12}{'peak MiB':>10}{'ratio':>8}"
      f"{'wall s':>8}")
for name, synth in (("assess", assess_synth), ("grow", grow_synth)):
    secs, rss = time_v(d / f"{name}.time")
    budget = 1.25 * (input_bytes + synth * dims * 4) + 64 * MIB
    print(f"{name:10}{synth:16d}{budget / MIB:12.1f}{rss / MIB:10.1f}{rss / budget:8.2f}"
          f"{secs:8.1f}")
