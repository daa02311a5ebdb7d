"""Variance decomposition and interval formulas on the raw outcomes of the coverage simulation.

Input: the files `cargo bench --bench intervals -- dump FILE [DATASETS [TRAIN_SETS
[TEST_PER_CLASS]]]` writes (FILE and FILE.truth.csv). Usage: python3 intervals_decompose.py FILE

Per configuration and protocol it prints, for the figure the study checks (balanced accuracy,
or the mean recall of the grown classes c4, c5):

- V: the variance of the point estimate across data sets (what an interval has to cover);
- row: the mean squared standard error of the row-level central-limit interval (Bayle, Bayle,
  Janson & Mackey 2020), i.e. the test-row noise; row/V is the share of V it explains;
- fold excess e_f: mean over data sets of s^2 - k * SE1^2, s^2 the variance of the k fold
  differences within a repeat and SE1^2 one repeat's row-level SE^2 (k * SE1^2 is the fold
  differences' own test-row noise): the training-set variance the fold spread reveals;
  c = (V - row) / e_f is the factor that would turn it into the missing variance, to compare
  with Nadeau & Bengio's 1/k + n_test/n_train (0.45 at 5 folds) for folds whose training-set
  effects are nearly independent and (k - 1)^2 / k (3.2) for effects that add up over training
  rows, which overlapping training sets share;
- sd(e_f)/e_f: how noisy one data set's estimate of that excess is;
- B: the mean variance of the repeat means within a data set (5 x 3 only).

Then, for each interval formula (all at 95%), coverage of the Monte Carlo truth, the rate of
excluding zero and the width ratio (mean width over 2 * 1.96 * sd of the estimates), as the
benchmark reports them. The formulas are transcriptions, not the library's code:

- cv-clt: delta +- z * row SE (the library's `cv-clt`);
- cv-clt-folds: the library's `cv-clt-folds` (excess (1 + (k-1) n_test/n_train)(s^2/k - SE1^2),
  Welch-Satterthwaite df (k - 1)(var/excess)^2);
- folds x c: row SE^2 + c * max(0, s^2 - k SE1^2), df r (k - 1)(var/excess)^2, for the two
  factors above;
- folds x 0.45, honest df: the same with the df counting the noise of s^2 itself,
  r (k - 1)(var / (c s^2))^2 (the subtracted test-row noise is estimated from those folds too);
- per class x c: the excess class by class (each class's fold spread of its recall delta less
  its own test-row noise, clipped at zero, weighted as the figure weights the class), times c;
- row + B/r: row SE^2 plus the between-repeat variance of the mean (5 x 3 only);
- oracle: the normal interval with the true V, the best any variance estimate can do.
"""

import sys

import numpy as np
from scipy import stats

Z = stats.norm.ppf(0.975)
K = 5


def load(path):
    raw = np.loadtxt(path, delimiter=",", skiprows=1, dtype=np.int64)
    truth = {}
    for line in open(path + ".truth.csv").read().splitlines()[1:]:
        w, name, t, _ = line.split(",")
        truth[int(w)] = (name, float(t))
    return raw, truth


def recall_delta(label, pm, pb, classes):
    """Method minus baseline of the mean recall over `classes` (those with rows)."""
    vals = [
        (pm[label == c] == c).mean() - (pb[label == c] == c).mean() for c in classes if np.any(label == c)
    ]
    return float(np.mean(vals))


def row_se2(row, label, pm, pb, classes):
    """Stratified SE^2 of the mean recall from per-row differences averaged over repeats."""
    se2 = 0.0
    for c in classes:
        m = label == c
        d = (pm[m] == c).astype(float) - (pb[m] == c)
        rows, idx = np.unique(row[m], return_inverse=True)
        dbar = np.bincount(idx, d) / np.bincount(idx)
        se2 += dbar.var(ddof=1) / dbar.size / len(classes) ** 2
    return se2


def components(d, classes):
    """What one data set's fold records give: estimate, repeat means, fold deltas, SE^2s."""
    rep, fold, train, row, label, pm, pb = (d[:, i] for i in range(3, 10))
    reps, folds, single = [], [], []
    for r in range(rep.max() + 1):
        m = rep == r
        reps.append(recall_delta(label[m], pm[m], pb[m], classes))
        folds.append(
            [recall_delta(label[m & (fold == f)], pm[m & (fold == f)], pb[m & (fold == f)], classes) for f in range(K)]
        )
        single.append(row_se2(row[m], label[m], pm[m], pb[m], classes))
    # Per class: mean over repeats of the fold spread of its recall delta less its own
    # test-row noise, weighted as the figure weights the class.
    per_class = []
    for c in classes:
        e = []
        for r in range(rep.max() + 1):
            m = rep == r
            fd = [recall_delta(label[m & (fold == f)], pm[m & (fold == f)], pb[m & (fold == f)], [c]) for f in range(K)]
            se1 = row_se2(row[m], label[m], pm[m], pb[m], [c])
            e.append(np.var(fd, ddof=1) - K * se1)
        per_class.append(np.mean(e) / len(classes) ** 2)
    first = (rep == 0) & (fold == 0)
    return {
        "est": np.mean(reps),
        "reps": np.asarray(reps),
        "folds": np.asarray(folds),
        "single": np.mean(single),
        "per_class": np.asarray(per_class),
        "row": row_se2(row, label, pm, pb, classes),
        "n_train": float(train[first][0]),
        "n_test": float(first.sum()),
    }


def s2(c):
    return c["folds"].var(axis=1, ddof=1).mean()


def repeats(c):
    return c["folds"].shape[0]


def with_excess(c, excess, noise):
    """row SE^2 + excess, Student t with Satterthwaite df r (k-1)(var/noise)^2."""
    var = c["row"] + excess
    if excess <= 0:
        return var, np.inf
    return var, repeats(c) * (K - 1) * (var / noise) ** 2


def cv_clt(c, _):
    return c["row"], np.inf


def cv_clt_folds(c, _):
    overlap = 1 + (K - 1) * c["n_test"] / c["n_train"]
    e = max(0.0, overlap * (s2(c) / K - c["single"]))
    var = c["row"] + e
    return (var, (K - 1) * (var / e) ** 2) if e > 0 else (var, np.inf)


def folds_times(factor, honest=False):
    def f(c, _):
        e = max(0.0, factor * (s2(c) - K * c["single"]))
        return with_excess(c, e, factor * s2(c) if honest else e)

    return f


def per_class_times(factor):
    """The excess estimated class by class, each clipped at zero, so that a class whose folds
    spread less than their noise does not cancel one that spreads more."""

    def f(c, _):
        e = factor * np.clip(c["per_class"], 0, None).sum()
        return with_excess(c, e, e)

    return f


def between(c, _):
    if repeats(c) < 2:
        return None
    return c["row"] + c["reps"].var(ddof=1) / repeats(c), np.inf


def oracle(_, v):
    return v, np.inf


FORMULAS = [
    ("cv-clt", cv_clt),
    ("cv-clt-folds", cv_clt_folds),
    ("folds x 0.45", folds_times(1 / K + 1 / (K - 1))),
    ("folds x 3.2", folds_times((K - 1) ** 2 / K)),
    ("folds x 0.45, honest df", folds_times(1 / K + 1 / (K - 1), honest=True)),
    ("per class x 0.45", per_class_times(1 / K + 1 / (K - 1))),
    ("per class x 3.2", per_class_times((K - 1) ** 2 / K)),
    ("row + B/r", between),
    ("oracle (true V)", oracle),
]


def main(path):
    raw, truth = load(path)
    decomposition, table = [], []
    for w in sorted(truth):
        name, t = truth[w]
        classes = [4, 5] if "recall" in name else list(range(6))
        for p, protocol in enumerate(["5x1", "5x3"]):
            sel = raw[(raw[:, 0] == w) & (raw[:, 1] == p)]
            splits = np.flatnonzero(np.diff(sel[:, 2])) + 1
            comps = [components(d, classes) for d in np.split(sel, splits)]
            est = np.array([c["est"] for c in comps])
            v, sd = est.var(ddof=1), est.std(ddof=1)
            row = np.mean([c["row"] for c in comps])
            ef = np.array([s2(c) - K * c["single"] for c in comps])
            b = np.mean([c["reps"].var(ddof=1) for c in comps]) if p == 1 else np.nan
            decomposition.append(
                f"| {name} | {protocol} | {v:.2e} | {row:.2e} | {row / v:.2f} | {ef.mean():+.2e} | "
                f"{(v - row) / ef.mean():+.1f} | {ef.std(ddof=1) / abs(ef.mean()):.0f} | {b:.2e} |"
            )
            for label, formula in FORMULAS:
                cov = rej = used = 0
                widths = []
                for c in comps:
                    got = formula(c, v)
                    if got is None:
                        break
                    var, df = got
                    q = stats.t.ppf(0.975, df) if np.isfinite(df) else Z
                    lo, hi = c["est"] - q * np.sqrt(var), c["est"] + q * np.sqrt(var)
                    used += 1
                    cov += lo <= t <= hi
                    rej += lo > 0 or hi < 0
                    widths.append(hi - lo)
                if used == 0:
                    continue
                lo_w, hi_w = stats.binomtest(cov, used).proportion_ci(method="wilson")
                table.append(
                    f"| {name} | {protocol} | {label} | {cov / used:.3f} [{lo_w:.3f}, {hi_w:.3f}] | "
                    f"{rej / used:.3f} | {np.mean(widths) / (2 * 1.96 * sd):.2f} |"
                )
    print("| configuration | protocol | V | row | row/V | fold excess e_f | c = (V-row)/e_f | sd(e_f)/e_f | B |")
    print("|---|---|---|---|---|---|---|---|---|")
    print("\n".join(decomposition))
    print()
    print("| configuration | protocol | formula | coverage [95% Wilson] | excludes 0 | width ratio |")
    print("|---|---|---|---|---|---|")
    print("\n".join(table))


if __name__ == "__main__":
    main(sys.argv[1])
