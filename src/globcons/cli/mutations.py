"""``globcons check`` and ``globcons plan``: proposed mutations of one target, and its positions ranked.

Both load the target the same way (:func:`_load_target`) and end their output with the caution line.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import click

from globcons.cli.options import structure_options, target_options
from globcons.cli.reporting import Reporter, common

if TYPE_CHECKING:
    import pandas as pd

    from globcons.mutations.context import StructureContext
    from globcons.mutations.target import Target
    from globcons.structure.features import StructureFeatures

__all__ = ["check", "plan"]


@click.command()
@click.argument("target_path", metavar="[TARGET]", required=False, type=click.Path(dir_okay=True, allow_dash=True))
@click.option("--mutations", "mutation_list", default=None,
              help="Comma-separated: E6V, Glu6Val, p.Glu7Val, p.E7V, or label form A3:V / A3:Val.")
@click.option("--mutations-file", type=click.Path(dir_okay=False), default=None, help="One mutation per line.")
@target_options
@structure_options
@common
def check(target_path: str | None, mutation_list: str | None, mutations_file: str | None, family_path: str | None,
          target_id: str | None, numbering: str, output: str | None, table_format: str | None,
          structure_path: str | None, chain_id: str | None, allow_non_globin: bool, reporter: Reporter) -> None:
    """Judge proposed mutations of one TARGET sequence (FASTA) against the family.

    Each row: the position as given, mature and HGVS, the frame label, the column class, how often the
    family has the new residue, the substitution score, property changes, a verdict (locked, guarded,
    open) and the reasons in plain words. With --structure, also the residue's burial, heme contact and
    interfaces (core, heme-contact and interface positions are never open). Without TARGET, --structure
    with --chain makes that chain the target.
    """
    from globcons.io.atomic import check_not_input
    from globcons.mutations.judge import check as check_mutations
    from globcons.mutations.notation import parse_mutation_list, read_mutation_file

    if not mutation_list and not mutations_file:
        raise click.UsageError("give --mutations LIST or --mutations-file FILE")
    features = _structure_features(structure_path, chain_id)
    inputs = [target_path, family_path, mutations_file, structure_path]
    if output is not None:
        check_not_input(output, inputs)
    mutations = (parse_mutation_list(mutation_list) if mutation_list else []) + \
        (read_mutation_file(mutations_file) if mutations_file else [])
    target = _load_target(target_path, target_id, family_path, numbering, reporter, allow_non_globin, features,
                          chain_id)
    context = _structure_context(target, features, chain_id, reporter)
    table = check_mutations(target, mutations, context=context)
    _warn_hgvs(target, reporter)
    counts = table["verdict"].value_counts().to_dict()
    _write_with_caution(table, output, table_format, inputs, _metadata(target, numbering, context), reporter)
    reporter.info(f"{len(table)} mutations of {target.id} (nearest {target.placed.nearest_reference}): "
                  + ", ".join(f"{counts.get(v, 0)} {v}" for v in ("locked", "guarded", "open")))


@click.command()
@click.argument("target_path", metavar="[TARGET]", required=False, type=click.Path(dir_okay=True, allow_dash=True))
@target_options
@click.option("--top", type=click.IntRange(1, None), default=None, help="Keep the N most tolerant positions.")
@click.option("--exclude-labels", default="", help="Comma-separated frame labels to leave out (e.g. F8,E7).")
@click.option("--exclude-helices", default="", help="Comma-separated helices to leave out (e.g. A,H).")
@click.option("--exclude-kinds", default="", help="Comma-separated site kinds to leave out (e.g. heme-ligand).")
@structure_options
@click.option("--surface-only", is_flag=True, help="Keep only positions the structure calls surface.")
@click.option("--exclude-interfaces", is_flag=True,
              help="Leave out positions touching another chain of the structure.")
@common
def plan(target_path: str | None, family_path: str | None, target_id: str | None, numbering: str,
         output: str | None, table_format: str | None, allow_non_globin: bool, top: int | None, exclude_labels: str,
         exclude_helices: str, exclude_kinds: str, structure_path: str | None, chain_id: str | None,
         surface_only: bool, exclude_interfaces: bool, reporter: Reporter) -> None:
    """Rank every position of one TARGET sequence for mutation, most tolerant first.

    With the verdict, the tolerance score (see the README), the family's best-supported substitutions
    (weighted frequency and substitution score from the wild type) and the reasons. With --structure,
    burial, heme contacts and interfaces join the score and the reasons; without TARGET, --structure
    with --chain makes that chain the target.
    """
    from globcons.errors import OptionError
    from globcons.io.atomic import check_not_input
    from globcons.mutations.judge import rank_sites

    if structure_path is None and (surface_only or exclude_interfaces):
        raise OptionError(f"{'--surface-only' if surface_only else '--exclude-interfaces'} needs --structure FILE")
    features = _structure_features(structure_path, chain_id)
    inputs = [target_path, family_path, structure_path]
    if output is not None:
        check_not_input(output, inputs)
    target = _load_target(target_path, target_id, family_path, numbering, reporter, allow_non_globin, features,
                          chain_id)
    context = _structure_context(target, features, chain_id, reporter)
    table = rank_sites(target, exclude_labels=_split(exclude_labels), exclude_helices=_split(exclude_helices),
                       exclude_kinds=_split(exclude_kinds), top=top, context=context, surface_only=surface_only,
                       exclude_interfaces=exclude_interfaces)
    _warn_hgvs(target, reporter)
    _write_with_caution(table, output, table_format, inputs, _metadata(target, numbering, context), reporter)
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


def _metadata(target: Target, numbering: str, context: StructureContext | None = None) -> dict[str, Any]:
    meta = {"target": target.id, "numbering": numbering, "family": target.family.name,
            "family_effective_sequences": round(target.family.n_eff, 6), "thin_family": target.family.thin,
            "nearest_reference": target.placed.nearest_reference}
    return {**meta, **context.metadata()} if context is not None else meta


def _structure_features(structure_path: str | None, chain_id: str | None) -> StructureFeatures | None:
    """The structure measured once (None without --structure), before the target and family are read.

    --chain needs --structure; a file that is not there is named as such.
    """
    from globcons.errors import InputError
    from globcons.io.opening import InputSource

    if structure_path is None:
        if chain_id is not None:
            raise click.UsageError("--chain needs --structure FILE")
        return None
    source = InputSource(structure_path)
    if source.path is not None and not source.path.exists():
        raise InputError("no such file", source=source.name)
    from globcons.structure.context import load_features

    return load_features(structure_path)


def _structure_context(target: Target, features: StructureFeatures | None, chain_id: str | None,
                       reporter: Reporter) -> StructureContext | None:
    """The structure's per-residue features carried over to the target (None without --structure)."""
    if features is None:
        return None
    from globcons.structure.context import target_context

    context = target_context(target, features, chain_id)
    reporter.info(context.describe())
    return context


def _structure_target(features: StructureFeatures, chain_id: str | None, family, numbering: str) -> Target:
    """The target read from a chain of the structure (its residues with coordinates)."""
    from pathlib import Path

    from globcons.mutations.target import prepare_target

    if chain_id is None:
        raise click.UsageError("without TARGET, give --chain ID: the chain of --structure that is the target")
    chain = features.chain(chain_id)
    name = Path(features.source).name.split(".")[0]
    return prepare_target(chain.sequence, f"{name}:{chain_id}", family, numbering)


def _load_target(target_path: str | None, target_id: str | None, family_path: str | None, numbering: str,
                 reporter: Reporter, allow_non_globin: bool = False, features: StructureFeatures | None = None,
                 chain_id: str | None = None) -> Target:
    """The target and the family, from TARGET / --target / --family (or a chain of --structure); a target
    that is not a globin is refused unless ``allow_non_globin``."""
    target = _read_target(target_path, target_id, family_path, numbering, reporter, features, chain_id)
    if not target.placed.is_globin:
        from globcons.core.alphabet import encode, looks_like_nucleotide
        from globcons.errors import InputError
        from globcons.mutations.judge import globin_reason

        if not allow_non_globin:
            nucleotide = looks_like_nucleotide(encode(target.sequence))
            why = "it looks like a nucleotide sequence (translate first)" if nucleotide else \
                globin_reason(target).split(": ", 1)[1].split(", so")[0].replace("the target does", "it does")
            raise InputError(f"target {target.id!r} is not a globin: {why}; give --allow-non-globin to judge it "
                             "anyway", source=str(target_path or family_path))
        reporter.warn(f"target {target.id!r} is not a globin; every row says so")
    return target


def _read_target(target_path: str | None, target_id: str | None, family_path: str | None, numbering: str,
                 reporter: Reporter, features: StructureFeatures | None = None, chain_id: str | None = None) -> Target:
    """The target and the family, from TARGET / --target / --family (or a chain of --structure)."""
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
    if target_path is None and features is not None and target_id is None:
        return _structure_target(features, chain_id, family, numbering)
    if target_path is None:
        if aligned is None or target_id is None:
            raise click.UsageError("give a TARGET file, --target ID naming a row of --family, or --structure FILE "
                                   "--chain ID")
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
