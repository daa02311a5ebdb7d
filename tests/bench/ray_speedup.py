"""embloom.ray: wall time of grow_dataset and assess_dataset with 1 and 2 workers on a local
Ray cluster, as a ratio measured in the same run (README "On a Ray cluster").

    python tests/bench/ray_speedup.py [--rows 200000] [--dims 64] [--classes 40]
        [--assess-rows 20000] [--repeats 2]

The set is invented (seeded Gaussian classes with geometric sizes), written as 8 shuffled
Parquet shards. Each configuration runs `--repeats` times, alternating 1 and 2 workers; the
best and median walls are printed with the load average at the start and end, since the
machine may be shared.
"""

import argparse
import os
import statistics
import tempfile
import time
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq
import ray

import embloom.ray as eray


def invented(rows: int, dims: int, classes: int, seed: int = 1):
    rng = np.random.default_rng(seed)
    weights = 0.85 ** np.arange(classes)
    sizes = np.maximum(6, np.round(rows * weights / weights.sum()).astype(int))
    y = np.repeat([f"c{i:03d}" for i in range(classes)], sizes)
    centres = rng.normal(0, 2.0, size=(classes, dims))
    x = (centres[np.repeat(np.arange(classes), sizes)] + rng.normal(size=(len(y), dims))).astype(
        np.float32
    )
    ids = rng.permutation(len(y)).astype(np.int64)
    return x, y, ids


def write(folder: Path, x, y, ids, shards: int = 8) -> None:
    folder.mkdir()
    order = np.random.default_rng(0).permutation(len(y))
    for i, part in enumerate(np.array_split(order, shards)):
        pq.write_table(
            pa.table(
                {
                    "id": ids[part],
                    "label": y[part].tolist(),
                    "embedding": pa.FixedSizeListArray.from_arrays(
                        pa.array(x[part].reshape(-1), type=pa.float32()), x.shape[1]
                    ),
                }
            ),
            folder / f"part-{i:03d}.parquet",
        )


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=200_000)
    ap.add_argument("--dims", type=int, default=64)
    ap.add_argument("--classes", type=int, default=40)
    ap.add_argument("--assess-rows", type=int, default=20_000)
    ap.add_argument("--repeats", type=int, default=2)
    args = ap.parse_args()
    ray.init(num_cpus=2, include_dashboard=False, log_to_driver=False)
    ray.data.DataContext.get_current().enable_progress_bars = False
    print(f"load average at start: {os.getloadavg()}")
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        write(tmp / "grow-in", *invented(args.rows, args.dims, args.classes))
        write(tmp / "assess-in", *invented(args.assess_rows, args.dims, 10, seed=2))
        walls = {("grow", 1): [], ("grow", 2): [], ("assess", 1): [], ("assess", 2): []}
        for r in range(args.repeats):
            for workers in (1, 2):
                ds = ray.data.read_parquet(str(tmp / "grow-in"))
                t = time.perf_counter()
                eray.grow_dataset(
                    ds,
                    label_column="label",
                    embedding_column="embedding",
                    id_column="id",
                    output=tmp / f"grown-{r}-{workers}",
                    method="interpolate",
                    target="median",
                    workers=workers,
                )
                walls[("grow", workers)].append(time.perf_counter() - t)
                ds = ray.data.read_parquet(str(tmp / "assess-in"))
                t = time.perf_counter()
                eray.assess_dataset(
                    ds,
                    label_column="label",
                    embedding_column="embedding",
                    id_column="id",
                    methods=["none", "interpolate", "principal-noise"],
                    probes=["knn", "linear"],
                    folds=5,
                    workers=workers,
                    progress=False,
                )
                walls[("assess", workers)].append(time.perf_counter() - t)
                print(
                    f"repeat {r + 1}, {workers} worker(s): grow {walls[('grow', workers)][-1]:.1f} s, "
                    f"assess {walls[('assess', workers)][-1]:.1f} s",
                    flush=True,
                )
    print(f"load average at end: {os.getloadavg()}")
    for what in ("grow", "assess"):
        one, two = walls[(what, 1)], walls[(what, 2)]
        print(
            f"{what}: 1 worker best {min(one):.1f} s median {statistics.median(one):.1f} s; "
            f"2 workers best {min(two):.1f} s median {statistics.median(two):.1f} s; "
            f"speed-up (best) {min(one) / min(two):.2f}x"
        )
    ray.shutdown()


if __name__ == "__main__":
    main()
