"""The `path`, `borrowed_classes` and `tukey` keywords of grow, assess and Stream equal the
command line's `--path`, `--borrowed-classes` and `--tukey` (source: the CLI on the same file
and seed), and do what their definitions say (sources beside each check)."""

import json

import numpy as np
import pytest

import embloom

from conftest import cli_grow, run_cli


@pytest.fixture
def sphere_set(small_set):
    """small_set's rows made non-negative and unit-norm, so both the sphere path (unit-norm
    rows) and the Tukey transform (non-negative features) apply."""
    x, y = small_set
    x = np.abs(x)
    return (x / np.linalg.norm(x, axis=1, keepdims=True)).astype(np.float32), y


@pytest.mark.parametrize(
    "method,params,cli_flags",
    [
        ("interpolate", {"path": "sphere"}, ["--path", "sphere"]),
        ("extrapolate", {"path": "sphere", "magnitude": 0.3},
         ["--path", "sphere", "--magnitude", "0.3"]),
        ("calibrated", {"borrowed_classes": 1, "tukey": 0.5, "magnitude": 0.01},
         ["--borrowed-classes", "1", "--tukey", "0.5", "--magnitude", "0.01"]),
        ("calibrated", {"borrowed_classes": 1, "tukey": "off", "magnitude": 0.01},
         ["--borrowed-classes", "1", "--tukey", "off", "--magnitude", "0.01"]),
    ],
)
def test_grow_knobs_equal_cli(tmp_path, sphere_set, method, params, cli_flags):
    x, y = sphere_set
    cli = cli_grow(tmp_path, x, y, method, *cli_flags)
    grown = embloom.grow(x, y, method=method, target="largest", seed=11, **params)
    assert grown.x.tobytes() == cli["embeddings"].astype(np.float32).tobytes()
    assert np.array_equal(grown.parent, cli["parent"])
    assert grown.weight.tobytes() == cli["weight"].astype(np.float32).tobytes()


def test_the_knobs_change_the_rows(sphere_set):
    x, y = sphere_set
    chord = embloom.grow(x, y, method="interpolate", target="largest", seed=3, unit_norm="off")
    sphere = embloom.grow(x, y, method="interpolate", target="largest", seed=3, path="sphere")
    syn = sphere.origin != "real"
    assert chord.x[syn].tobytes() != sphere.x[syn].tobytes()
    # Shoemake 1985: a point on the great circle between two unit rows has norm 1, where the
    # chord's points (renormalisation off) are shorter.
    assert np.allclose(np.linalg.norm(sphere.x[syn], axis=1), 1.0, atol=1e-5)
    assert np.linalg.norm(chord.x[syn], axis=1).min() < 0.999
    # At the median (12 rows) only class c grows, so a and b can both lend: k = 1 and k = 2
    # borrow different statistics (README, calibrated).
    one = embloom.grow(x, y, method="calibrated", seed=3, borrowed_classes=1, magnitude=0.01)
    two = embloom.grow(x, y, method="calibrated", seed=3, borrowed_classes=2, magnitude=0.01)
    assert one.x.tobytes() != two.x.tobytes()


def test_assess_knobs_equal_cli(tmp_path, sphere_set):
    x, y = sphere_set
    src = tmp_path / "in.npz"
    np.savez(src, embeddings=x, labels=y)
    cli = json.loads(
        run_cli("assess", str(src), "--methods", "none,interpolate,calibrated", "--folds", "3",
                "--seed", "5", "--path", "sphere", "--borrowed-classes", "1", "--tukey", "0.5",
                "--magnitude", "0.01", "--no-diagnostics", "--json", "--quiet").stdout
    )
    res = embloom.assess(x, y, methods=["none", "interpolate", "calibrated"], folds=3, seed=5,
                         path="sphere", borrowed_classes=1, tukey=0.5, magnitude=0.01,
                         diagnostics=False, progress=False)
    assert res.summary == cli["summary"]
    assert res.per_class == cli["per_class"]
    assert res.data["config"]["augment"] == cli["config"]["augment"]


def test_stream_takes_the_knobs_and_refuses_bad_values(small_set, sphere_set):
    x, y = sphere_set
    s = embloom.Stream(x, y, method="interpolate", target="largest", batch_size=16, seed=2,
                       path="sphere")
    synthetic = np.concatenate([xb[m] for xb, _, m in s])
    # Shoemake 1985: great-circle points between unit rows keep norm 1.
    assert len(synthetic) > 0
    assert np.allclose(np.linalg.norm(synthetic, axis=1), 1.0, atol=1e-5)
    c = embloom.Stream(x, y, method="calibrated", target="largest", batch_size=16, seed=2,
                       borrowed_classes=1, tukey=0.5, magnitude=0.01)
    assert sum(int(m.sum()) for _, _, m in c) > 0
    with pytest.raises(embloom.ParameterError, match="path"):
        embloom.grow(x, y, path="straight")
    with pytest.raises(embloom.ParameterError, match="tukey"):
        embloom.grow(x, y, method="calibrated", tukey="half")
    # README (calibrated): the Tukey transform is for non-negative features; small_set's
    # Gaussian rows have negative ones, which are refused.
    raw_x, raw_y = small_set
    with pytest.raises(ValueError):
        embloom.grow(raw_x, raw_y, method="calibrated", tukey=0.5)
