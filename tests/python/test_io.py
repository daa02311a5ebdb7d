"""read/write round trips, and reading what the CLI wrote."""

import numpy as np
import pytest

import embloom


@pytest.mark.parametrize("ext", ["npz", "csv", "safetensors"])
def test_round_trip(tmp_path, small_set, ext):
    x, y = small_set
    ids = [f"row{i}" for i in range(len(y))]
    groups = [f"g{i % 5}" for i in range(len(y))]
    folds = [i % 3 for i in range(len(y))]
    path = tmp_path / f"set.{ext}"
    embloom.write(path, x, y, ids=ids, groups=groups, folds=folds)
    back = embloom.read(path)
    assert back.x.dtype == np.float32
    assert back.x.tobytes() == x.tobytes()
    assert list(back.y) == list(y)
    assert list(back.ids) == ids
    assert list(back.groups) == groups
    assert list(back.folds) == folds


def test_read_matches_numpy(tmp_path, small_set):
    x, y = small_set
    path = tmp_path / "set.npz"
    np.savez(path, embeddings=x, labels=y)
    back = embloom.read(path)
    assert back.x.tobytes() == x.tobytes()
    assert list(back.y) == list(y)
    assert back.ids is None and back.groups is None and back.folds is None
