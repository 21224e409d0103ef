"""Every notebook in notebooks/ executes headless (nbclient) without error."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

NOTEBOOKS = sorted((Path(__file__).parents[1] / "notebooks").glob("*.ipynb"))


def test_there_are_notebooks():
    assert NOTEBOOKS


@pytest.mark.slow
@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_executes(path, tmp_path):
    import nbformat
    from nbclient import NotebookClient

    # run a copy in a scratch folder so outputs (specs, pages) do not land in the repo
    work = tmp_path / "notebooks"
    shutil.copytree(path.parent, work, ignore=shutil.ignore_patterns("*.ipynb", ".*"))
    nb = nbformat.read(path, as_version=4)
    client = NotebookClient(
        nb, timeout=180, kernel_name="python3", resources={"metadata": {"path": str(work)}}
    )
    client.execute()
    errors = [
        out
        for cell in nb.cells
        if cell.cell_type == "code"
        for out in cell.get("outputs", [])
        if out.get("output_type") == "error"
    ]
    assert not errors
