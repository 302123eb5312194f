"""``globcons check`` and ``globcons plan``: proposed mutations of one target, and its positions ranked.

Both load the target the same way (:func:`_load_target`) and end their output with the caution line.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import click

from globcons.cli.options import target_options
from globcons.cli.reporting import Reporter, common

if TYPE_CHECKING:
    import pandas as pd

    from globcons.mutations.target import Target

__all__ = ["check", "plan"]


@click.command()
@click.argument("target_path", metavar="[TARGET]", required=False, type=click.Path(dir_okay=True, allow_dash=True))
@click.option("--mutations", "mutation_list", default=None,
              help="Comma-separated: E6V, Glu6Val, p.Glu7Val, p.E7V, or label form A3:V / A3:Val.")
@click.option("--mutations-file", type=click.Path(dir_okay=False), default=None, help="One mutation per line.")
@target_options
@common
def check(target_path: str | None, mutation_list: str | None, mutations_file: str | None, family_path: str | None,
          target_id: str | None, numbering: str, output: str | None, table_format: str | None,
          reporter: Reporter) -> None:
    """Judge proposed mutations of one TARGET sequence (FASTA) against the family.

    Each row: the position as given, mature and HGVS, the frame label, the column class, how often the
    family has the new residue, the substitution score, property changes, a verdict (locked, guarded,
    open) and the reasons in plain words.
    """
    from globcons.io.atomic import check_not_input
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
    _warn_hgvs(target, reporter)
    counts = table["verdict"].value_counts().to_dict()
    _write_with_caution(table, output, table_format, inputs, _metadata(target, numbering), reporter)
    reporter.info(f"{len(table)} mutations of {target.id} (nearest {target.placed.nearest_reference}): "
                  + ", ".join(f"{counts.get(v, 0)} {v}" for v in ("locked", "guarded", "open")))


@click.command()
@click.argument("target_path", metavar="[TARGET]", required=False, type=click.Path(dir_okay=True, allow_dash=True))
@target_options
@click.option("--top", type=click.IntRange(1, None), default=None, help="Keep the N most tolerant positions.")
@click.option("--exclude-labels", default="", help="Comma-separated frame labels to leave out (e.g. F8,E7).")
@click.option("--exclude-helices", default="", help="Comma-separated helices to leave out (e.g. A,H).")
@click.option("--exclude-kinds", default="", help="Comma-separated site kinds to leave out (e.g. heme-ligand).")
@common
def plan(target_path: str | None, family_path: str | None, target_id: str | None, numbering: str,
         output: str | None, table_format: str | None, top: int | None, exclude_labels: str, exclude_helices: str,
         exclude_kinds: str, reporter: Reporter) -> None:
    """Rank every position of one TARGET sequence for mutation, most tolerant first.

    With the verdict, the tolerance score (see the README), the family's best-supported substitutions
    (weighted frequency and substitution score from the wild type) and the reasons.
    """
    from globcons.io.atomic import check_not_input
    from globcons.mutations.judge import rank_sites

    inputs = [target_path, family_path]
    if output is not None:
        check_not_input(output, inputs)
    target = _load_target(target_path, target_id, family_path, numbering, reporter)
    table = rank_sites(target, exclude_labels=_split(exclude_labels), exclude_helices=_split(exclude_helices),
                       exclude_kinds=_split(exclude_kinds), top=top)
    _warn_hgvs(target, reporter)
    _write_with_caution(table, output, table_format, inputs, _metadata(target, numbering), reporter)
    counts = table["verdict"].value_counts().to_dict()
    reporter.info(f"{len(table)} positions of {target.id} ranked: "
                  + ", ".join(f"{counts.get(v, 0)} {v}" for v in ("open", "guarded", "locked")))


def _warn_hgvs(target: Target, reporter: Reporter) -> None:
    """Say why the hgvs column is blank, when it is (its hgvs_note column says it per row too)."""
    from globcons.mutations.target import hgvs_note

    note = hgvs_note(target)
    if note:
        reporter.warn(f"{target.id}: {note}")


def _split(text: str) -> list[str]:
    """The items of a comma-separated option, blanks dropped."""
    return [item.strip() for item in text.split(",") if item.strip()]


def _metadata(target: Target, numbering: str) -> dict[str, Any]:
    return {"target": target.id, "numbering": numbering, "family": target.family.name,
            "family_effective_sequences": round(target.family.n_eff, 6), "thin_family": target.family.thin,
            "nearest_reference": target.placed.nearest_reference}


def _load_target(target_path: str | None, target_id: str | None, family_path: str | None, numbering: str,
                 reporter: Reporter) -> Target:
    """The target and the family, from TARGET / --target / --family."""
    import numpy as np

    from globcons.align.anchor import map_columns
    from globcons.analysis.family import family_from_alignment, frame_family
    from globcons.core.alphabet import GAP, decode
    from globcons.errors import InputError, OptionError
    from globcons.io.alignments import read_alignment
    from globcons.io.records import read_sequences
    from globcons.mutations.target import prepare_target

    family, aligned = frame_family(), None
    if family_path is not None:
        aligned = read_alignment(family_path)
        mapping = map_columns(aligned)
        family = family_from_alignment(aligned, labels=mapping.labels)
        reporter.info(f"family: {aligned.n_rows} sequences, {aligned.n_columns} columns; {mapping.note}")
    if family.thin:
        reporter.warn(family.describe())
    if target_path is None:
        if aligned is None or target_id is None:
            raise click.UsageError("give a TARGET file, or --target ID naming a row of --family")
        if target_id not in aligned.ids:
            raise OptionError(f"--target {target_id!r} is not a row of {family_path}")
        row = aligned.ids.index(target_id)
        codes = aligned.codes[row]
        occupied = np.flatnonzero(codes != GAP)
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


def _write_with_caution(table: pd.DataFrame, output: str | None, table_format: str | None,
                        inputs: list[str | None], metadata: Mapping[str, Any], reporter: Reporter) -> None:
    """Write the table, the caution line after a Markdown table, and the caution line on stderr."""
    from globcons.core.vocabulary import CAUTION
    from globcons.io.atomic import atomic_output
    from globcons.io.formats import table_format_for
    from globcons.io.tables import format_table

    fmt = table_format_for(output, table_format)
    text = format_table(table, fmt, metadata)
    if fmt == "md":
        text += "\n" + CAUTION + "\n"
    with atomic_output(output, inputs) as stream:
        stream.write(text)
    click.echo(CAUTION, err=True)  # always, even with --quiet
    if output not in (None, "-"):
        reporter.info(f"wrote {output}")
