"""Compare regenerated reference fixtures with the committed ones.

The fixtures are written by the committed reference scripts. Re-running them on another
processor can change the last bits of a floating-point figure (numpy's BLAS picks its
kernels by CPU, and an iterative solver may then take a different number of steps to the
same optimum), so a byte-for-byte comparison fails on a figure nobody changed. This script
compares the figures instead: every number within a relative 1e-6 (absolute 1e-9 near
zero), every string and the structure exactly. `n_iter` (a solver's step count, kept for
information only; no test reads it) is not compared.

Usage: python3 compare_fixtures.py   (from anywhere; exits 1 and lists what differs)
"""

import csv
import io
import json
import math
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
RTOL, ATOL = 1e-6, 1e-9
IGNORED_KEYS = {"n_iter"}


def committed(path):
    rel = path.relative_to(ROOT).as_posix()
    out = subprocess.run(
        ["git", "show", f"HEAD:{rel}"], cwd=ROOT, capture_output=True, check=False
    )
    return out.stdout.decode() if out.returncode == 0 else None


def close(a, b):
    return math.isclose(a, b, rel_tol=RTOL, abs_tol=ATOL)


def same(a, b, where, problems):
    if isinstance(a, bool) or isinstance(b, bool):
        if a != b:
            problems.append(f"{where}: {a!r} != {b!r}")
    elif isinstance(a, (int, float)) and isinstance(b, (int, float)):
        if not close(float(a), float(b)):
            problems.append(f"{where}: {a!r} != {b!r}")
    elif isinstance(a, dict) and isinstance(b, dict):
        if set(a) != set(b):
            problems.append(f"{where}: keys {sorted(set(a) ^ set(b))} differ")
        for k in set(a) & set(b):
            if k not in IGNORED_KEYS:
                same(a[k], b[k], f"{where}.{k}", problems)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            problems.append(f"{where}: length {len(a)} != {len(b)}")
        for i, (x, y) in enumerate(zip(a, b)):
            same(x, y, f"{where}[{i}]", problems)
    elif a != b:
        problems.append(f"{where}: {a!r} != {b!r}")


def as_number(cell):
    try:
        return float(cell)
    except ValueError:
        return cell


def main():
    fixtures = sorted(
        p for p in (ROOT / "tests" / "fixtures").rglob("*") if p.suffix in (".json", ".csv")
    )
    problems = []
    for path in fixtures:
        old = committed(path)
        if old is None:
            problems.append(f"{path.relative_to(ROOT)}: not committed")
            continue
        new = path.read_text()
        if old == new:
            continue
        name = str(path.relative_to(ROOT))
        if path.suffix == ".json":
            same(json.loads(old), json.loads(new), name, problems)
        else:
            rows_old = [[as_number(c) for c in r] for r in csv.reader(io.StringIO(old))]
            rows_new = [[as_number(c) for c in r] for r in csv.reader(io.StringIO(new))]
            same(rows_old, rows_new, name, problems)
    if problems:
        print("reference fixtures differ from the committed ones:", file=sys.stderr)
        for p in problems[:40]:
            print("  " + p, file=sys.stderr)
        if len(problems) > 40:
            print(f"  … and {len(problems) - 40} more", file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
