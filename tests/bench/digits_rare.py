"""scikit-learn's digits with three classes made rare, for the README's table of every method.

Reads tests/fixtures/probe/digits.csv (scikit-learn's bundled digits, 1797 rows of 8x8 pixels
/ 16, written by tests/reference/probe_digits.py) and writes a CSV embloom reads: `label`,
f0..f63, without the fixture's `fold` column (assess makes its own stratified folds). Classes
3, 8 and 9 are downsampled to 10, 15 and 20 rows, drawn with Python's `random.Random(0)`, so
the file is the same on every machine; the other classes keep all their rows. Standard
library only.

    python3 tests/bench/digits_rare.py digits-rare.csv
"""

import csv
import pathlib
import random
import sys

ROOT = pathlib.Path(__file__).resolve().parents[2]
SOURCE = ROOT / "tests" / "fixtures" / "probe" / "digits.csv"
RARE = {"3": 10, "8": 15, "9": 20}
SEED = 0


def main(out: str) -> None:
    with open(SOURCE, newline="") as f:
        reader = csv.reader(f)
        header = next(reader)
        rows = list(reader)
    label, fold = header.index("label"), header.index("fold")
    keep = [j for j in range(len(header)) if j != fold]
    rng = random.Random(SEED)
    chosen = set(range(len(rows)))
    for cls, n in sorted(RARE.items()):
        of_class = [i for i, r in enumerate(rows) if r[label] == cls]
        chosen -= set(of_class) - set(rng.sample(of_class, n))
    with open(out, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow([header[j] for j in keep])
        for i in sorted(chosen):
            w.writerow([rows[i][j] for j in keep])
    print(f"{out}: {len(chosen)} rows; rare classes {RARE}", file=sys.stderr)


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "digits-rare.csv")
