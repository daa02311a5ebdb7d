"""embloom.ray against the single-machine module, bit for bit (source: embloom.grow and
embloom.assess on the same rows in the same order and the same seed).

One local Ray cluster (2 CPUs) serves every test. The set is invented (seeded Gaussian
classes, labelled as such); it is written as Parquet shards with the rows shuffled across
them, differently for each worker count. A fault-injection switch (EMBLOOM_RAY_CRASH_ONCE,
set for the cluster's workers) makes the first task after the switch is armed end its worker
process, as a crash would; Ray runs the task again and the output must not change.
"""

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import embloom

try:
    import pyarrow as pa
    import pyarrow.parquet as pq
    import ray

    import embloom.ray as eray

    RAY_ERROR = None
except ImportError as err:  # Fail, never skip: CI installs tests/python/requirements-ray.txt.
    RAY_ERROR = err

SIZES = {"ant": 90, "bee": 30, "cat": 11, "dog": 6}
DIMS = 12


@pytest.fixture(scope="module")
def cluster(tmp_path_factory):
    if RAY_ERROR is not None:
        pytest.fail(
            f"Ray cannot be imported ({RAY_ERROR}); install it with "
            "pip install -r tests/python/requirements-ray.txt"
        )
    marker = tmp_path_factory.mktemp("fault") / "crashed"
    marker.touch()  # disarmed: a task crashes only once the marker is removed
    ray.init(
        num_cpus=2,
        include_dashboard=False,
        log_to_driver=False,
        runtime_env={"env_vars": {"EMBLOOM_RAY_CRASH_ONCE": str(marker)}},
    )
    ray.data.DataContext.get_current().enable_progress_bars = False
    yield marker
    ray.shutdown()


@pytest.fixture(scope="module")
def invented():
    """Invented data: four imbalanced Gaussian classes with unique integer ids."""
    rng = np.random.default_rng(13)
    x = np.concatenate(
        [rng.normal(i, 1.0, size=(n, DIMS)) for i, n in enumerate(SIZES.values())]
    ).astype(np.float32)
    y = np.concatenate([[name] * n for name, n in SIZES.items()])
    ids = rng.permutation(np.arange(1000, 1000 + len(y))).astype(np.int64)
    return x, y, ids


def write_shards(folder: Path, data, shards: int, seed: int) -> Path:
    x, y, ids = data
    folder.mkdir()
    order = np.random.default_rng(seed).permutation(len(y))
    for i, part in enumerate(np.array_split(order, shards)):
        table = pa.table(
            {
                "id": pa.array(ids[part]),
                "label": pa.array(y[part].tolist()),
                "embedding": pa.FixedSizeListArray.from_arrays(
                    pa.array(x[part].reshape(-1), type=pa.float32()), DIMS
                ),
            }
        )
        pq.write_table(table, folder / f"part-{i:03d}.parquet")
    return folder


def by_id(data):
    """The rows in the canonical order embloom.ray uses: by id."""
    x, y, ids = data
    order = np.argsort(ids, kind="stable")
    return x[order], y[order], ids[order]


def grow(src: Path, out: Path, **kwargs):
    """grow_dataset on the shards in ``src`` with the test set's columns."""
    return eray.grow_dataset(
        ray.data.read_parquet(str(src)),
        label_column="label",
        embedding_column="embedding",
        output=out,
        **kwargs,
    )


def assess(src: Path, workers: int):
    """assess_dataset on the shards in ``src``, steps on ``workers`` half-CPU workers."""
    return eray.assess_dataset(
        ray.data.read_parquet(str(src)),
        label_column="label",
        embedding_column="embedding",
        id_column="id",
        workers=workers,
        num_cpus=0.5,
        progress=False,
        **assess_kwargs(),
    )


def check_grown_equal(folder: Path, data, method: str, seed: int, params: dict):
    xs, ys, ids = by_id(data)
    single = embloom.grow(xs, ys, method=method, target="median", seed=seed, **params)
    names = sorted(SIZES)
    files = sorted(p.name for p in folder.glob("class-*.parquet"))
    assert files == [f"class-{i:06d}.parquet" for i in range(len(names))]
    for c, name in enumerate(names):
        t = pq.read_table(folder / f"class-{c:06d}.parquet")
        gx = np.stack(t.column("embedding").to_numpy(zero_copy_only=False)).astype(np.float32)
        real = ys == name
        k = int(real.sum())
        # Real rows of the class, in id order, unchanged.
        assert gx[:k].tobytes() == xs[real].tobytes()
        assert t.column("id").to_pylist()[:k] == ids[real].tolist()
        # Synthetic rows: the single-machine rows of the class, in order, to the bit.
        syn = (single.origin != "real") & (single.y == name)
        assert gx[k:].tobytes() == single.x[syn].tobytes()
        assert t.column("weight").to_numpy()[k:].tobytes() == single.weight[syn].tobytes()
        assert t.column("origin").to_pylist()[k:] == list(single.origin[syn])
        # Parents and partners are the input rows' ids.
        assert t.column("parent").to_pylist()[k:] == ids[single.parent[syn]].tolist()
        partner = single.partner[syn]
        want = [None if p < 0 else int(ids[p]) for p in partner]
        assert t.column("partner").to_pylist()[k:] == want
        assert t.column("id").to_pylist()[k:] == [None] * (gx.shape[0] - k)
    # Every row of the single-machine output is in exactly one class file.
    assert sum(pq.read_metadata(folder / f).num_rows for f in files) == single.x.shape[0]


@pytest.mark.parametrize(
    "method,workers,shards,params",
    [
        # Each single-class method once, the worker counts 1, 2 and 4 and the shard counts
        # spread over them (every grow is two Ray Data passes, so the list is kept short).
        ("interpolate", 1, 3, {}),
        ("extrapolate", 2, 4, {"k": 3, "magnitude": 0.3}),
        ("principal-noise", 4, 5, {}),
        ("gaussian-noise", 2, 3, {}),
        ("duplicate", 4, 4, {}),
    ],
)
def test_grow_dataset_equals_single_machine(
    cluster, invented, tmp_path, method, workers, shards, params
):
    src = write_shards(tmp_path / "in", invented, shards, seed=workers * 10 + shards)
    out = tmp_path / "grown"
    summary = grow(
        src,
        out,
        id_column="id",
        method=method,
        target="median",
        seed=21,
        workers=workers,
        num_cpus=0.5,
        **params,
    )
    assert summary["output"] == str(out.resolve())
    check_grown_equal(out, invented, method, 21, params)
    manifest = json.loads((out / "embloom-grow.json").read_text())
    # The median of 90, 30, 11, 6 is 30 (upper median), so cat and dog grow to 30.
    assert [c["real"] + c["synthetic"] for c in manifest["classes"]] == [90, 30, 30, 30]
    assert not list(tmp_path.glob(".grown.tmp-*"))


def assess_kwargs():
    return dict(
        methods=["none", "interpolate", "principal-noise"],
        probes=["knn", "linear"],
        folds=3,
        seed=5,
    )


def results_without_time(results) -> dict:
    data = json.loads(results.to_json())
    data.pop("elapsed_seconds")
    return data


@pytest.mark.parametrize("workers,shards", [(1, 2), (2, 3), (4, 5)])
def test_assess_dataset_equals_single_machine(cluster, invented, tmp_path, workers, shards):
    src = write_shards(tmp_path / "in", invented, shards, seed=100 + workers)
    got = assess(src, workers)
    xs, ys, _ = by_id(invented)
    want = embloom.assess(xs, ys, progress=False, **assess_kwargs())
    assert results_without_time(got) == results_without_time(want)
    assert got.data["folds"] and len(got.data["folds"]) == 3 * 3 * 2


def test_worker_killed_mid_grow_is_retried(cluster, invented, tmp_path):
    src = write_shards(tmp_path / "in", invented, 4, seed=7)
    out = tmp_path / "grown"
    cluster.unlink()  # armed: the next task to reach the switch ends its worker
    grow(
        src,
        out,
        id_column="id",
        method="interpolate",
        seed=21,
        workers=2,
        num_cpus=0.5,
    )
    assert cluster.exists(), "no worker was killed: the fault was not injected"
    check_grown_equal(out, invented, "interpolate", 21, {})


def test_worker_killed_mid_assess_is_retried(cluster, invented, tmp_path):
    src = write_shards(tmp_path / "in", invented, 3, seed=8)
    cluster.unlink()
    got = assess(src, 2)
    assert cluster.exists(), "no worker was killed: the fault was not injected"
    xs, ys, _ = by_id(invented)
    want = embloom.assess(xs, ys, progress=False, **assess_kwargs())
    assert results_without_time(got) == results_without_time(want)


def test_failed_grow_leaves_no_output(cluster, invented, tmp_path):
    # A one-row class cannot interpolate, and strict makes that an error: "dog" keeps one
    # row, so its task fails while the other classes' tasks may already have written.
    x, y, ids = invented
    keep = np.ones(len(y), dtype=bool)
    keep[np.flatnonzero(y == "dog")[1:]] = False
    src = write_shards(tmp_path / "in", (x[keep], y[keep], ids[keep]), 3, seed=9)
    out = tmp_path / "grown"
    with pytest.raises(Exception, match="dog"):
        grow(
            src,
            out,
            id_column="id",
            method="interpolate",
            seed=21,
            max_retries=0,
            strict=True,
        )
    assert not out.exists()
    assert not list(tmp_path.glob(".grown.*"))


def test_methods_reading_other_classes_are_refused(cluster, invented, tmp_path):
    src = write_shards(tmp_path / "in", invented, 2, seed=3)
    for method in ("borderline", "adaptive", "calibrated"):
        with pytest.raises(embloom.ParameterError, match="cannot grow a class on a Ray cluster"):
            grow(src, tmp_path / "grown", method=method)
    assert not (tmp_path / "grown").exists()


def test_import_embloom_does_not_import_ray():
    code = "import sys, embloom; assert 'ray' not in sys.modules, 'ray imported'"
    subprocess.run([sys.executable, "-c", code], check=True, env=dict(os.environ))
