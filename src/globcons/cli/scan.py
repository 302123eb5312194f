"""``globcons scan``: new sequences judged against the family, streamed in batches to the tables."""

from __future__ import annotations

import contextlib
from collections.abc import Iterable
from typing import IO, TYPE_CHECKING

import click

from globcons.cli.options import column_limit, reader_options, shuffles_option
from globcons.cli.reporting import Reporter, common, count_progress, shows_progress

if TYPE_CHECKING:
    import pandas as pd

    from globcons.analysis.family import Family

__all__ = ["scan"]


@click.command()
@click.argument("sequences", metavar="SEQUENCES", type=click.Path(dir_okay=True, allow_dash=True))
@click.option("--family", "family_path", type=click.Path(dir_okay=True, allow_dash=False), default=None,
              help="Judge departures against this alignment's columns (default: the built-in frame).")
@click.option("-o", "--output", default=None, help="Summary table, one row per sequence (default: stdout).")
@click.option("--residues", "residues_path", default=None, help="Per-residue table (position, label, deviation).")
@click.option("--table", "table_format", type=click.Choice(("tsv", "csv")), default=None,
              help="Table format (default: from the extension, else tsv).")
@click.option("--jobs", "-j", type=click.IntRange(1, 256), default=None,
              help="Worker processes (default: the available cores).")
@click.option("--batch-size", type=click.IntRange(1, 100000), default=256, show_default=True,
              help="Sequences per batch handed to a worker.")
@shuffles_option
@click.option("--heatmap", "heatmap_path", default=None,
              help="Draw the departures (sequences x frame positions) to this .png/.svg/.pdf; keeps the "
                   "per-residue rows in memory, so meant for up to a few thousand sequences.")
@reader_options
@common
def scan(sequences: str, family_path: str | None, output: str | None, residues_path: str | None,
         table_format: str | None, jobs: int | None, batch_size: int, shuffles: int, heatmap_path: str | None,
         fmt: str | None, keep_inserts: bool, max_columns: int | None, reporter: Reporter) -> None:
    """Scan new SEQUENCES (FASTA, gzip, '-' for stdin) against the globin family.

    Per sequence: is it a globin, its nearest reference, helices present, key residues and heme
    pocket, departures from the family's invariant and conservative columns, and flags. With
    --residues, one row per residue with its frame label, column class and deviation.
    """
    from globcons._version import __version__
    from globcons.analysis.scanning import default_jobs
    from globcons.io.atomic import atomic_batch, check_outputs
    from globcons.io.records import stream_records
    from globcons.io.tables import metadata_path, write_metadata

    inputs = [sequences, family_path]
    check_outputs({"-o": output, "-o's metadata": metadata_path(output), "--residues": residues_path,
                   "--heatmap": heatmap_path}, inputs)
    if heatmap_path is not None:
        from globcons.plots.output import figure_format  # matplotlib only when a figure is asked for

        figure_format(heatmap_path)  # fail on a bad extension before the work
    family = _load_family(family_path, fmt, keep_inserts, reporter, column_limit(max_columns))
    if family.thin:
        reporter.warn(family.describe())
    jobs = jobs or default_jobs()
    total = None
    if shows_progress(reporter):  # a total for the display: one cheap pass counting the headers of a file
        from globcons.io.counting import count_records

        total = count_records(sequences)
    records = ((r.id, r.sequence) for r in stream_records(sequences))
    with atomic_batch():  # the tables, the heat map and the metadata land together or not at all
        counts, kept = _write_scan(records, family, output, residues_path, table_format, inputs, jobs, batch_size,
                                   shuffles, keep_residues=heatmap_path is not None, reporter=reporter, total=total)
        if heatmap_path is not None and kept:
            import pandas as pd

            from globcons.plots.heatmap import draw_departure_heatmap
            from globcons.plots.output import save_figure

            save_figure(draw_departure_heatmap(pd.concat(kept, ignore_index=True)), heatmap_path, inputs)
        written = [p for p in (output, residues_path, heatmap_path) if p not in (None, "-")]
        meta = metadata_path(output)
        if meta is not None:
            written.append(write_metadata(meta, {
                "tool": "globcons", "version": __version__, "family": family.name,
                "family_effective_sequences": round(family.n_eff, 6), "thin_family": family.thin,
                "shuffles": shuffles, "sequences": counts["sequences"],
                "globins": counts["globins"] if shuffles else None}, inputs))
    globins = (f"{counts['globins']} globins" if shuffles else
               "no significance computed (--shuffles 0), so is_globin is left blank")
    reporter.info(f"scanned {counts['sequences']} sequences: {globins}, {counts['departing']} "
                  f"with departures from the family's invariant or conservative columns ({jobs} worker"
                  f"{'s' if jobs > 1 else ''})")
    if written:
        reporter.info("wrote " + ", ".join(written))


def _load_family(family_path: str | None, fmt: str | None, keep_inserts: bool, reporter: Reporter,
                 max_columns: int | None = None) -> Family:
    """The family of --family (its columns tied to the frame), else the built-in frame family."""
    from globcons.align.anchor import map_columns
    from globcons.analysis.family import family_from_alignment, frame_family
    from globcons.io.alignments import read_alignment

    if family_path is None:
        return frame_family()
    aligned = read_alignment(family_path, format=fmt, keep_inserts=keep_inserts, max_columns=max_columns)
    mapping = map_columns(aligned)
    family = family_from_alignment(aligned, labels=mapping.labels)
    reporter.info(f"family: {aligned.n_rows} sequences, {aligned.n_columns} columns; {mapping.note}")
    return family


def _write_scan(records: Iterable[tuple[str, str]], family: Family, output: str | None, residues_path: str | None,
                table_format: str | None, inputs: list[str | None], jobs: int, batch_size: int, shuffles: int,
                keep_residues: bool, reporter: Reporter,
                total: int | None = None) -> tuple[dict[str, int], list[pd.DataFrame]]:
    """Scan ``records`` batch by batch, appending each batch's rows to the summary and residue tables.

    On a terminal a progress display counts the sequences done, of ``total`` when it is known.

    Returns
    -------
    counts, kept
        Sequences, globins and sequences with departures; the per-residue tables when ``keep_residues``
        (for the heatmap), else an empty list.
    """
    import pandas as pd

    from globcons.analysis.scanning import SUMMARY_COLUMNS, iter_scan
    from globcons.io.atomic import atomic_output
    from globcons.io.formats import table_format_for

    summary_format = table_format_for(output, table_format)
    residue_format = table_format_for(residues_path, table_format)
    counts = {"sequences": 0, "globins": 0, "departing": 0}
    kept: list[pd.DataFrame] = []
    with contextlib.ExitStack() as stack:
        out = stack.enter_context(atomic_output(output, inputs))
        res = stack.enter_context(atomic_output(residues_path, inputs)) if residues_path else None
        advance = stack.enter_context(count_progress(reporter, "scanning", "sequences", total))
        first = True
        for summary, residues in iter_scan(records, family, residues=res is not None or keep_residues, jobs=jobs,
                                           batch_size=batch_size, shuffles=shuffles):
            _write_rows(out, summary, summary_format, header=first)
            if res is not None:
                _write_rows(res, residues, residue_format, header=first)
            if keep_residues:
                kept.append(residues)
            first = False
            counts["sequences"] += len(summary)
            counts["globins"] += int((summary["is_globin"] == "yes").sum())
            counts["departing"] += int((summary["departures"] > 0).sum())
            advance(len(summary))
        if first:  # no record at all: still a header
            _write_rows(out, pd.DataFrame(columns=list(SUMMARY_COLUMNS)), summary_format, header=True)
    return counts, kept


def _write_rows(stream: IO[str], table: pd.DataFrame, fmt: str, header: bool) -> None:
    """Write ``table`` as delimited text, with its header line only for the first batch."""
    from globcons.io.tables import format_table

    text = format_table(table, fmt)
    stream.write(text if header else text.split("\n", 1)[1])
