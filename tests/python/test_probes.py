"""The centroid probe and k-NN standardisation from Python give the numbers of
`embloom assess --probes knn,centroid --knn-standardize on --json` (source: the CLI on the
same file and seed)."""

import json

import numpy as np

import embloom

from conftest import run_cli


def test_centroid_and_knn_standardize_equal_cli(tmp_path, small_set):
    x, y = small_set
    x = x * np.linspace(1.0, 50.0, x.shape[1], dtype=np.float32)  # features of unequal scale
    src = tmp_path / "in.npz"
    np.savez(src, embeddings=x, labels=y)
    cli = json.loads(
        run_cli("assess", str(src), "--methods", "interpolate", "--probes", "knn,centroid",
                "--knn-standardize", "on", "--folds", "3", "--seed", "5", "--json",
                "--quiet").stdout
    )
    res = embloom.assess(x, y, methods=["interpolate"], probes=["knn", "centroid"], folds=3,
                         seed=5, knn_standardize=True, progress=False)
    assert any(row["probe"] == "centroid" for row in res.summary)
    assert res.summary == cli["summary"]
    assert res.per_class == cli["per_class"]
    assert json.loads(res.to_json())["config"]["knn"]["standardize"] is True
