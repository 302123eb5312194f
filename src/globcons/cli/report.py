"""``globcons report``: the offline report of an alignment (HTML, tables, figures, methods text)."""

from __future__ import annotations

import os
from typing import Any

import click

from globcons.cli.options import (
    alignment_argument,
    column_limit,
    grouping_options,
    paper_options,
    rate_settings,
    reader_options,
    report_rate_options,
    score_options,
    scoring_options,
    structure_options,
)
from globcons.cli.reporting import Reporter, common, step_progress

__all__ = ["report"]


@click.command()
@alignment_argument
@click.option("-o", "--output", "out_dir", required=True,
              help="Folder for report.html, the tables, the figures and methods.md: created, or replaced as a whole "
                   "when it is an earlier report.")
@click.option("--reference", default=None, help="Tie the frame through this row (and add its numbering).")
@click.option("--sites", "sites_path", type=click.Path(dir_okay=False), default=None,
              help="A site table of your own (label or column, role, ...).")
@click.option("--replace-sites", is_flag=True, help="Use only the sites of --sites.")
@click.option("--no-frame", is_flag=True, help="Do not tie the columns to the globin frame.")
@click.option("--no-logos", is_flag=True, help="Skip the logos of each helix (the slowest part).")
@grouping_options
@structure_options
@report_rate_options
@paper_options
@reader_options
@scoring_options
@common
def report(alignment: str, out_dir: str, fmt: str | None, keep_inserts: bool, max_columns: int | None, no_logos: bool,
           reporter: Reporter, groups_file: str | None, group_by: str | None, min_group_neff: float,
           permutations: int, seed: int, conserved_min: float, structure_path: str | None, chain_id: str | None,
           only_classes: list[str], only_labels: list[str], tex_columns: list[str], rates: bool,
           tree_path: str | None, **kw: Any) -> None:
    """Write an offline report of ALIGNMENT: report.html (self-contained), tables, figures, methods text.

    With --groups FILE or --group-by REGEX|nearest, the report adds a group contrast section and contrast.tsv;
    with --structure FILE (and --chain ID), the column table carries the chain's burial, heme contacts and
    interfaces; with --rates, the per-column evolutionary rates, their profile and the tree they used.
    """
    from globcons.errors import OptionError
    from globcons.report.html import write_report

    if chain_id is not None and structure_path is None:
        raise OptionError("--chain needs --structure FILE")
    if tree_path is not None and not rates:
        raise OptionError("--tree goes with --rates")
    rate_arguments = {"options": rate_settings(kw), "tree_path": tree_path} if rates else None
    if groups_file is not None and group_by is not None:
        raise OptionError("give either --groups FILE or --group-by REGEX|nearest, not both")
    contrast = None
    if groups_file is not None or group_by is not None:
        contrast = {"groups_file": groups_file, "group_by": group_by, "min_group_neff": min_group_neff,
                    "permutations": permutations, "seed": seed, "conserved_min": conserved_min}
    with step_progress(reporter, "report") as progress:
        result = write_report(alignment, out_dir, score_options(kw), fmt=fmt, keep_inserts=keep_inserts,
                              logos=not no_logos, contrast=contrast, structure=structure_path, chain=chain_id,
                              max_columns=column_limit(max_columns), only_classes=only_classes,
                              only_labels=only_labels, tex_columns=tex_columns or None, progress=progress,
                              rates=rate_arguments)
    if structure_path is not None:
        reporter.info(result.structure_note)
    counts = result.table.attrs["class_counts"]
    reporter.info(f"{result.table.attrs['columns']} columns: " + ", ".join(f"{v} {k}" for k, v in counts.items()))
    if rates:
        reporter.info(result.table.attrs["rates"]["summary"])
    reporter.info(f"wrote {len(result.files)} files in {os.path.abspath(out_dir)}; open {result.html}")
