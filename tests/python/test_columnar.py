"""Parquet and Arrow IPC (Feather v2) against pyarrow and pandas: files they write are grown
by the binary, and what the binary writes is read back by them and compared value for value.

Needs the binary built with the `columnar` feature: `.ci/run` runs
`cargo test --features hdf5,columnar` (which builds target/debug/embloom with it) before
pytest; locally, `cargo build --features columnar` first.
"""

import subprocess

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.feather as feather
import pyarrow.parquet as pq
import pytest

from conftest import cli_binary


def run(*args):
    return subprocess.run([cli_binary(), *map(str, args)], capture_output=True, text=True)


def grow(src, out, *extra):
    r = run("grow", src, "--method", "interpolate", "--target", "largest", "--seed", "5",
            "-o", out, *extra)
    if "no Parquet or Arrow support" in r.stderr:
        pytest.fail("the embloom binary lacks the columnar feature: cargo build --features columnar")
    assert r.returncode == 0, r.stderr
    return r


def table(path):
    return feather.read_table(path) if str(path).endswith((".arrow", ".feather")) else pq.read_table(path)


@pytest.fixture
def frame(small_set):
    x, y = small_set
    n = len(y)
    return x, y, {
        "id": np.arange(100, 100 + n, dtype=np.int64),
        "label": y,
        "group": [f"g{i % 4}" for i in range(n)],
        "fold": np.arange(n, dtype=np.int64) % 3,
        "path": [f"img/{i:03d}.png" for i in range(n)],
        "score": np.linspace(0.0, 1.0, n),
    }


def check_grown(out, x, y, cols, dtype=np.float32):
    """The real rows come back as written, every synthetic row is its SMOTE segment point
    (Chawla et al. 2002: parent + weight * (partner - parent)), and carried columns are the
    input's on real rows and null on synthetic ones."""
    t = table(out)
    n = len(y)
    roles = [c for c in ("id", "group", "fold", "path", "score") if c in cols]
    for name in ("label", "source_row", "embeddings", "origin", "parent", "partner", "weight",
                 *roles):
        assert name in t.column_names, name
    emb = np.array(t.column("embeddings").to_pylist(), dtype=dtype)
    assert emb[:n].tobytes() == x.astype(dtype).tobytes()
    assert t.column("label").to_pylist()[:n] == list(y)
    for role in ("id", "group", "fold"):
        if role in cols:
            assert t.column(role).to_pylist()[:n] == list(cols[role]), role
    assert t.column("source_row").to_pylist()[:n] == list(range(n))
    origin = t.column("origin").to_pylist()
    assert origin[:n] == ["real"] * n and set(origin[n:]) == {"interpolate"}
    # Grown to the largest class (40 rows) in each of three classes.
    assert len(origin) == 120
    parent = np.array(t.column("parent").to_pylist())
    partner = np.array(t.column("partner").to_pylist())
    w = np.array(t.column("weight").to_pylist(), dtype=np.float64)[n:, None]
    want = emb[parent[n:]].astype(np.float64) + w * (emb[partner[n:]] - emb[parent[n:]])
    np.testing.assert_allclose(emb[n:], want, rtol=0, atol=1e-5)
    assert (np.array(t.column("label").to_pylist())[n:] ==
            np.array(t.column("label").to_pylist())[parent[n:]]).all()
    for c in ("path", "score"):
        if c in cols:
            got = t.column(c).to_pylist()
            assert got[:n] == list(cols[c]) and got[n:] == [None] * (len(got) - n)
    return t


@pytest.mark.parametrize("ext", ["parquet", "arrow"])
def test_pyarrow_list_column_round_trip(tmp_path, frame, ext):
    x, y, cols = frame
    src = tmp_path / "in.parquet"
    emb = pa.FixedSizeListArray.from_arrays(pa.array(x.ravel()), x.shape[1])
    pq.write_table(pa.table({"embeddings": emb, **cols}), src)
    out = tmp_path / f"out.{ext}"
    grow(src, out)
    t = check_grown(out, x, y, cols)
    assert t.schema.field("embeddings").type == pa.list_(pa.float32(), x.shape[1])


def test_feather_list_column_lz4(tmp_path, frame):
    # pyarrow's Feather writer compresses with LZ4 by default; a List (not fixed) column.
    x, y, cols = frame
    src = tmp_path / "in.feather"
    feather.write_feather(pa.table({"embeddings": pa.array(list(x), pa.list_(pa.float32())),
                                    **cols}), src)
    out = tmp_path / "out.feather"
    grow(src, out)
    check_grown(out, x, y, cols)


def test_pandas_numeric_columns_float64(tmp_path, frame):
    # One float64 column per dimension, a categorical label, a text column carried along.
    x, y, cols = frame
    x64 = x.astype(np.float64) + 1e-9
    df = pd.DataFrame({f"d{j}": x64[:, j] for j in range(x.shape[1])})
    df["label"] = pd.Categorical(y)
    df["id"] = cols["id"]
    df["group"] = cols["group"]
    df["path"] = cols["path"]
    src = tmp_path / "in.parquet"
    df.to_parquet(src, index=False)
    out = tmp_path / "out.arrow"
    grow(src, out)
    c = {k: cols[k] for k in ("id", "group", "path")}
    t = check_grown(out, x64, y, c, dtype=np.float64)
    assert t.schema.field("embeddings").type == pa.list_(pa.float64(), x.shape[1])
    back = pd.read_feather(out)
    assert list(back["path"][: len(y)]) == cols["path"]


def test_same_rows_as_npz(tmp_path, frame):
    # The output format never changes which rows are drawn (same input, same seed).
    x, y, cols = frame
    src = tmp_path / "in.parquet"
    emb = pa.FixedSizeListArray.from_arrays(pa.array(x.ravel()), x.shape[1])
    pq.write_table(pa.table({"embeddings": emb, "label": y}), src)
    grow(src, tmp_path / "out.parquet")
    grow(src, tmp_path / "out.npz")
    a = np.array(pq.read_table(tmp_path / "out.parquet").column("embeddings").to_pylist(),
                 dtype=np.float32)
    b = np.load(tmp_path / "out.npz")["embeddings"]
    assert a.tobytes() == b.tobytes()


def test_bad_tables_are_refused_with_column_and_row(tmp_path, small_set):
    x, y = small_set
    emb = pa.FixedSizeListArray.from_arrays(pa.array(x.ravel()), x.shape[1])
    labels = list(y)
    labels[3] = None
    src = tmp_path / "nulls.parquet"
    pq.write_table(pa.table({"embeddings": emb, "label": labels}), src)
    r = run("inspect", src)
    assert r.returncode != 0
    assert "nulls.parquet" in r.stderr and "column 'label', row 3" in r.stderr
    assert "panicked" not in r.stderr
    ragged = tmp_path / "ragged.arrow"
    rows = [list(v) for v in x]
    rows[5] = rows[5][:-1]
    feather.write_feather(pa.table({"embeddings": pa.array(rows, pa.list_(pa.float32())),
                                    "label": y}), ragged)
    r = run("inspect", ragged)
    assert r.returncode != 0 and "column 'embeddings', row 5" in r.stderr
