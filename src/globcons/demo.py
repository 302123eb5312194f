"""The embedded demo: a synthetic myoglobin family from a fictional survey, and the job run on it.

The data (``globcons/data/demo``) is simulated, not sequenced: see data_examples/README.md for the
scenario (the fictional Kelpie Bay Marine Station survey) and data_examples/make_demo.py for how it
was made.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import pandas as pd

from .columns import score_columns, summarise
from .errors import OutputError
from .io import read_alignment
from .tables import write_table

__all__ = ["demo_alignment_path", "DemoResult", "run_demo"]

DEMO_ALIGNMENT = "demo_family.fasta"


def demo_alignment_path() -> Path:
    """Path of the packaged demo alignment (48 synthetic myoglobins, aligned FASTA)."""
    return Path(str(resources.files("globcons") / "data" / "demo" / DEMO_ALIGNMENT))


@dataclass(frozen=True)
class DemoResult:
    """What :func:`run_demo` produced: the column table, its summary line and the files written."""

    table: pd.DataFrame
    summary: str
    files: tuple[str, ...]


def run_demo(out_dir: str | os.PathLike = "globcons-demo") -> DemoResult:
    """Run the main job on the demo data and write its outputs into ``out_dir``.

    The folder is created if missing; files already in it that the demo does not write are left alone.

    Returns
    -------
    DemoResult
    """
    folder = Path(out_dir)
    if folder.exists() and not folder.is_dir():
        raise OutputError("exists and is not a folder", source=str(folder))
    folder.mkdir(parents=True, exist_ok=True)
    alignment = read_alignment(demo_alignment_path())
    table = score_columns(alignment)
    files = write_table(table, folder / "columns.tsv", metadata=table.attrs)
    return DemoResult(table, summarise(table), tuple(files))
