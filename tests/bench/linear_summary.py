"""Prints the table of tests/bench/linear_compare.sh from its measurements.

usage: python linear_summary.py DIR  (DIR holds SET.embloom.json, SET.embloom1.json and
SET.sklearn.json for SET in easy, hard; a set whose files are missing is reported as not
measured)
"""

import json
import sys
from pathlib import Path

d = Path(sys.argv[1])
print(f"{'set':6}{'side':10}{'s/fit':>9}{'iter':>6}{'evals':>7}{'f64 evals':>10}"
      f"{'ms/eval':>9}{'objective':>20}{'obj - sklearn':>15}")
ratios = []
for name in ("easy", "hard"):
    if not (d / f"{name}.sklearn.json").exists():
        print(f"{name:6}(not measured: the run stopped before this set)")
        continue
    e = json.loads((d / f"{name}.embloom.json").read_text())
    e1 = json.loads((d / f"{name}.embloom1.json").read_text())
    s = json.loads((d / f"{name}.sklearn.json").read_text())
    rows = [("embloom", e, e["exact_evaluations"]), ("sklearn", s, "-")]
    for side, r, exact in rows:
        print(f"{name:6}{side:10}{r['seconds']:9.3f}{r['iterations']:6d}{r['evaluations']:7d}"
              f"{exact!s:>10}{1000 * r['seconds'] / r['evaluations']:9.1f}"
              f"{r['objective']:20.12e}{r['objective'] - s['objective']:+15.2e}")
    same = e["digest"] == e1["digest"]
    ratios.append((name, s["seconds"] / e["seconds"], same, e, s))
print()
for name, ratio, same, e, s in ratios:
    print(f"{name}: embloom {ratio:.1f}x faster per fit than scikit-learn "
          f"({e['threads']} threads); objective "
          f"{'<=' if e['objective'] <= s['objective'] else '>'} sklearn's; "
          f"weights on 1 and {e['threads']} threads {'bit-identical' if same else 'DIFFER'}")
