"""The ``globcons`` command: parses arguments, calls the library, writes outputs. No science here.

Exit status: 0 success, 2 bad input or usage (one line on stderr naming the file, line and problem),
1 an internal failure. ``--debug`` shows tracebacks.
"""

from __future__ import annotations

import contextlib
import functools
import os
import sys
import traceback
import warnings
from typing import Callable

import click
import numpy as np
import pandas as pd

from globcons._version import __version__
from globcons.core.alphabet import RESIDUE_GROUPS
from globcons.core.classes import ClassRules
from globcons.analysis.columns import score_columns, summarise
from globcons.analysis.options import ScoreOptions
from globcons.errors import GlobconsError
from globcons.errors import InputError, OptionError
from globcons.io.alignments import read_alignment
from globcons.io.records import read_sequences
from globcons.io.sniff import FORMATS
from globcons.io.writers import ALIGNMENT_OUTPUTS, alignment_format_for, format_alignment
from globcons.align.significance import DEFAULT_SHUFFLES, GLOBIN_EVALUE
from globcons.io.atomic import atomic_output, check_not_input
from globcons.io.tables import TABLE_FORMATS, write_table
from globcons.core.weights import SCHEMES

PROG = "globcons"


class _Reporter:
    """Messages to stderr, honouring --quiet; each distinct warning is shown once."""

    def __init__(self, quiet: bool = False) -> None:
        self.quiet = quiet
        self._seen: set[str] = set()

    def info(self, text: str) -> None:
        if not self.quiet:
            click.echo(f"{PROG}: {text}", err=True)

    def warn(self, text: str) -> None:
        if text not in self._seen:
            self._seen.add(text)
            click.echo(f"{PROG}: warning: {text}", err=True)


def _common(command: Callable) -> Callable:
    """--quiet and --debug on every command; library warnings shown as one line each."""

    @click.option("--quiet", "-q", is_flag=True, help="No summary or progress on stderr (warnings still shown).")
    @click.option("--debug", is_flag=True, help="Show the full traceback of an error.")
    @functools.wraps(command)
    def wrapper(*args, quiet: bool, debug: bool, **kwargs):
        reporter = _Reporter(quiet)
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            try:
                return command(*args, reporter=reporter, **kwargs)
            finally:
                for item in caught:
                    reporter.warn(str(item.message))

    return wrapper


@click.group(context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100})
@click.version_option(__version__, prog_name=PROG)
def cli() -> None:
    """Conservation of globin-family alignments, tied to the globin helix frame.

    Start with `globcons demo`, or `globcons columns ALIGNMENT` on your own alignment.
    """


_alignment_argument = click.argument("alignment", metavar="ALIGNMENT", type=click.Path(dir_okay=True, allow_dash=True))


def _reader_options(command: Callable) -> Callable:
    command = click.option("--keep-inserts", is_flag=True,
                           help="A2M: keep insert states (lower case, '.') as columns instead of dropping them.")(command)
    command = click.option("--format", "fmt", type=click.Choice(FORMATS), default=None,
                           help="Input format (default: sniffed from the content; .a2m selects A2M).")(command)
    return command


def _scoring_options(command: Callable) -> Callable:
    options = [
        click.option("--weights", type=click.Choice(SCHEMES), default="henikoff", show_default=True,
                     help="Sequence weighting."),
        click.option("--identity", type=float, default=0.8, show_default=True,
                     help="Identity threshold of --weights cluster."),
        click.option("--matrix", default="BLOSUM62", show_default=True,
                     help="Substitution matrix (any Biopython ships) judging conservative groups."),
        click.option("--residue-groups", type=click.Choice(sorted(RESIDUE_GROUPS)), default=None,
                     help="Judge conservative groups by a fixed reduced alphabet instead of the matrix."),
        click.option("--max-gaps", type=float, default=0.5, show_default=True,
                     help="A column with a larger weighted gap fraction is gap-rich."),
        click.option("--invariant-min", type=float, default=1.0, show_default=True,
                     help="Share of the residue weight one residue needs for invariant."),
        click.option("--group-min", type=float, default=1.0, show_default=True,
                     help="Share of the residue weight that must form one substitution group for conservative."),
        click.option("--min-neff", type=float, default=5.0, show_default=True,
                     help="Columns with fewer effective sequences are flagged low_data."),
        click.option("--window", type=int, default=0, show_default=True,
                     help="Smooth the JSD score over this many neighbours on each side (0: off)."),
    ]
    for option in reversed(options):
        command = option(command)
    return command


def _frame_options(command: Callable) -> Callable:
    """How columns are tied to the globin frame and which sites they carry (shared by several commands)."""
    options = [
        click.option("--reference", default=None,
                     help="Add ref_position and ref_residue (the numbering of this row) and tie the frame through it."),
        click.option("--sites", "sites_path", type=click.Path(dir_okay=False), default=None,
                     help="A site table of your own (tab-separated: label or column, role[, kind, chains, note])."),
        click.option("--replace-sites", is_flag=True, help="Use only the sites of --sites, not the built-in ones."),
        click.option("--no-frame", is_flag=True, help="Do not tie the columns to the globin frame (other families)."),
    ]
    for option in reversed(options):
        command = option(command)
    return command


def _score_options(kw: dict) -> ScoreOptions:
    rules = ClassRules(max_gaps=kw["max_gaps"], invariant_min=kw["invariant_min"], group_min=kw["group_min"],
                       matrix=kw["matrix"], residue_groups=kw["residue_groups"], min_neff=kw["min_neff"])
    return ScoreOptions(weights=kw["weights"], identity=kw["identity"], window=kw["window"], rules=rules,
                        reference=kw.get("reference"), frame=not kw.get("no_frame", False),
                        sites_path=kw.get("sites_path"), replace_sites=kw.get("replace_sites", False))


def _warn_low_data(table, reporter: _Reporter) -> None:
    low = table.attrs["low_data_columns"]
    if low:
        reporter.warn(f"{low} of {table.attrs['columns']} columns have fewer than {table.attrs['rules']['min_neff']:g} "
                      "effective sequences (flagged low_data): their classes rest on little evidence")


def _column_table(alignment: str, options: ScoreOptions, fmt: str | None, keep_inserts: bool,
                  chunk_rows: int | None, reporter: _Reporter) -> pd.DataFrame:
    """The column table, read in memory or streamed (see :func:`globcons.analysis.streaming.plan_reading`)."""
    from globcons.analysis.columns import table_from_summary
    from globcons.analysis.streaming import plan_reading, summarise_file

    plan = plan_reading(alignment, options.weights, keep_inserts, chunk_rows, fmt)
    if plan.note:
        reporter.info(plan.note)
    if plan.stream:
        summary = summarise_file(alignment, options, plan.chunk_rows, fmt, keep_inserts)
        return table_from_summary(summary, options)
    return score_columns(read_alignment(alignment, format=fmt, keep_inserts=keep_inserts), options)


@cli.command()
@_alignment_argument
@click.option("-o", "--output", default=None, help="Output file (default: standard output; '-' too).")
@click.option("--table", "table_format", type=click.Choice(TABLE_FORMATS), default=None,
              help="Table format (default: from the output's extension, else tsv).")
@_frame_options
@click.option("--chunk-rows", type=int, default=None, metavar="N",
              help="Stream the alignment (FASTA/A2M) in two passes, N records per chunk: memory independent of "
                   "the number of rows, same table. Default: in memory, unless the file needs more memory "
                   "(about 4x its size) than is available.")
@_reader_options
@_scoring_options
@_common
def columns(alignment: str, output: str | None, table_format: str | None, fmt: str | None, keep_inserts: bool,
            chunk_rows: int | None, reporter: _Reporter, **kw) -> None:
    """Score and class every column of ALIGNMENT ('-' reads standard input).

    One row per column: class (invariant, conservative, variable, gap-rich), entropy, JSD, gap
    fraction, effective sequences, consensus and residue frequencies.
    """
    options = _score_options(kw)
    if output is not None:
        check_not_input(output, [alignment, kw.get("sites_path")])
    table = _column_table(alignment, options, fmt, keep_inserts, chunk_rows, reporter)
    written = write_table(table, output, table_format, metadata=table.attrs, inputs=[alignment],
                          caption=f"Column conservation of {os.path.basename(str(alignment))}")
    reporter.info(summarise(table))
    _warn_low_data(table, reporter)
    if written:
        reporter.info("wrote " + ", ".join(written))


@cli.command()
@click.argument("sequences", metavar="SEQUENCES", type=click.Path(dir_okay=True, allow_dash=True))
@click.option("-o", "--output", default=None,
              help="Alignment output (default: Stockholm to standard output). Format by extension: .sto/.stk "
                   "Stockholm (labels in #=GC lines), .a2m, else FASTA (labels in OUTPUT.frame.tsv).")
@click.option("--out-format", type=click.Choice(ALIGNMENT_OUTPUTS), default=None, help="Force the output format.")
@click.option("--keep-inserts", is_flag=True,
              help="Keep residues between frame positions as lower-case insert columns (A2M convention).")
@click.option("--report", "report_path", default=None,
              help="Per-sequence table: nearest reference, identity, E-value, helix coverage, residues left out.")
@click.option("--shuffles", type=click.IntRange(0, 1000), default=DEFAULT_SHUFFLES, show_default=True,
              help="Shuffled copies per sequence for the E-value (0: skip it).")
@_common
def align(sequences: str, output: str | None, out_format: str | None, keep_inserts: bool, report_path: str | None,
          shuffles: int, reporter: _Reporter) -> None:
    """Place unaligned SEQUENCES (FASTA, gzip, '-' for stdin) on the globin frame.

    Writes an alignment with one column per frame position (A1..H26 and the corners and termini),
    carrying the frame labels so that `globcons columns` reads them back.
    """
    from globcons.io.frame_labels import encode_labels
    from globcons.io.frame_labels import label_sidecar_table, sidecar_path
    from globcons.align.layout import align_to_frame

    inputs = [sequences]
    fmt = out_format or ("stockholm" if output in (None, "-") else alignment_format_for(output))
    sidecar = sidecar_path(output) if fmt != "stockholm" and output not in (None, "-") else None
    for path in (output, report_path, sidecar):
        if path is not None:
            check_not_input(path, inputs)
    records = [(r.id, r.sequence) for r in read_sequences(sequences)]
    empty = [r[0] for r in records if not r[1]]
    if empty:
        raise InputError(f"sequence {empty[0]!r} is empty", source=str(sequences))
    result = align_to_frame(records, keep_inserts=keep_inserts, shuffles=shuffles)
    text = format_alignment(result.ids, list(result.rows), fmt,
                            column_annotations=encode_labels(result.labels) if fmt == "stockholm" else None)
    with atomic_output(output, inputs) as stream:
        stream.write(text)
    written = [] if output in (None, "-") else [output]
    if sidecar is not None:
        inserts = [not label for label in result.labels] if keep_inserts else None
        written += write_table(label_sidecar_table(result.labels, inserts), sidecar, "tsv", inputs=inputs)
    if report_path is not None:
        written += write_table(result.summary(), report_path, metadata={"shuffles": shuffles},
                               inputs=inputs)
    non_globins = [p.id for p in result.placed if not p.is_globin] if shuffles else []
    dropped = sum(result.unplaced)
    reporter.info(f"placed {len(result.placed)} sequences on {sum(1 for l in result.labels if l)} frame positions; "
                  + (f"{dropped} residues between frame positions or at unaligned ends "
                     + ("kept as insert columns" if keep_inserts else "left out") if dropped else "no residue left out"))
    if non_globins:
        reporter.warn(f"{len(non_globins)} sequence(s) do not place significantly on the globin frame "
                      f"(E-value >= {GLOBIN_EVALUE:g}), first: {non_globins[0]!r}")
    if fmt != "stockholm" and output in (None, "-"):
        reporter.warn("frame labels are not carried by FASTA on standard output; use -o FILE or Stockholm")
    if written:
        reporter.info("wrote " + ", ".join(written))


@cli.command()
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
@click.option("--shuffles", type=click.IntRange(0, 1000), default=DEFAULT_SHUFFLES, show_default=True,
              help="Shuffled copies per sequence for the E-value (0: skip it).")
@click.option("--heatmap", "heatmap_path", default=None,
              help="Draw the departures (sequences x frame positions) to this .png/.svg/.pdf; keeps the "
                   "per-residue rows in memory, so meant for up to a few thousand sequences.")
@_reader_options
@_common
def scan(sequences: str, family_path: str | None, output: str | None, residues_path: str | None,
         table_format: str | None, jobs: int | None, batch_size: int, shuffles: int, heatmap_path: str | None,
         fmt: str | None, keep_inserts: bool, reporter: _Reporter) -> None:
    """Scan new SEQUENCES (FASTA, gzip, '-' for stdin) against the globin family.

    Per sequence: is it a globin, its nearest reference, helices present, key residues and heme
    pocket, departures from the family's invariant and conservative columns, and flags. With
    --residues, one row per residue with its frame label, column class and deviation.
    """
    from globcons.io.records import stream_records
    from globcons.analysis.family import family_from_alignment, frame_family
    from globcons.analysis.scan import SUMMARY_COLUMNS, default_jobs, iter_scan
    from globcons.io.tables import table_format_for

    inputs = [sequences, family_path]
    for path in (output, residues_path, heatmap_path):
        if path is not None:
            check_not_input(path, inputs)
    if heatmap_path is not None:
        from globcons.plots.output import figure_format

        figure_format(heatmap_path)  # fail on a bad extension before the work
    if family_path is not None:
        from globcons.align.anchor import map_columns

        aligned = read_alignment(family_path, format=fmt, keep_inserts=keep_inserts)
        mapping = map_columns(aligned, source_path=family_path)
        family = family_from_alignment(aligned, labels=mapping.labels)
        reporter.info(f"family: {aligned.n_rows} sequences, {aligned.n_columns} columns; {mapping.note}")
    else:
        family = frame_family()
    jobs = jobs or default_jobs()
    summary_format = table_format_for(output, table_format)
    residue_format = table_format_for(residues_path, table_format)
    records = ((r.id, r.sequence) for r in stream_records(sequences))
    counts = {"sequences": 0, "globins": 0, "departing": 0}
    with contextlib.ExitStack() as stack:
        out = stack.enter_context(atomic_output(output, inputs))
        res = stack.enter_context(atomic_output(residues_path, inputs)) if residues_path else None
        progress = _progress(reporter)
        task = None
        if progress is not None:
            stack.enter_context(progress)
            task = progress.add_task("scanning", total=None)
        first = True
        kept = []
        want_residues = res is not None or heatmap_path is not None
        for summary, residues in iter_scan(records, family, residues=want_residues, jobs=jobs,
                                           batch_size=batch_size, shuffles=shuffles):
            out.write(_delimited_rows(summary, summary_format, header=first))
            if res is not None:
                res.write(_delimited_rows(residues, residue_format, header=first))
            if heatmap_path is not None:
                kept.append(residues)
            first = False
            counts["sequences"] += len(summary)
            counts["globins"] += int((summary["is_globin"] == "yes").sum())
            counts["departing"] += int((summary["departures"] > 0).sum())
            if progress:
                progress.update(task, advance=len(summary))
        if first:  # no record at all: still a header
            out.write(_delimited_rows(pd.DataFrame(columns=list(SUMMARY_COLUMNS)), summary_format, header=True))
    reporter.info(f"scanned {counts['sequences']} sequences: {counts['globins']} globins, {counts['departing']} "
                  f"with departures from the family's invariant or conservative columns ({jobs} worker"
                  f"{'s' if jobs > 1 else ''})")
    if heatmap_path is not None and kept:
        from globcons.plots.heatmap import draw_departure_heatmap
        from globcons.plots.output import save_figure

        save_figure(draw_departure_heatmap(pd.concat(kept, ignore_index=True)), heatmap_path, inputs)
    written = [p for p in (output, residues_path, heatmap_path) if p not in (None, "-")]
    if written:
        reporter.info("wrote " + ", ".join(written))


def _delimited_rows(table: pd.DataFrame, fmt: str, header: bool) -> str:
    from globcons.io.tables import format_table

    text = format_table(table, fmt)
    return text if header else text.split("\n", 1)[1]


def _progress(reporter: _Reporter):
    """A rich progress display on a terminal; None when quiet or not a terminal."""
    if reporter.quiet or not sys.stderr.isatty():
        return None
    from rich.console import Console
    from rich.progress import Progress, SpinnerColumn, TextColumn, TimeElapsedColumn

    return Progress(SpinnerColumn(), TextColumn("{task.description}: {task.completed} sequences"),
                    TimeElapsedColumn(), console=Console(stderr=True), transient=True)


def _target_options(command: Callable) -> Callable:
    options = [
        click.option("--family", "family_path", type=click.Path(dir_okay=True), default=None,
                     help="Judge against this alignment's columns (default: the built-in frame)."),
        click.option("--target", "target_id", default=None,
                     help="The target's id: a record of TARGET, or a row of --family when TARGET is omitted."),
        click.option("--numbering", type=click.Choice(("given", "mature")), default="given", show_default=True,
                     help="given: count the target as given; mature: traditional numbering without the "
                          "initiator Met (p. names always count from the Met)."),
        click.option("-o", "--output", default=None, help="Output table (default: standard output)."),
        click.option("--table", "table_format", type=click.Choice(TABLE_FORMATS), default=None,
                     help="Table format (default: from the extension, else tsv)."),
    ]
    for option in reversed(options):
        command = option(command)
    return command


def _load_target(target_path: str | None, target_id: str | None, family_path: str | None, numbering: str,
                 reporter: _Reporter):
    """The target and the family, from TARGET / --target / --family."""
    from globcons.analysis.family import family_from_alignment, frame_family
    from globcons.mutations.target import prepare_target

    family, aligned = frame_family(), None
    if family_path is not None:
        from globcons.align.anchor import map_columns

        aligned = read_alignment(family_path)
        mapping = map_columns(aligned, source_path=family_path)
        family = family_from_alignment(aligned, labels=mapping.labels)
        reporter.info(f"family: {aligned.n_rows} sequences, {aligned.n_columns} columns; {mapping.note}")
    if target_path is None:
        if aligned is None or target_id is None:
            raise click.UsageError("give a TARGET file, or --target ID naming a row of --family")
        if target_id not in aligned.ids:
            raise OptionError(f"--target {target_id!r} is not a row of {family_path}")
        row = aligned.ids.index(target_id)
        codes = aligned.codes[row]
        occupied = np.flatnonzero(codes != 23)
        from globcons.core.alphabet import decode

        sequence = decode(codes[occupied])
        return prepare_target(sequence, target_id, family, numbering, row_columns=occupied)
    records = list(read_sequences(target_path))
    if target_id is not None:
        chosen = [r for r in records if r.id == target_id]
        if not chosen:
            raise OptionError(f"--target {target_id!r} is not a record of {target_path}")
        record = chosen[0]
    elif len(records) != 1:
        raise InputError(f"holds {len(records)} sequences; a target is one (choose with --target ID)",
                         source=str(target_path))
    else:
        record = records[0]
    return prepare_target(record.sequence, record.id, family, numbering)


def _write_with_caution(table, output, table_format, inputs, metadata, reporter: _Reporter) -> None:
    from globcons.core.vocabulary import CAUTION
    from globcons.io.tables import format_table, table_format_for

    fmt = table_format_for(output, table_format)
    text = format_table(table, fmt, metadata)
    if fmt == "md":
        text += "\n" + CAUTION + "\n"
    with atomic_output(output, inputs) as stream:
        stream.write(text)
    click.echo(CAUTION, err=True)  # always, even with --quiet
    if output not in (None, "-"):
        reporter.info(f"wrote {output}")


@cli.command()
@click.argument("target_path", metavar="[TARGET]", required=False, type=click.Path(dir_okay=True, allow_dash=True))
@click.option("--mutations", "mutation_list", default=None,
              help="Comma-separated: E6V, Glu6Val, p.Glu7Val, p.E7V, or label form A3:V / A3:Val.")
@click.option("--mutations-file", type=click.Path(dir_okay=False), default=None, help="One mutation per line.")
@_target_options
@_common
def check(target_path: str | None, mutation_list: str | None, mutations_file: str | None, family_path: str | None,
          target_id: str | None, numbering: str, output: str | None, table_format: str | None,
          reporter: _Reporter) -> None:
    """Judge proposed mutations of one TARGET sequence (FASTA) against the family.

    Each row: the position as given, mature and HGVS, the frame label, the column class, how often the
    family has the new residue, the substitution score, property changes, a verdict (locked, guarded,
    open) and the reasons in plain words.
    """
    from globcons.mutations.judge import check as check_mutations
    from globcons.mutations.notation import parse_mutation_list, read_mutation_file

    if not mutation_list and not mutations_file:
        raise click.UsageError("give --mutations LIST or --mutations-file FILE")
    inputs = [target_path, family_path, mutations_file]
    if output is not None:
        check_not_input(output, inputs)
    mutations = (parse_mutation_list(mutation_list) if mutation_list else []) + \
        (read_mutation_file(mutations_file) if mutations_file else [])
    target = _load_target(target_path, target_id, family_path, numbering, reporter)
    table = check_mutations(target, mutations)
    counts = table["verdict"].value_counts().to_dict()
    _write_with_caution(table, output, table_format, inputs, {"target": target.id, "numbering": numbering,
                        "family": target.family.name, "nearest_reference": target.placed.nearest_reference},
                        reporter)
    reporter.info(f"{len(table)} mutations of {target.id} (nearest {target.placed.nearest_reference}): "
                  + ", ".join(f"{counts.get(v, 0)} {v}" for v in ("locked", "guarded", "open")))


@cli.command()
@click.argument("target_path", metavar="[TARGET]", required=False, type=click.Path(dir_okay=True, allow_dash=True))
@_target_options
@click.option("--top", type=click.IntRange(1, None), default=None, help="Keep the N most tolerant positions.")
@click.option("--exclude-labels", default="", help="Comma-separated frame labels to leave out (e.g. F8,E7).")
@click.option("--exclude-helices", default="", help="Comma-separated helices to leave out (e.g. A,H).")
@click.option("--exclude-kinds", default="", help="Comma-separated site kinds to leave out (e.g. heme-ligand).")
@_common
def plan(target_path: str | None, family_path: str | None, target_id: str | None, numbering: str,
         output: str | None, table_format: str | None, top: int | None, exclude_labels: str, exclude_helices: str,
         exclude_kinds: str, reporter: _Reporter) -> None:
    """Rank every position of one TARGET sequence for mutation, most tolerant first.

    With the verdict, the tolerance score (see the README), the family's best-supported substitutions
    (weighted frequency and substitution score from the wild type) and the reasons.
    """
    from globcons.mutations.judge import rank_sites

    inputs = [target_path, family_path]
    if output is not None:
        check_not_input(output, inputs)
    target = _load_target(target_path, target_id, family_path, numbering, reporter)
    split = lambda text: [item.strip() for item in text.split(",") if item.strip()]  # noqa: E731
    table = rank_sites(target, exclude_labels=split(exclude_labels), exclude_helices=split(exclude_helices),
                       exclude_kinds=split(exclude_kinds), top=top)
    _write_with_caution(table, output, table_format, inputs, {"target": target.id, "numbering": numbering,
                        "family": target.family.name, "nearest_reference": target.placed.nearest_reference},
                        reporter)
    counts = table["verdict"].value_counts().to_dict()
    reporter.info(f"{len(table)} positions of {target.id} ranked: "
                  + ", ".join(f"{counts.get(v, 0)} {v}" for v in ("open", "guarded", "locked")))


@cli.command()
@click.option("-o", "--output", "out_dir", default="globcons-demo", show_default=True,
              help="Folder for the demo's outputs (created if missing; other files in it are left alone).")
@_common
def demo(out_dir: str, reporter: _Reporter) -> None:
    """Run the whole job on the embedded demo data (a synthetic myoglobin family of a fictional survey).

    Classes the family's columns, scans the survey's new sequences, checks proposed mutations of one of
    them and writes the offline report.
    """
    from rich.console import Console
    from rich.table import Table

    from globcons.core.classes import CLASSES
    from globcons.demo import run_demo
    from globcons.core.vocabulary import CAUTION

    result = run_demo(out_dir)
    counts = result.table.attrs["class_counts"]
    if not reporter.quiet:
        console = Console(stderr=True)
        console.print("Demo family (synthetic myoglobins of a fictional survey): columns by class")
        overview = Table()
        overview.add_column("class")
        overview.add_column("columns", justify="right")
        for name in CLASSES:
            overview.add_row(name, str(counts[name]))
        console.print(overview)
    reporter.info(result.summary)
    _warn_low_data(result.table, reporter)
    scanned = result.scan_summary
    reporter.info(f"scanned {len(scanned)} new sequences: {int((scanned['is_globin'] == 'yes').sum())} globins; "
                  f"pockets: " + ", ".join(f"{i} {p}" for i, p in zip(scanned["id"], scanned["pocket"])))
    verdicts = result.checks["verdict"].value_counts().to_dict()
    reporter.info(f"checked {len(result.checks)} proposed mutations: "
                  + ", ".join(f"{verdicts.get(v, 0)} {v}" for v in ("locked", "guarded", "open")))
    click.echo(CAUTION, err=True)
    main_files = [os.path.relpath(f, out_dir) for f in result.files
                  if os.path.basename(f) in ("columns.tsv", "scan_summary.tsv", "scan_residues.tsv", "checks.tsv")
                  and os.path.dirname(os.path.abspath(f)) == os.path.abspath(out_dir)]
    reporter.info(f"outputs are in {os.path.abspath(out_dir)}: " + ", ".join(main_files)
                  + f"; open {os.path.abspath(str(result.report))} in a browser")


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``globcons`` command; returns the exit status."""
    args = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in args
    try:
        cli.main(args=args, prog_name=PROG, standalone_mode=False)
        return 0
    except GlobconsError as exc:
        if debug:
            traceback.print_exc()
        click.echo(f"{PROG}: error: {exc}", err=True)
        return 2
    except click.exceptions.Exit as exc:
        return exc.exit_code
    except click.ClickException as exc:
        exc.show()
        return exc.exit_code
    except click.exceptions.Abort:
        click.echo(f"{PROG}: interrupted", err=True)
        return 130
    except KeyboardInterrupt:
        click.echo(f"{PROG}: interrupted", err=True)
        return 130
    except BrokenPipeError:
        # The reader of our output went away (e.g. `| head`): stop quietly.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 141
    except MemoryError:
        click.echo(f"{PROG}: error: not enough memory for this input on this machine", err=True)
        return 2
    except Exception as exc:  # a bug: say so plainly
        if debug:
            traceback.print_exc()
        click.echo(f"{PROG}: internal error: {type(exc).__name__}: {exc} (please report it; --debug shows the "
                   "traceback)", err=True)
        return 1


def entry() -> None:  # pragma: no cover - console script shim
    sys.exit(main())




# Commands defined in their own modules register themselves on `cli` when imported.
from globcons.cli import contrast as cli_contrast  # noqa: E402,F401
from globcons.cli import figures as cli_figures  # noqa: E402,F401
from globcons.cli import paint as cli_paint  # noqa: E402,F401
from globcons.cli import report as cli_report  # noqa: E402,F401

if __name__ == "__main__":  # pragma: no cover
    # Run through the package module so that every command module registers on the same group.
    from globcons.cli import main as _main

    sys.exit(_main())
