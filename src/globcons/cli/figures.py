"""The figure commands, ``globcons logo`` and ``globcons profile``."""

from __future__ import annotations

import os
from typing import Any

import click

from globcons.cli.options import (
    LOGO_MAX_COLUMNS,
    alignment_argument,
    column_limit,
    frame_options,
    rate_options,
    reader_options,
    score_options,
    scoring_options,
    with_rates,
)
from globcons.cli.reporting import Reporter, common
from globcons.plots.conservation import PROFILE_SCORES  # the figure commands need matplotlib anyway
from globcons.plots.output import FIGURE_FORMATS

__all__ = ["logo", "profile"]

_OUTPUT_HELP = f"Figure file; the format follows the extension ({', '.join(FIGURE_FORMATS)})."


@click.command()
@alignment_argument
@click.option("-o", "--output", required=True, help=_OUTPUT_HELP)
@click.option("--range", "label_range", default=None, metavar="FIRST-LAST",
              help="Frame labels to draw, both ends included, e.g. F1-FG5 or E7.")
@click.option("--columns", "column_spec", default=None, metavar="FIRST-LAST",
              help="Alignment columns to draw (1-based, inclusive), e.g. 80-100.")
@frame_options
@click.option("--title", default=None, help="Figure title (default: the file and the region).")
@reader_options
@scoring_options
@common
def logo(alignment: str, output: str, label_range: str | None, column_spec: str | None, title: str | None,
         fmt: str | None, keep_inserts: bool, max_columns: int | None, reporter: Reporter, **kw: Any) -> None:
    """Draw a weighted sequence logo of ALIGNMENT (all columns, or a --range / --columns region).

    Letter heights are information in bits with the small-sample correction; gap-rich columns are
    hatched bands without letters; the x axis carries the frame labels.
    """
    from globcons.analysis.columns import score_columns
    from globcons.errors import OptionError
    from globcons.io.alignments import read_alignment
    from globcons.io.atomic import check_not_input
    from globcons.plots.logo import column_range, draw_logo
    from globcons.plots.output import figure_format

    if label_range is not None and column_spec is not None:
        raise click.UsageError("give --range or --columns, not both")
    figure_format(output)
    check_not_input(output, [alignment])
    options = score_options(kw)
    aligned = read_alignment(alignment, format=fmt, keep_inserts=keep_inserts, max_columns=column_limit(max_columns))
    table = score_columns(aligned, options)
    if label_range is not None:
        if not (table["frame_label"] != "").any():
            raise OptionError(f"--range {label_range}: the alignment's columns have no frame labels; use --columns")
        chosen = column_range(table, label_range, by="label")
    elif column_spec is not None:
        chosen = column_range(table, column_spec, by="column")
    else:
        chosen = list(table["column"].astype(int))
    most = LOGO_MAX_COLUMNS if max_columns is None else max_columns
    if len(chosen) > most:
        raise OptionError(f"a logo of {len(chosen)} columns is more than the {most} drawn at most (about 2 ms a "
                          f"letter): choose a region with --range or --columns, or give --max-columns {len(chosen)}")
    rows = table.set_index("column").loc[chosen]
    labels = list(rows["frame_label"].astype(str))
    region = label_range or (f"columns {column_spec}" if column_spec else "all columns")
    heading = title if title is not None else f"{os.path.basename(str(alignment))}: {region}"
    draw_logo(aligned, chosen, output, weights=options.weights, identity=options.identity, labels=labels,
              max_gaps=options.rules.max_gaps, title=heading, inputs=[alignment])
    gap_rich = int((rows["gap_fraction"] > options.rules.max_gaps).sum())
    span = f"{labels[0] or chosen[0]}..{labels[-1] or chosen[-1]}"
    reporter.info(f"logo of {len(chosen)} columns ({span}, {gap_rich} gap-rich) from {aligned.n_rows} sequences "
                  f"({table.attrs['effective_sequences']:.1f} effective, {options.weights} weights); wrote {output}")


@click.command()
@alignment_argument
@click.option("-o", "--output", required=True, help=_OUTPUT_HELP)
@click.option("--score", type=click.Choice(tuple(PROFILE_SCORES)), default="conservation", show_default=True,
              help="Score to plot, as the table has it (higher = more conserved; gaps lower every score).")
@frame_options
@click.option("--title", default=None, help="Figure title (default: the file and the score).")
@rate_options
@reader_options
@scoring_options
@common
def profile(alignment: str, output: str, score: str, title: str | None, fmt: str | None, keep_inserts: bool,
            max_columns: int | None, reporter: Reporter, **kw: Any) -> None:
    """Draw a conservation score of ALIGNMENT along the frame positions.

    Helices are labelled bands, markers are coloured by column class, functional sites are marked and named.
    """
    from globcons.analysis.columns import score_columns
    from globcons.io.alignments import read_alignment
    from globcons.io.atomic import check_not_input
    from globcons.plots.conservation import draw_profile
    from globcons.plots.output import figure_format

    figure_format(output)
    check_not_input(output, [alignment, kw.get("sites_path"), kw.get("tree_path")])
    if score != "rates" and (kw.get("tree_path") or kw.get("tree_output")):
        raise click.UsageError("--tree and --tree-output go with --score rates")
    aligned = read_alignment(alignment, format=fmt, keep_inserts=keep_inserts, max_columns=column_limit(max_columns))
    table = score_columns(aligned, score_options(kw))
    if score == "rates":
        table = with_rates(table, aligned, kw, [alignment, kw.get("tree_path"), output], reporter.info)
    draw_profile(table, output, score=score, title=title, inputs=[alignment, kw.get("sites_path")])
    labelled = int((table["frame_label"] != "").sum())
    shown = labelled or len(table)
    n_sites = int((table.loc[table["frame_label"] != "", "sites"] != "").sum()) if labelled else \
        int((table["sites"] != "").sum())
    reporter.info(f"profile of {score} over {shown} {'frame positions' if labelled else 'columns'} "
                  f"({n_sites} functional sites) from {aligned.n_rows} sequences; wrote {output}")
