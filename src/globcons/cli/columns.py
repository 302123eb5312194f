"""``globcons columns``: the column table of an alignment."""

from __future__ import annotations

import os
from typing import TYPE_CHECKING, Any

import click

from globcons.cli.options import (
    alignment_argument,
    frame_options,
    rate_options,
    rate_settings,
    reader_options,
    score_options,
    scoring_options,
)
from globcons.cli.reporting import Reporter, common, warn_low_data
from globcons.io.formats import TABLE_FORMATS

if TYPE_CHECKING:
    import pandas as pd

    from globcons.analysis.options import ScoreOptions

__all__ = ["columns"]


@click.command()
@alignment_argument
@click.option("-o", "--output", default=None, help="Output file (default: standard output; '-' too).")
@click.option("--table", "table_format", type=click.Choice(TABLE_FORMATS), default=None,
              help="Table format (default: from the output's extension, else tsv).")
@frame_options
@click.option("--chunk-rows", type=int, default=None, metavar="N",
              help="Stream the alignment (FASTA/A2M) in two passes, N records per chunk: memory independent of "
                   "the number of rows, same table. Default: in memory, unless the file needs more memory "
                   "(about 4x its size) than is available.")
@click.option("--rates", is_flag=True,
              help="Add the relative evolutionary rate of every column (rate, rate_low, rate_high): empirical "
                   "Bayes under LG with gamma rates on a tree of the alignment; writes the tree beside the table.")
@rate_options
@reader_options
@scoring_options
@common
def columns(alignment: str, output: str | None, table_format: str | None, fmt: str | None, keep_inserts: bool,
            chunk_rows: int | None, rates: bool, tree_path: str | None, rates_max_rows: int, tree_output: str | None,
            reporter: Reporter, **kw: Any) -> None:
    """Score and class every column of ALIGNMENT ('-' reads standard input).

    One row per column: class (invariant, conservative, variable, gap-rich), entropy, JSD, gap
    fraction, effective sequences, consensus and residue frequencies.
    """
    from globcons.analysis.columns import summarise
    from globcons.io.atomic import check_not_input
    from globcons.io.tables import write_table

    options = score_options(kw)
    if (tree_path or tree_output) and not rates:
        raise click.UsageError("--tree and --tree-output go with --rates")
    if rates and chunk_rows is not None:
        raise click.UsageError("--rates needs the alignment in memory; leave out --chunk-rows")
    if output is not None:
        check_not_input(output, [alignment, kw.get("sites_path"), tree_path])
    if rates:
        table, tree_file = _rate_table(alignment, options, fmt, keep_inserts, tree_path, output, tree_output,
                                       {**kw, "rates_max_rows": rates_max_rows}, reporter)
    else:
        table, tree_file = _column_table(alignment, options, fmt, keep_inserts, chunk_rows, reporter), None
    written = write_table(table, output, table_format, metadata=table.attrs, inputs=[alignment, tree_path],
                          caption=f"Column conservation of {os.path.basename(str(alignment))}")
    if tree_file is not None:
        written.append(tree_file)
    reporter.info(summarise(table))
    if rates:
        reporter.info(table.attrs["rates"]["summary"])
    warn_low_data(table, reporter)
    if written:
        reporter.info("wrote " + ", ".join(written))


def _rate_table(alignment: str, options: ScoreOptions, fmt: str | None, keep_inserts: bool, tree_path: str | None,
                output: str | None, tree_output: str | None, kw: dict[str, Any],
                reporter: Reporter) -> tuple[pd.DataFrame, str | None]:
    """The column table with the rate columns, read in memory; the tree written where it belongs (or None)."""
    from globcons.analysis.columns import score_columns
    from globcons.analysis.rate_columns import add_rate_columns
    from globcons.io.alignments import read_alignment
    from globcons.io.atomic import check_not_input
    from globcons.phylo.newick import tree_output_path, write_newick

    tree_file = tree_output_path(output, tree_output)
    if tree_file is not None:
        check_not_input(tree_file, [alignment, tree_path])
        if output is not None and os.path.abspath(tree_file) in {os.path.abspath(output),
                                                                 os.path.abspath(f"{output}.meta.json")}:
            raise click.UsageError(f"--tree-output {tree_file} would overwrite the table or its metadata")
    aligned = read_alignment(alignment, format=fmt, keep_inserts=keep_inserts)
    table, result = add_rate_columns(score_columns(aligned, options), aligned, rate_settings(kw), tree_path)
    if result.subset:
        reporter.info(f"rates: {aligned.n_rows} rows are more than --rates-max-rows {kw['rates_max_rows']}; the "
                      f"tree and rates use a representative subset of {result.rows.size} (recorded in the metadata)")
    if tree_file is not None:
        write_newick(result.fit.tree, tree_file, inputs=[alignment, tree_path])
    return table, tree_file


def _column_table(alignment: str, options: ScoreOptions, fmt: str | None, keep_inserts: bool,
                 chunk_rows: int | None, reporter: Reporter) -> pd.DataFrame:
    """The column table, read in memory or streamed (see :func:`globcons.analysis.streaming.plan_reading`).

    Parameters
    ----------
    alignment
        Path of the alignment ('-': standard input).
    options
        How to score the columns.
    fmt, keep_inserts
        How to read the file (``--format``, ``--keep-inserts``).
    chunk_rows
        ``--chunk-rows``: stream in chunks of this many records; None lets the plan decide.
    reporter
        Told why the file is streamed, when it is.

    Returns
    -------
    pandas.DataFrame
        The same table either way.
    """
    from globcons.analysis.columns import score_columns, table_from_summary
    from globcons.analysis.streaming import plan_reading, summarise_file
    from globcons.io.alignments import read_alignment

    plan = plan_reading(alignment, options.weights, keep_inserts, chunk_rows, fmt)
    if plan.note:
        reporter.info(plan.note)
    if plan.stream:
        summary = summarise_file(alignment, options, plan.chunk_rows, fmt, keep_inserts)
        return table_from_summary(summary, options)
    return score_columns(read_alignment(alignment, format=fmt, keep_inserts=keep_inserts), options)
