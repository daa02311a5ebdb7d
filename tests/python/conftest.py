"""Shared helpers for the Python module's tests: the CLI binary and a small labelled set."""

import os
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[2]


def cli_binary() -> str:
    """The embloom binary: $EMBLOOM_BIN, else the workspace's debug or release build."""
    env = os.environ.get("EMBLOOM_BIN")
    if env:
        return env
    for profile in ("debug", "release"):
        path = ROOT / "target" / profile / "embloom"
        if path.exists():
            return str(path)
    found = shutil.which("embloom")
    if found:
        return found
    # Fail, never skip: CI builds the binary (cargo test) before running these tests.
    raise RuntimeError("no embloom binary: run `cargo build` at the repository root first")


def run_cli(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([cli_binary(), *args], capture_output=True, text=True, check=True)


def cli_grow(tmp_path: Path, x, y, method: str, *flags: str):
    """`embloom grow` of the rows ``x``, ``y`` to the largest class at seed 11, as loaded
    from its npz output."""
    src = tmp_path / "in.npz"
    np.savez(src, embeddings=x, labels=y)
    out = tmp_path / "out.npz"
    run_cli("grow", str(src), "--method", method, "--target", "largest", "--seed", "11",
            "-o", str(out), *flags)
    return np.load(out, allow_pickle=False)


@pytest.fixture
def small_set():
    """Three imbalanced Gaussian classes in 8 dimensions (seeded; no figure depends on it
    beyond the CLI/module equality the tests check)."""
    rng = np.random.default_rng(7)
    sizes = {"a": 40, "b": 12, "c": 6}
    x = np.concatenate(
        [rng.normal(i, 1.0, size=(n, 8)) for i, n in enumerate(sizes.values())]
    ).astype(np.float32)
    y = np.concatenate([[name] * n for name, n in sizes.items()])
    return x, y
