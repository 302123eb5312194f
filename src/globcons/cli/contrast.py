"""``globcons contrast``: the columns that set groups of sequences apart."""

from __future__ import annotations

import os
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import click

from globcons.cli.options import alignment_argument, column_limit, grouping_options, reader_options
from globcons.cli.reporting import Reporter, common
from globcons.core.weights import SCHEMES
from globcons.io.formats import TABLE_FORMATS

if TYPE_CHECKING:
    import numpy as np
    import pandas as pd

    from globcons.core.alignment import Alignment

__all__ = ["contrast", "contrast_from_options"]


def contrast_from_options(aligned: Alignment, kw: Mapping[str, Any], weights: str, identity: float, max_gaps: float,
                          reference: str | None = None, frame: bool = True) -> tuple[np.ndarray, pd.DataFrame]:
    """Assign the groups and compute the contrast table from the command's options.

    Parameters
    ----------
    aligned
        The alignment.
    kw
        The command's :func:`~globcons.cli.options.grouping_options` values.
    weights, identity, max_gaps, reference, frame
        As ``--weights``, ``--identity``, ``--max-gaps``, ``--reference`` and not ``--no-frame``.

    Returns
    -------
    groups, table
        The group assignment (:func:`globcons.analysis.contrast.assign_groups`) and the contrast table.
    """
    from globcons.analysis.contrast import assign_groups, contrast_columns
    from globcons.core.classes import ClassRules
    from globcons.errors import OptionError

    if (kw.get("groups_file") is None) == (kw.get("group_by") is None):
        raise OptionError("give either --groups FILE or --group-by REGEX|nearest")
    groups = assign_groups(aligned, groups_file=kw.get("groups_file"), group_by=kw.get("group_by"))
    return groups, contrast_columns(aligned, groups, weights=weights, identity=identity,
                                    min_group_neff=kw["min_group_neff"], permutations=kw["permutations"],
                                    seed=kw["seed"], rules=ClassRules(max_gaps=max_gaps),
                                    conserved_min=kw["conserved_min"], reference=reference, frame=frame)


@click.command()
@alignment_argument
@grouping_options
@click.option("-o", "--output", default=None, help="Output file (default: standard output; '-' too).")
@click.option("--table", "table_format", type=click.Choice(TABLE_FORMATS), default=None,
              help="Table format (default: from the output's extension, else tsv).")
@click.option("--figure", "figure_path", default=None,
              help="Draw the top positions as per-group logos and the contrast along the frame (.png/.svg/.pdf).")
@click.option("--top", type=click.IntRange(1, 40), default=12, show_default=True,
              help="Positions drawn in the figure's logos.")
@click.option("--reference", default=None, help="Tie the frame through this row.")
@click.option("--no-frame", is_flag=True, help="Do not tie the columns to the globin frame.")
@click.option("--weights", type=click.Choice(SCHEMES), default="henikoff", show_default=True,
              help="Sequence weighting (computed on the whole alignment).")
@click.option("--identity", type=float, default=0.8, show_default=True, help="Identity threshold of --weights cluster.")
@click.option("--max-gaps", type=float, default=0.5, show_default=True,
              help="A column (or a group in it) with a larger weighted gap fraction is gap-rich (not conserved).")
@reader_options
@common
def contrast(alignment: str, output: str | None, table_format: str | None, figure_path: str | None, top: int,
             reference: str | None, no_frame: bool, weights: str, identity: float, max_gaps: float, fmt: str | None,
             keep_inserts: bool, max_columns: int | None, reporter: Reporter, **kw: Any) -> None:
    """Find the columns of ALIGNMENT that set groups of sequences apart.

    Per column: each group's consensus and conservation, the contrast between the groups (Jensen-Shannon
    divergence, bits), the mutual information of residue and group (Miller-Madow corrected), a G-test
    p-value (and a permutation p-value with --permutations), and a class: group-specific, shared, mixed,
    gap-rich.
    """
    from globcons.analysis.contrast import summarise_contrast, top_contrast
    from globcons.io.alignments import read_alignment
    from globcons.io.atomic import check_outputs
    from globcons.io.tables import metadata_path, write_table

    inputs = [alignment, kw.get("groups_file")]
    check_outputs({"-o": output, "-o's metadata": metadata_path(output), "--figure": figure_path}, inputs)
    if figure_path is not None:
        from globcons.plots.output import figure_format  # matplotlib only when a figure is asked for

        figure_format(figure_path)
    aligned = read_alignment(alignment, format=fmt, keep_inserts=keep_inserts, max_columns=column_limit(max_columns))
    groups, table = contrast_from_options(aligned, kw, weights, identity, max_gaps, reference, not no_frame)
    written = write_table(table, output, table_format, metadata=table.attrs, inputs=inputs,
                          caption=f"Group contrast of {os.path.basename(str(alignment))}")
    if figure_path is not None:
        from globcons.plots.contrast import draw_contrast
        from globcons.plots.output import save_figure

        save_figure(draw_contrast(table, aligned, groups, top=top), figure_path, inputs)
        written.append(figure_path)
    reporter.info(summarise_contrast(table))
    best = top_contrast(table, 3)
    if len(best):
        reporter.info("highest contrast: " + ", ".join(
            f"{row['frame_label'] or 'column ' + str(row['column'])} ({row['contrast']:.2f} bits, {row['class']})"
            for _, row in best.iterrows()))
    if written:
        reporter.info("wrote " + ", ".join(written))
