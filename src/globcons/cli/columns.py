"""``globcons columns``: the column table of an alignment."""

from __future__ import annotations

import os
from typing import TYPE_CHECKING, Any

import click

from globcons.cli.options import (
    alignment_argument,
    frame_options,
    paper_options,
    rate_options,
    rate_settings,
    reader_options,
    score_options,
    scoring_options,
    structure_options,
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
@structure_options
@click.option("--rates", is_flag=True,
              help="Add the relative evolutionary rate of every column (rate, rate_low, rate_high): empirical "
                   "Bayes under LG with gamma rates on a tree of the alignment; writes the tree beside the table.")
@rate_options
@paper_options
@reader_options
@scoring_options
@common
def columns(alignment: str, output: str | None, table_format: str | None, fmt: str | None, keep_inserts: bool,
            max_columns: int | None, chunk_rows: int | None, structure_path: str | None, chain_id: str | None,
            only_classes: list[str], only_labels: list[str], tex_columns: list[str], rates: bool,
            tree_path: str | None, rates_max_rows: int, tree_output: str | None,
            reporter: Reporter, **kw: Any) -> None:
    """Score and class every column of ALIGNMENT ('-' reads standard input).

    One row per column: class (invariant, conservative, variable, gap-rich), entropy, JSD, gap
    fraction, effective sequences, consensus and residue frequencies. With --structure, also the
    accessibility, burial, heme contact and interfaces of the chain residue on each column.
    """
    from globcons.analysis.columns import summarise
    from globcons.analysis.paper import keep_rows, write_column_table
    from globcons.io.atomic import check_not_input
    from globcons.io.formats import table_format_for

    options = score_options(kw)
    if (tree_path or tree_output) and not rates:
        raise click.UsageError("--tree and --tree-output go with --rates")
    if rates and chunk_rows is not None:
        raise click.UsageError("--rates needs the alignment in memory; leave out --chunk-rows")
    if output is not None:
        check_not_input(output, [alignment, kw.get("sites_path"), structure_path, tree_path])
    out_format = table_format_for(output, table_format)
    if structure_path is not None:
        table = _with_structure(alignment, options, fmt, keep_inserts, chunk_rows, structure_path, chain_id,
                                reporter, max_columns)
    else:
        if chain_id is not None:
            raise click.UsageError("--chain needs --structure FILE")
        table = None if rates else _column_table(alignment, options, fmt, keep_inserts, chunk_rows, reporter,
                                                 max_columns)
    tree_file = None
    if rates:
        table, tree_file = _rate_table(alignment, options, fmt, keep_inserts, tree_path, output, tree_output,
                                       {**kw, "rates_max_rows": rates_max_rows}, reporter, max_columns, table)
    shown = keep_rows(table, only_classes, only_labels)
    written = write_column_table(shown, output, out_format, inputs=[alignment, tree_path], tex_columns=tex_columns,
                                 caption=f"Column conservation of {os.path.basename(str(alignment))}")
    if tree_file is not None:
        written.append(tree_file)
    reporter.info(summarise(table))
    if rates:
        reporter.info(table.attrs["rates"]["summary"])
    if shown is not table:
        reporter.info(f"kept {len(shown)} of {len(table)} columns in the table ({_choice(only_classes, only_labels)})")
    if tex_columns and out_format != "tex":
        reporter.warn(f"--tex-columns applies to tex tables only; this table is {out_format}")
    warn_low_data(table, reporter)
    if written:
        reporter.info("wrote " + ", ".join(written))


def _rate_table(alignment: str, options: ScoreOptions, fmt: str | None, keep_inserts: bool, tree_path: str | None,
                output: str | None, tree_output: str | None, kw: dict[str, Any], reporter: Reporter,
                max_columns: int | None = None,
                table: pd.DataFrame | None = None) -> tuple[pd.DataFrame, str | None]:
    """The column table (``table``, or scored here) with the rate columns, the alignment read in memory; the
    tree written where it belongs (its path, or None)."""
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
    aligned = read_alignment(alignment, format=fmt, keep_inserts=keep_inserts, max_columns=max_columns)
    base = score_columns(aligned, options) if table is None else table
    table, result = add_rate_columns(base, aligned, rate_settings(kw), tree_path)
    if result.subset:
        reporter.info(f"rates: {aligned.n_rows} rows are more than --rates-max-rows {kw['rates_max_rows']}; the "
                      f"tree and rates use a representative subset of {result.rows.size} (recorded in the metadata)")
    if tree_file is not None:
        write_newick(result.fit.tree, tree_file, inputs=[alignment, tree_path])
    return table, tree_file


def _with_structure(alignment: str, options: ScoreOptions, fmt: str | None, keep_inserts: bool,
                    chunk_rows: int | None, structure_path: str, chain_id: str | None,
                    reporter: Reporter, max_columns: int | None = None) -> pd.DataFrame:
    """The column table with the structural columns (the alignment is read in memory: the chain is placed on it)."""
    from globcons.analysis.columns import score_columns
    from globcons.errors import OptionError
    from globcons.io.alignments import read_alignment
    from globcons.structure.context import add_structure_columns

    if chunk_rows is not None:
        raise OptionError("--structure places the chain on the alignment in memory; drop --chunk-rows")
    aligned = read_alignment(alignment, format=fmt, keep_inserts=keep_inserts, max_columns=max_columns)
    table, note = add_structure_columns(aligned, score_columns(aligned, options), structure_path, chain_id)
    reporter.info(note)
    return table


def _column_table(alignment: str, options: ScoreOptions, fmt: str | None, keep_inserts: bool,
                 chunk_rows: int | None, reporter: Reporter, max_columns: int | None = None) -> pd.DataFrame:
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
    max_columns
        Refuse a wider alignment (``--max-columns``).

    Returns
    -------
    pandas.DataFrame
        The same table either way.
    """
    from globcons.analysis.columns import score_columns, table_from_summary
    from globcons.analysis.streaming import plan_reading, summarise_file
    from globcons.errors import InputError
    from globcons.io.alignments import read_alignment

    plan = plan_reading(alignment, options.weights, keep_inserts, chunk_rows, fmt)
    if plan.note:
        reporter.info(plan.note)
    if plan.stream:
        summary = summarise_file(alignment, options, plan.chunk_rows, fmt, keep_inserts)
        if max_columns is not None and summary.n_columns > max_columns:
            raise InputError(f"{summary.n_columns} columns, more than the {max_columns} this command takes "
                             f"(--max-columns); give --max-columns {summary.n_columns} to go on", source=alignment)
        return table_from_summary(summary, options)
    return score_columns(read_alignment(alignment, format=fmt, keep_inserts=keep_inserts, max_columns=max_columns),
                         options)


def _choice(only_classes: list[str], only_labels: list[str]) -> str:
    """How the rows were chosen, in words."""
    parts = ([f"classes {', '.join(only_classes)}"] if only_classes else []) + \
        ([f"labels {', '.join(only_labels)}"] if only_labels else [])
    return "; ".join(parts)
