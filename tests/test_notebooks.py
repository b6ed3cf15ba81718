"""Every notebook in notebooks/ runs top to bottom without an error or a warning.

Executed with nbclient on a python3 kernel (ipykernel), in the notebooks folder, with the
non-interactive matplotlib backend (MPLBACKEND=Agg) and the shipped sample data. Notebooks are
committed without outputs; this test checks that too, so the repository stays diff-friendly.
"""

import os
from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

NOTEBOOKS = Path(__file__).resolve().parents[1] / "notebooks"
PATHS = sorted(NOTEBOOKS.glob("*.ipynb"))


def test_the_promised_notebooks_are_there():
    names = {p.name for p in PATHS}
    assert {"01_sunny_room_study.ipynb", "02_custom_network_sunspace.ipynb",
            "03_room_from_scratch.ipynb"} <= names


@pytest.mark.parametrize("path", PATHS, ids=[p.stem for p in PATHS])
def test_notebook_is_committed_without_outputs(path):
    nb = nbformat.read(path, as_version=4)
    for k, cell in enumerate(nb.cells):
        if cell.cell_type == "code":
            assert not cell.outputs, f"{path.name} cell {k} has outputs; clear them"
            assert cell.execution_count is None, f"{path.name} cell {k} has an execution count"


@pytest.mark.parametrize("path", PATHS, ids=[p.stem for p in PATHS])
def test_notebook_executes(path, monkeypatch):
    monkeypatch.setenv("MPLBACKEND", "Agg")  # inherited by the kernel
    # the kernel imports the thermonet of this checkout, not another installed copy
    root = str(NOTEBOOKS.parent)
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join(
        [root, *filter(None, [os.environ.get("PYTHONPATH")])]))
    nb = nbformat.read(path, as_version=4)
    client = NotebookClient(nb, timeout=600, kernel_name="python3",
                            resources={"metadata": {"path": str(NOTEBOOKS)}})
    client.execute()  # raises CellExecutionError naming the cell on any error
    for k, cell in enumerate(nb.cells):
        for out in cell.get("outputs", []):
            if out.get("output_type") == "stream" and out.get("name") == "stderr":
                assert "Warning" not in out.get("text", ""), (
                    f"{path.name} cell {k} warned:\n{out['text']}")
