"""The embedded demo: a synthetic myoglobin family from a fictional survey, and the whole job run on it.

The data (``globcons/data/demo``) is simulated, not sequenced: see data_examples/README.md for the
scenario (the fictional Kelpie Bay Marine Station survey) and data_examples/make_demo.py for how it
was made. :func:`run_demo` classes the family's columns, scans the survey's new sequences against the
family, checks proposed mutations of one of them, and writes the offline report.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import pandas as pd

from globcons.analysis.columns import score_columns, summarise
from globcons.errors import OutputError
from globcons.io.alignments import read_alignment
from globcons.io.atomic import check_folder_output, make_folder
from globcons.io.records import read_sequences
from globcons.io.tables import write_table

__all__ = ["demo_alignment_path", "demo_file", "DemoResult", "run_demo"]

DEMO_ALIGNMENT = "demo_family.fasta"


def demo_file(name: str) -> Path:
    """Path of a packaged demo file (``demo_family.fasta``, ``demo_queries.fasta``, ``demo_target.fasta``,
    ``demo_mutations.txt``)."""
    return Path(str(resources.files("globcons") / "data" / "demo" / name))


def demo_alignment_path() -> Path:
    """Path of the packaged demo alignment (48 synthetic myoglobins, aligned FASTA)."""
    return demo_file(DEMO_ALIGNMENT)


@dataclass(frozen=True)
class DemoResult:
    """What :func:`run_demo` produced: the tables, the summary line, the report and the files written."""

    table: pd.DataFrame
    summary: str
    files: tuple[str, ...]
    scan_summary: pd.DataFrame | None = None
    checks: pd.DataFrame | None = None
    report: Path | None = None


def run_demo(out_dir: str | os.PathLike = "globcons-demo", full: bool = True) -> DemoResult:
    """Run the job on the demo data and write its outputs into ``out_dir``.

    The folder is created if missing; files already in it that the demo does not write are left alone,
    except its ``report`` folder, which is replaced as a whole.

    Parameters
    ----------
    full
        Also scan the demo queries, check the demo mutations and write the report (else only the
        column table).
    """
    folder = Path(out_dir)
    if folder.exists() and not folder.is_dir():
        raise OutputError("exists and is not a folder", source=str(folder))
    make_folder(folder)
    if full:
        check_folder_output(folder / "report")  # refuse before the work, not after it
    alignment = read_alignment(demo_alignment_path())
    table = score_columns(alignment)
    files = write_table(table, folder / "columns.tsv", metadata=table.attrs)
    if not full:
        return DemoResult(table, summarise(table), tuple(files))

    from globcons.analysis.family import family_from_alignment
    from globcons.analysis.scanning import scan
    from globcons.core.vocabulary import CAUTION
    from globcons.mutations.judge import check
    from globcons.mutations.notation import read_mutation_file
    from globcons.mutations.target import prepare_target
    from globcons.report.html import write_report

    family = family_from_alignment(alignment, labels=tuple(table["frame_label"]))
    queries = [(r.id, r.sequence) for r in read_sequences(demo_file("demo_queries.fasta"))]
    scan_summary, residues = scan(queries, family=family)
    files += write_table(scan_summary, folder / "scan_summary.tsv", metadata={"family": str(demo_alignment_path())})
    files += write_table(residues, folder / "scan_residues.tsv", sidecar=False)
    target_record = next(iter(read_sequences(demo_file("demo_target.fasta"))))
    target = prepare_target(target_record.sequence, target_record.id, family=family)
    checks = check(target, read_mutation_file(demo_file("demo_mutations.txt")))
    files += write_table(checks, folder / "checks.tsv", metadata={"target": target.id, "caution": CAUTION})
    report = write_report(alignment, folder / "report")
    files += list(report.files)
    return DemoResult(table, summarise(table), tuple(files), scan_summary, checks, report.html)
