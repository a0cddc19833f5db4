"""Every notebook in notebooks/ runs top to bottom without error (so the examples cannot rot)."""

from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

NOTEBOOKS = sorted((Path(__file__).resolve().parent.parent / "notebooks").glob("*.ipynb"))


def test_there_are_notebooks():
    assert NOTEBOOKS, "notebooks/ holds no notebook"


@pytest.mark.slow  # subprocess, process pool or kernel start-up
@pytest.mark.parametrize("path", NOTEBOOKS, ids=lambda p: p.name)
def test_notebook_runs(path, tmp_path):
    nb = nbformat.read(path, as_version=4)
    # Executes in a scratch directory; an exception in any cell (including the
    # notebook's own assertions against quadrature) fails the test.
    NotebookClient(nb, timeout=300, kernel_name="python3", resources={"metadata": {"path": str(tmp_path)}}).execute()
    errors = [out for cell in nb.cells if cell.cell_type == "code" for out in cell.get("outputs", [])
              if out.get("output_type") == "error"]
    assert not errors
