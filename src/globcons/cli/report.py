"""``globcons report``: the offline report of an alignment (HTML, tables, figures, methods text)."""

from __future__ import annotations

import os
from typing import Any

import click

from globcons.cli.options import (
    alignment_argument,
    grouping_options,
    rate_settings,
    reader_options,
    report_rate_options,
    score_options,
    scoring_options,
)
from globcons.cli.reporting import Reporter, common

__all__ = ["report"]


@click.command()
@alignment_argument
@click.option("-o", "--output", "out_dir", required=True,
              help="Folder for report.html, the tables, the figures and methods.md (created if missing).")
@click.option("--reference", default=None, help="Tie the frame through this row (and add its numbering).")
@click.option("--sites", "sites_path", type=click.Path(dir_okay=False), default=None,
              help="A site table of your own (label or column, role, ...).")
@click.option("--replace-sites", is_flag=True, help="Use only the sites of --sites.")
@click.option("--no-frame", is_flag=True, help="Do not tie the columns to the globin frame.")
@click.option("--no-logos", is_flag=True, help="Skip the logos of each helix (the slowest part).")
@grouping_options
@report_rate_options
@reader_options
@scoring_options
@common
def report(alignment: str, out_dir: str, fmt: str | None, keep_inserts: bool, no_logos: bool,
           reporter: Reporter, groups_file: str | None, group_by: str | None, min_group_neff: float,
           permutations: int, seed: int, conserved_min: float, rates: bool, tree_path: str | None,
           **kw: Any) -> None:
    """Write an offline report of ALIGNMENT: report.html (self-contained), tables, figures, methods text.

    With --groups FILE or --group-by REGEX|nearest, the report adds a group contrast section and contrast.tsv;
    with --rates, the per-column evolutionary rates, their profile and the tree they used.
    """
    from globcons.errors import OptionError
    from globcons.io.atomic import check_not_input
    from globcons.report.html import write_report

    check_not_input(os.path.join(out_dir, "report.html"), [alignment, groups_file])
    if tree_path is not None and not rates:
        raise OptionError("--tree goes with --rates")
    rate_arguments = {"options": rate_settings(kw), "tree_path": tree_path} if rates else None
    if groups_file is not None and group_by is not None:
        raise OptionError("give either --groups FILE or --group-by REGEX|nearest, not both")
    contrast = None
    if groups_file is not None or group_by is not None:
        contrast = {"groups_file": groups_file, "group_by": group_by, "min_group_neff": min_group_neff,
                    "permutations": permutations, "seed": seed, "conserved_min": conserved_min}
    result = write_report(alignment, out_dir, score_options(kw), fmt=fmt, keep_inserts=keep_inserts,
                          logos=not no_logos, contrast=contrast, rates=rate_arguments)
    counts = result.table.attrs["class_counts"]
    reporter.info(f"{result.table.attrs['columns']} columns: " + ", ".join(f"{v} {k}" for k, v in counts.items()))
    if rates:
        reporter.info(result.table.attrs["rates"]["summary"])
    reporter.info(f"wrote {len(result.files)} files in {os.path.abspath(out_dir)}; open {result.html}")
