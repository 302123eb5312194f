"""The `globcons report` command (registered on the main group when :mod:`globcons.cli` loads)."""

from __future__ import annotations

import os

import click

from .cli import _alignment_argument, _common, _reader_options, _Reporter, _score_options, _scoring_options, cli
from .tables import check_not_input


@cli.command()
@_alignment_argument
@click.option("-o", "--output", "out_dir", required=True,
              help="Folder for report.html, the tables, the figures and methods.md (created if missing).")
@click.option("--reference", default=None, help="Tie the frame through this row (and add its numbering).")
@click.option("--sites", "sites_path", type=click.Path(dir_okay=False), default=None,
              help="A site table of your own (label or column, role, ...).")
@click.option("--replace-sites", is_flag=True, help="Use only the sites of --sites.")
@click.option("--no-frame", is_flag=True, help="Do not tie the columns to the globin frame.")
@click.option("--no-logos", is_flag=True, help="Skip the logos of each helix (the slowest part).")
@_reader_options
@_scoring_options
@_common
def report(alignment: str, out_dir: str, fmt: str | None, keep_inserts: bool, no_logos: bool,
           reporter: _Reporter, **kw) -> None:
    """Write an offline report of ALIGNMENT: report.html (self-contained), tables, figures, methods text."""
    from .report import write_report

    check_not_input(os.path.join(out_dir, "report.html"), [alignment])
    result = write_report(alignment, out_dir, _score_options(kw), fmt=fmt, keep_inserts=keep_inserts,
                          logos=not no_logos)
    counts = result.table.attrs["class_counts"]
    reporter.info(f"{result.table.attrs['columns']} columns: " + ", ".join(f"{v} {k}" for k, v in counts.items()))
    reporter.info(f"wrote {len(result.files)} files in {os.path.abspath(out_dir)}; open {result.html}")
