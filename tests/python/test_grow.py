"""grow from Python equals `embloom grow` byte for byte (source: the CLI on the same file)."""

import numpy as np
import pytest

import embloom

from conftest import cli_grow


@pytest.mark.parametrize(
    "method,params,cli_flags",
    [
        ("interpolate", {}, []),
        ("extrapolate", {"k": 3, "magnitude": 0.3}, ["--neighbours", "3", "--magnitude", "0.3"]),
        ("principal-noise", {}, []),
        ("gaussian-noise", {}, []),
        ("mix", {"magnitude": 0.5}, ["--magnitude", "0.5"]),
        ("borderline", {"danger_neighbours": 4}, ["--danger-neighbours", "4"]),
    ],
)
def test_grow_bytes_equal_cli(tmp_path, small_set, method, params, cli_flags):
    x, y = small_set
    cli = cli_grow(tmp_path, x, y, method, *cli_flags)

    grown = embloom.grow(x, y, method=method, target="largest", seed=11, **params)

    assert grown.x.dtype == np.float32
    assert grown.x.tobytes() == cli["embeddings"].astype(np.float32).tobytes()
    assert list(grown.y) == [str(v) for v in cli["labels"]]
    assert list(grown.origin) == [str(v) for v in cli["origin"]]
    assert np.array_equal(grown.parent, cli["parent"])
    assert np.array_equal(grown.partner, cli["partner"])
    assert grown.weight.tobytes() == cli["weight"].astype(np.float32).tobytes()
    # Only a set with mix rows carries the partner's class.
    if method == "mix":
        assert list(grown.partner_label) == [str(v) for v in cli["partner_label"]]
    else:
        assert grown.partner_label is None and "partner_label" not in cli.files
    # Every class grows to the largest (40 rows), as the target asks.
    names, counts = np.unique(grown.y, return_counts=True)
    assert dict(zip(names, counts)) == {"a": 40, "b": 40, "c": 40}


def test_grow_converts_float64_with_warning(small_set):
    x, y = small_set
    with pytest.warns(UserWarning, match="float64"):
        from_f64 = embloom.grow(x.astype(np.float64), y, seed=3)
    direct = embloom.grow(x, y, seed=3)
    assert from_f64.x.tobytes() == direct.x.tobytes()


def test_grow_float32_contiguous_no_warning(small_set, recwarn):
    x, y = small_set
    embloom.grow(x, y, seed=3)
    assert not [w for w in recwarn if "converting" in str(w.message)]


def test_grow_named_classes_only(small_set):
    x, y = small_set
    grown = embloom.grow(x, y, target="largest", classes=["c"], seed=0)
    synthetic = grown.y[grown.origin != "real"]
    assert set(synthetic) == {"c"} and len(synthetic) == 34
