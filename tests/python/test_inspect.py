"""inspect from Python equals `embloom inspect --json` (source: the CLI on the same file)."""

import json

import numpy as np

import embloom

from conftest import ROOT, run_cli


def cli_inspect(path) -> dict:
    return json.loads(run_cli("inspect", str(path), "--json").stdout)


def test_inspect_equals_cli_json(tmp_path, small_set):
    x, y = small_set
    # One exact duplicate and one NaN row, so those counts are not zero.
    x = np.concatenate([x, x[:1], np.full((1, 8), np.nan, dtype=np.float32)])
    y = np.concatenate([y, y[:1], ["c"]])
    src = tmp_path / "in.npz"
    np.savez(src, embeddings=x, labels=y)

    got = embloom.inspect(x, y, name=str(src))
    want = cli_inspect(src)
    assert got == want
    assert got["duplicate_rows"] == 1 and got["nonfinite_rows"] == 1
    assert got["first_nonfinite_row"] == 59


def test_inspect_of_the_demo_file_equals_cli_json():
    path = ROOT / "data" / "street-signs.npz"
    ds = embloom.read(path)
    got = embloom.inspect(ds.x, ds.y, ids=ds.ids, groups=ds.groups, name=str(path))
    assert got == cli_inspect(path)
    # data/README.md: 11 sign types, 1280 rows of 256 dims, largest 240 (stop), smallest 10.
    assert (got["rows"], got["dims"], len(got["classes"])) == (1280, 256, 11)
    assert got["imbalance_ratio"] == 24.0


def test_inspect_without_labels_equals_cli_on_a_bare_npy(tmp_path, small_set):
    x, _ = small_set
    x64 = x.astype(np.float64)
    src = tmp_path / "x.npy"
    np.save(src, x64)
    got = embloom.inspect(x64, name=str(src))
    assert got == cli_inspect(src)
    assert got["labelled"] is False and got["dtype"] == "f64"
