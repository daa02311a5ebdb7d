"""Every notebook under notebooks/ runs top to bottom (its assert cells check the numbers), as
a user would run it after `pip install ./src/python`. nbclient and ipykernel are pinned in
tests/reference/requirements.txt; without them this test fails rather than skips, so a CI
that forgot to install them cannot pass."""

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
NOTEBOOKS = sorted((ROOT / "notebooks").glob("*.ipynb"))


def test_notebooks_are_there():
    assert NOTEBOOKS, "no notebooks found under notebooks/"


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_runs(path, tmp_path, monkeypatch):
    import nbformat  # noqa: PLC0415 - imported here so a missing package fails this test only
    from nbclient import NotebookClient

    nb = nbformat.read(path, as_version=4)
    # The repository keeps notebooks without outputs (what a reader runs is what CI runs).
    for cell in nb.cells:
        if cell.cell_type == "code":
            assert not cell.outputs and cell.execution_count is None, (
                f"{path.name}: outputs are committed; strip them "
                "(jupyter nbconvert --clear-output --inplace)")
    monkeypatch.setenv("EMBLOOM_NOTEBOOK_OUT", str(tmp_path))
    client = NotebookClient(nb, timeout=600, kernel_name="python3",
                            resources={"metadata": {"path": str(path.parent)}})
    client.execute()
