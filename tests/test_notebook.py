"""The walk-through notebook runs with the current code (executed with nbclient)."""

from pathlib import Path

import nbformat
from nbclient import NotebookClient

NOTEBOOK = Path(__file__).resolve().parent.parent / "notebooks" / "walkthrough.ipynb"


def test_walkthrough_notebook_runs(tmp_path):
    notebook = nbformat.read(NOTEBOOK, as_version=4)
    client = NotebookClient(notebook, timeout=300, kernel_name="python3",
                            resources={"metadata": {"path": str(tmp_path)}})
    client.execute()
    outputs = [o for cell in notebook.cells if cell.cell_type == "code" for o in cell.get("outputs", [])]
    assert not [o for o in outputs if o.output_type == "error"]
    text = " ".join(str(o.get("data", {}).get("text/plain", "")) + str(o.get("text", "")) for o in outputs)
    assert "sperm_whale_myoglobin" in text and "invariant" in text
