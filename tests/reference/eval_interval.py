"""Reference values for src/eval/interval/ (the paired-difference intervals), transcribed with
numpy, scipy and scikit-learn from the published definitions.

- normal CDF and quantile: scipy.stats.norm.
- pooled scores: scikit-learn's balanced_accuracy_score, f1_score(average="macro"),
  precision_score / f1_score per class, recall_score on the test rows pooled over the folds of
  a repeat (Forman & Scholz 2010), averaged over repeats.
- cv-clt (Bayle, Bayle, Janson & Mackey 2020): per-row differences of "predicted right",
  averaged over repeats per input row; SE^2 = sum_c alpha_c^2 s_c^2 / n_c (s_c^2 ddof 1 over
  the rows of class c; alpha_c = 1/C for balanced accuracy, 1/|G| for the mean recall of G);
  interval delta +- norm.ppf(0.975) SE; p = 2 norm.sf(|delta| / SE).
- cv-clt-folds: v = mean over repeats of var(fold deltas, ddof 1) divided by k; excess
  e = max(0, c (v - SE1^2)), SE1^2 the mean over repeats of each repeat's own cv-clt SE^2,
  c = 1 + (k-1) n_test/n_train (Nadeau & Bengio's overlap factor, on the training part only);
  variance SE^2 + e; Welch-Satterthwaite df = (k-1) (var/e)^2; scipy.stats.t.
- corrected-t (Nadeau & Bengio 2003; Bouckaert & Frank 2004 over k x r folds): on the
  per-fold differences of balanced accuracy.
- bootstrap percentile: numpy.percentile (linear) of given replicate values; p-value
  2 min(#<=0 + 1, #>=0 + 1) / (B + 1), capped at 1.

Writes tests/fixtures/eval/interval.json. Deterministic (fixed seed).
"""

import json
import pathlib

import numpy as np
import scipy
import sklearn
from scipy import stats
from sklearn.metrics import balanced_accuracy_score, f1_score, precision_score, recall_score

rng = np.random.default_rng(15)


def make_case(sizes, folds, repeats, p_base, p_method):
    """Stratified k-fold assignment per repeat, labels, and two prediction vectors per fold."""
    labels = np.concatenate([np.full(s, c) for c, s in enumerate(sizes)])
    n, n_classes = labels.size, len(sizes)
    records = []
    for r in range(repeats):
        fold_of = np.empty(n, dtype=int)
        for c in range(n_classes):
            idx = rng.permutation(np.flatnonzero(labels == c))
            fold_of[idx] = np.arange(idx.size) % folds
        for f in range(folds):
            test = np.flatnonzero(fold_of == f)
            y = labels[test]

            def predict(p_right):
                right = rng.random(test.size) < p_right[y]
                wrong = (y + 1 + rng.integers(0, n_classes - 1, test.size)) % n_classes
                return np.where(right, y, wrong)

            records.append(
                {
                    "repeat": r,
                    "fold": f,
                    "train_rows": int(n - test.size),
                    "rows": test.tolist(),
                    "labels": y.tolist(),
                    "method": predict(np.asarray(p_method)).tolist(),
                    "baseline": predict(np.asarray(p_base)).tolist(),
                }
            )
    return labels, records


def pooled(records, repeats, score):
    vals = []
    for r in range(repeats):
        rec = [x for x in records if x["repeat"] == r]
        y = np.concatenate([x["labels"] for x in rec])
        a = np.concatenate([x["method"] for x in rec])
        b = np.concatenate([x["baseline"] for x in rec])
        vals.append((score(y, a), score(y, b)))
    vals = np.asarray(vals)
    return vals[:, 0].mean(), vals[:, 1].mean(), (vals[:, 0] - vals[:, 1]).mean()


def clt_se(labels, records, n_classes, classes):
    n = labels.size
    dsum = np.zeros(n)
    cnt = np.zeros(n)
    for x in records:
        y = np.asarray(x["labels"])
        d = (np.asarray(x["method"]) == y).astype(float) - (np.asarray(x["baseline"]) == y)
        np.add.at(dsum, x["rows"], d)
        np.add.at(cnt, x["rows"], 1.0)
    dbar = dsum / cnt
    present = [c for c in classes if np.any(labels == c)]
    alpha = 1.0 / len(present)
    var = 0.0
    for c in present:
        v = dbar[labels == c]
        var += alpha**2 * v.var(ddof=1) / v.size
    return np.sqrt(var)


def fold_deltas(records, score):
    return np.asarray([score(x["labels"], x["method"]) - score(x["labels"], x["baseline"]) for x in records])


def case(sizes, folds, repeats, p_base, p_method):
    labels, records = make_case(sizes, folds, repeats, p_base, p_method)
    n_classes = len(sizes)
    z = stats.norm.ppf(0.975)
    ba = balanced_accuracy_score
    _, _, delta = pooled(records, repeats, ba)
    se = clt_se(labels, records, n_classes, list(range(n_classes)))
    clt = {
        "delta": delta,
        "low": delta - z * se,
        "high": delta + z * se,
        "p_value": 2 * stats.norm.sf(abs(delta) / se),
    }
    # cv-clt-folds
    fd = fold_deltas(records, ba)
    per_rep = [fd[[i for i, x in enumerate(records) if x["repeat"] == r]] for r in range(repeats)]
    v = np.mean([d.var(ddof=1) for d in per_rep]) / folds
    single = np.sqrt(np.mean([clt_se(labels, [x for x in records if x["repeat"] == r], n_classes, list(range(n_classes))) ** 2 for r in range(repeats)]))
    n_train = np.mean([x["train_rows"] for x in records])
    n_test = np.mean([len(x["labels"]) for x in records])
    overlap = 1 + (folds - 1) * n_test / n_train
    excess = max(overlap * (v - single**2), 0.0)
    var = se**2 + excess
    if excess > 0:
        df = (folds - 1) * (var / excess) ** 2
        q = stats.t.ppf(0.975, df)
        p = 2 * stats.t.sf(abs(delta) / np.sqrt(var), df)
    else:
        q = z
        p = 2 * stats.norm.sf(abs(delta) / np.sqrt(var))
    clt_folds = {"delta": delta, "low": delta - q * np.sqrt(var), "high": delta + q * np.sqrt(var), "p_value": p}
    # corrected t on fold deltas of balanced accuracy
    j = fd.size
    n_train = np.mean([x["train_rows"] for x in records])
    n_test = np.mean([len(x["labels"]) for x in records])
    cse = np.sqrt((1 / j + n_test / n_train) * fd.var(ddof=1))
    qt = stats.t.ppf(0.975, j - 1)
    corrected = {
        "delta": fd.mean(),
        "low": fd.mean() - qt * cse,
        "high": fd.mean() + qt * cse,
        "p_value": 2 * stats.t.sf(abs(fd.mean()) / cse, j - 1),
    }
    # grown-class recall (the two smallest classes) under cv-clt
    grown = [n_classes - 2, n_classes - 1]
    rec_g = lambda y, p: recall_score(y, p, labels=grown, average="macro", zero_division=0)
    _, _, gdelta = pooled(records, repeats, rec_g)
    gse = clt_se(labels, records, n_classes, grown)
    scores = {
        "macro_f1": pooled(records, repeats, lambda y, p: f1_score(y, p, average="macro", zero_division=0))[0],
        "balanced_accuracy": pooled(records, repeats, ba)[0],
        "precision_0": pooled(records, repeats, lambda y, p: precision_score(y, p, labels=[0], average="macro", zero_division=0))[0],
        "f1_last": pooled(records, repeats, lambda y, p: f1_score(y, p, labels=[n_classes - 1], average="macro", zero_division=0))[0],
    }
    return {
        "n_classes": n_classes,
        "folds": folds,
        "repeats": repeats,
        "records": records,
        "cv_clt": clt,
        "cv_clt_folds": clt_folds,
        "corrected_t": corrected,
        "grown": grown,
        "grown_cv_clt": {
            "delta": gdelta,
            "low": gdelta - z * gse,
            "high": gdelta + z * gse,
            "p_value": 2 * stats.norm.sf(abs(gdelta) / gse),
        },
        "pooled_method": scores,
    }


cases = [
    # 5 folds, Zipf-like sizes with two rare classes, a real gain on the rare ones.
    case([120, 70, 40, 30, 28], 5, 1, [0.9, 0.8, 0.7, 0.3, 0.2], [0.88, 0.8, 0.72, 0.55, 0.5]),
    # 5 folds x 3 repeats, no gain.
    case([60, 50, 40, 30], 5, 3, [0.8, 0.7, 0.6, 0.5], [0.8, 0.7, 0.6, 0.5]),
]

normal = {
    "cdf": [{"x": x, "cdf": stats.norm.cdf(x)} for x in [-8.0, -3.5, -2.5, -1.0, -0.1, 0.0, 0.3, 1.96, 2.9, 3.1, 6.0]],
    "ppf": [{"p": p, "ppf": stats.norm.ppf(p)} for p in [1e-6, 0.001, 0.025, 0.3, 0.5, 0.9, 0.975, 0.999]],
}

reps = rng.normal(0.02, 0.015, size=999)
q = np.percentile(reps, [2.5, 97.5])
boot = {
    "replicates": reps.tolist(),
    "low": q[0],
    "high": q[1],
    "p_value": min(1.0, 2 * min((reps <= 0).sum() + 1, (reps >= 0).sum() + 1) / (reps.size + 1)),
}

out = {
    "versions": {"numpy": np.__version__, "scipy": scipy.__version__, "sklearn": sklearn.__version__},
    "cases": cases,
    "normal": normal,
    "bootstrap_percentile": boot,
}
path = pathlib.Path(__file__).resolve().parents[1] / "fixtures" / "eval" / "interval.json"
path.write_text(json.dumps(out, indent=1) + "\n")
print(f"wrote {path}")
