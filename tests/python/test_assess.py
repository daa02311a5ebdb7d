"""assess from Python gives the numbers of `embloom assess --json` (source: the CLI on the
same file and seed)."""

import json

import numpy as np

import embloom

from conftest import run_cli


def test_assess_numbers_equal_cli(tmp_path, small_set):
    x, y = small_set
    src = tmp_path / "in.npz"
    np.savez(src, embeddings=x, labels=y)
    cli = json.loads(
        run_cli("assess", str(src), "--methods", "none,interpolate,gaussian-noise",
                "--folds", "3", "--seed", "5", "--json", "--quiet").stdout
    )
    res = embloom.assess(x, y, methods=["none", "interpolate", "gaussian-noise"], folds=3,
                         seed=5, progress=False)
    assert res.summary == cli["summary"]
    assert res.per_class == cli["per_class"]
    assert res.confusion_changes == cli["confusion_changes"]
    assert res.data["confusion"] == cli["confusion"]
    assert res.data["folds"] == cli["folds"]
    assert res.data["diagnostics"] == cli["diagnostics"]
    assert json.loads(res.to_json())["summary"] == cli["summary"]


def test_assess_report_and_table(tmp_path, small_set):
    x, y = small_set
    res = embloom.assess(x, y, methods=["interpolate"], probes=["knn"], folds=3, seed=1,
                         progress=False)
    methods = {row["method"] for row in res.summary}
    assert methods == {"none", "interpolate"}
    out = tmp_path / "report"
    res.write_report(out)
    written = json.loads((out / "results.json").read_text())
    assert written["summary"] == res.summary
    assert (out / "report.html").exists()
    assert "interpolate" in str(res)


def test_assess_groups_and_given_folds(small_set):
    x, y = small_set
    groups = [f"g{i // 2}" for i in range(len(y))]
    grouped = embloom.assess(x, y, methods=["interpolate"], probes=["knn"], folds=3,
                             groups=groups, progress=False)
    assert grouped.data["split"] == "stratified-group"
    given = [i % 3 for i in range(len(y))]
    res = embloom.assess(x, y, methods=["interpolate"], probes=["knn"], fold=given,
                         progress=False)
    assert res.data["split"] == "given"
    # One record per (fold, method, probe): 3 given folds x 2 methods x 1 probe.
    assert len(res.data["folds"]) == 6


def test_progress_bar_on_stderr(small_set, capfd):
    x, y = small_set
    embloom.assess(x, y, methods=["interpolate"], probes=["knn"], folds=3, progress=True)
    assert "fold" in capfd.readouterr().err
    embloom.assess(x, y, methods=["interpolate"], probes=["knn"], folds=3, progress=False)
    assert capfd.readouterr().err == ""
