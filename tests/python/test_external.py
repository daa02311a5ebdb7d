"""External input-space sets from Python: the numbers of `embloom assess --external` (source:
the CLI on the same real file, the same set written as a file, and the same seed), and the
library's refusals as typed exceptions."""

import json

import numpy as np
import pytest

import embloom

from conftest import run_cli


@pytest.fixture
def external_set(small_set):
    """A noisy copy of every row of the two smaller classes (invented: a stand-in for the
    embeddings of augmented inputs), each naming the row it was made from."""
    x, y = small_set
    rng = np.random.default_rng(3)
    parent = np.flatnonzero(y != "a")
    x_e = (x[parent] + rng.normal(0, 0.3, size=(len(parent), x.shape[1]))).astype(np.float32)
    return x_e, y[parent], parent


def test_external_numbers_equal_cli(tmp_path, small_set, external_set):
    x, y = small_set
    x_e, y_e, parent = external_set
    src, ext = tmp_path / "in.npz", tmp_path / "jitter.npz"
    np.savez(src, embeddings=x, labels=y)
    np.savez(ext, embeddings=x_e, labels=y_e, parent=parent)
    cli = json.loads(
        run_cli("assess", str(src), "--methods", "none,interpolate,jitter+interpolate",
                "--external", f"jitter={ext}", "--external-budget", "all",
                "--folds", "3", "--seed", "5", "--json", "--quiet").stdout
    )
    res = embloom.assess(x, y, methods=["none", "interpolate", "jitter+interpolate"], folds=3,
                         seed=5, external={"jitter": (x_e, y_e, parent)},
                         external_budget="all", progress=False)
    assert {row["method"] for row in res.summary} == {
        "none", "interpolate", "jitter", "jitter+interpolate"}
    assert res.summary == cli["summary"]
    assert res.per_class == cli["per_class"]
    assert res.data["folds"] == cli["folds"]
    assert res.data["diagnostics"] == cli["diagnostics"]
    ours, theirs = res.data["config"]["external"], cli["config"]["external"]
    assert ours["budget"] == theirs["budget"] == "all"
    assert ours["unions"] == theirs["unions"] == ["jitter+interpolate"]
    assert [s["rows"] for s in ours["sets"]] == [s["rows"] for s in theirs["sets"]] == [len(parent)]


def test_external_refusals(small_set, external_set):
    x, y = small_set
    x_e, y_e, parent = external_set
    bad_parent = parent.copy()
    bad_parent[2] = len(y) + 10
    with pytest.raises(embloom.InputError, match="row 2"):
        embloom.assess(x, y, probes=["knn"], folds=3, progress=False,
                       external={"jitter": (x_e, y_e, bad_parent)})
    with pytest.raises(embloom.InputError, match="class 'zebra'"):
        embloom.assess(x, y, probes=["knn"], folds=3, progress=False,
                       external={"jitter": (x_e, np.full(len(y_e), "zebra"), parent)})
    with pytest.raises(embloom.InputError, match="3 values"):
        embloom.assess(x, y, probes=["knn"], folds=3, progress=False,
                       external={"jitter": (np.ascontiguousarray(x_e[:, :3]), y_e, parent)})
    with pytest.raises(embloom.ParameterError, match="cannot name an external set"):
        embloom.assess(x, y, probes=["knn"], folds=3, progress=False,
                       external={"interpolate": (x_e, y_e, parent)})
    with pytest.raises(embloom.ParameterError, match="neither a method nor an external set"):
        embloom.assess(x, y, methods=["flips+interpolate"], probes=["knn"], folds=3,
                       progress=False, external={"jitter": (x_e, y_e, parent)})
