"""Judging proposed mutations of one target and ranking its positions for mutation.

The target (:mod:`globcons.mutations.target`) is placed on the globin frame (labels, nearest reference
chain) and on the family's columns (the built-in frame's reference chains, or a user's alignment). Each
mutation then gets:

- ``verdict``: ``locked`` when the column is invariant in the family or the label is a listed functional
  site; ``guarded`` when the column is conservative, or the change breaks a structural rule (Pro or Gly
  inside a helix past its first turn; a polar residue into a hydrophobic core column, judged on the
  Fauchère & Pliška 1983 scale, which counts W, F, Y, M and C as hydrophobic); ``open`` otherwise
  (variable or gap-rich columns, residues outside the family's columns);
- ``reasons`` in plain words, every rule that fired, with ``low_data`` when the family (or the column)
  holds fewer effective sequences than ``min_neff``;
- ``family_frequency`` (how often the family already has the new residue there, weighted), ``blosum``
  (the substitution score) and ``property_change`` (Kyte & Doolittle 1982 hydropathy, Zamyatnin 1972
  volume, charge).

``rank_sites`` orders every position of the target, most tolerant first: by verdict tier (open, then
guarded, then locked), within a tier by column class (variable and gap-rich, then conservative, then
invariant), then by the tolerance score

    tolerance = entropy_norm + 0.25 * gap_fraction + 0.25 * min(1, sd_hydropathy / 3)
                - 1.0 * (listed functional site) - 0.25 * (Pro or Gly inside a helix)

where entropy_norm and gap_fraction are the family column's, and sd_hydropathy is the weighted standard
deviation of the Kyte-Doolittle hydropathy of the family's residues there (how widely the family already
varies the property). Positions outside the family's columns score 0.75 (loops the family lacks).

With a structure (a :class:`globcons.mutations.context.StructureContext`), every mapped position also
gets its burial, heme contact and interfaces as reasons, and

    tolerance += 0.5 * min(1, rsa) - 0.5 * (core) - 0.5 * (heme contact) - 0.5 * (interface)

A ``core``, heme-contact or interface position is never ``open``: it is at least ``guarded``, with a
``core:``, ``heme contact:`` or ``interface: chain C`` reason naming why (and the partner chain). Within
a verdict tier and column class, surface positions rank before boundary ones, then positions the structure
does not cover, then core ones. ``surface_only`` keeps only surface positions, ``exclude_interfaces``
drops every position touching another chain.

Every row shows the position as given, the mature position and the HGVS name (see
:mod:`globcons.mutations.target` for the numberings). These are family-conservation predictions for
research: see :data:`globcons.core.vocabulary.CAUTION`.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable

import numpy as np
import pandas as pd

from globcons.align.frame_columns import reference_alignment
from globcons.align.significance import GLOBIN_EVALUE
from globcons.analysis.family import Family
from globcons.core.alphabet import N_STANDARD, RESIDUE_LETTERS
from globcons.core.labels import FRAME_ORDER, HELICES, is_helix, place_of, segment_of
from globcons.core.matrices import matrix_score
from globcons.core.properties import (
    CORE_HYDROPHOBICITY,
    HYDROPATHY_ARRAY,
    HYDROPHOBIC_CORE_MIN,
    core_hydrophobicity,
    is_polar,
    property_change,
)
from globcons.core.vocabulary import VERDICTS
from globcons.errors import OptionError
from globcons.frame.functional_sites import Site, sites, sites_at
from globcons.mutations.context import BURIAL_ORDER, STRUCTURE_COLUMNS, StructureContext
from globcons.mutations.notation import Mutation, parse_mutation
from globcons.mutations.target import Target, as_target, hgvs_cell, hgvs_note

__all__ = ["check", "rank_sites", "CHECK_COLUMNS", "PLAN_COLUMNS"]

CHECK_COLUMNS = ("mutation", "position", "wild_type", "new_residue", "mature_position", "hgvs", "hgvs_note",
                 "frame_label", "column", "column_class", "family_frequency", "blosum", "property_change", "verdict",
                 "reasons")
PLAN_COLUMNS = ("rank", "position", "mature_position", "hgvs", "hgvs_note", "residue", "frame_label", "column",
                "column_class", "tolerance", "verdict", "substitutions", "reasons")

#: A helix residue at this place or later is past the helix's first turn (Pro is common in the first
#: turn of a helix and rare after it; Richardson & Richardson 1988 Science 240:1648, from memory).
HELIX_INTERIOR_FROM = 4
_TIER = {verdict: tier for tier, verdict in enumerate(VERDICTS)}
#: Weights of the tolerance score of :func:`rank_sites` (see the module notes).
GAP_WEIGHT, SPREAD_WEIGHT, SITE_PENALTY, HELIX_PG_PENALTY = 0.25, 0.25, 1.0, 0.25
#: Hydropathy spread (Kyte-Doolittle units) at which the spread term of the tolerance is full.
SPREAD_SCALE = 3.0
#: Tolerance of a position outside the family's columns (a loop the family lacks).
OFF_COLUMN_TOLERANCE = 0.75
#: Tolerance given to the initiator Met, below any other position.
INITIATOR_TOLERANCE = -1.0
#: Weights of the structural terms of the tolerance (see the module notes).
EXPOSURE_WEIGHT, CORE_PENALTY, HEME_CONTACT_PENALTY, INTERFACE_PENALTY = 0.5, 0.5, 0.5, 0.5
#: Substitutions listed per position in ``plan``.
SUBSTITUTIONS_SHOWN = 3
# Within a verdict tier, columns the family varies come before conserved ones (a listed site the family
# varies is locked, but less so than an invariant column).
_CLASS_ORDER = {"gap-rich": 0, "variable": 0, "": 0, "conservative": 1, "invariant": 2}



def _base_verdict(at_site: bool, column_class: str) -> str:
    """The verdict from the site list and the column class alone (structural rules may raise it later)."""
    if at_site or column_class == "invariant":
        return "locked"
    return "guarded" if column_class == "conservative" else "open"


def _site_reasons(target: Target, label: str) -> list[Site]:
    if not label:
        return []
    found = sites_at(label, chain=target.placed.nearest_reference)
    return list(found)


def _column_words(family: Family, column: int) -> str:
    cls = family.classes[column]
    top = family.family_residues[column]
    if cls == "invariant":
        return f"invariant column ({RESIDUE_LETTERS[int(family.consensus[column])]} throughout the family)"
    if cls == "conservative":
        members = "/".join(RESIDUE_LETTERS[k] for k in np.flatnonzero(family.groups[column]))
        return f"conservative column (only {members} in the family)"
    if cls == "gap-rich":
        return f"gap-rich column ({family.gaps[column]:.0%} of the family lacks it)"
    return f"variable column ({top})"


def _helix_interior(label: str) -> str | None:
    if not label:
        return None
    segment = segment_of(label)
    if is_helix(segment) and place_of(label) >= HELIX_INTERIOR_FROM:
        return segment
    return None


def _core_reason(family: Family, column: int, new: str) -> str:
    """Why a polar residue does not belong in a hydrophobic core column ('' when the rule does not apply)."""
    core = float(core_hydrophobicity(family.frequencies[column]))
    if family.classes[column] == "gap-rich" or not core >= HYDROPHOBIC_CORE_MIN or not is_polar(new):
        return ""
    return (f"hydrophobic core column (mean hydrophobicity {core:+.2f}, Fauchère & Pliška 1983); {new} is polar "
            f"({CORE_HYDROPHOBICITY[new]:+.2f})")


def globin_reason(target: Target) -> str:
    """``not a globin: ...`` when the target does not place significantly on the frame (E-value not below
    :data:`~globcons.align.significance.GLOBIN_EVALUE`), else ''. Every row of such a target carries it."""
    if target.placed.is_globin:
        return ""
    evalue = target.placed.evalue
    shown = f"E-value {evalue:.2g}" if evalue == evalue else "no E-value"
    return (f"not a globin: the target does not place significantly on the globin frame ({shown}, not below "
            f"{GLOBIN_EVALUE:g}), so the family says nothing about it")


def _evidence_reason(family: Family, column: int) -> str:
    """A ``low_data`` reason when the family, or the column, holds few effective sequences."""
    if family.thin:
        return (f"low_data: the family has only {family.n_eff:.1f} effective sequences, so its classes rest on "
                "little evidence")
    if column >= 0 and family.low_data is not None and family.low_data[column]:
        return f"low_data: only {family.column_n_eff[column]:.1f} effective sequences hold a residue here"
    return ""


def _column_hydropathy(family: Family, column: int) -> tuple[float, float]:
    """Weighted mean and standard deviation of the hydropathy of the family's residues at a column."""
    frequencies = family.frequencies[column, :N_STANDARD]
    total = frequencies.sum()
    if total <= 0:
        return float("nan"), 0.0
    values = HYDROPATHY_ARRAY
    p = frequencies / total
    mean = float(p @ values)
    return mean, float(np.sqrt(p @ (values - mean) ** 2))


def _structure_terms(context: StructureContext | None, given: int) -> tuple[list[str], bool, float]:
    """Reasons from the structure, whether they keep the position from ``open``, and the tolerance change."""
    if context is None:
        return [], False, 0.0
    if not context.is_mapped(given):
        return [f"structure: no residue of chain {context.chain} maps here"], False, 0.0
    i = given - 1
    rsa, burial, where = float(context.rsa[i]), str(context.burial[i]), f"{context.chain}:{context.residue[i]}"
    reasons, closed, delta = [], False, 0.0
    if burial == "core":
        reasons.append(f"core: buried in the structure ({where}, relative accessibility {rsa:.2f})")
        closed, delta = True, delta - CORE_PENALTY
    elif burial:
        reasons.append(f"{burial} ({where}, relative accessibility {rsa:.2f})")
    if rsa == rsa:
        delta += EXPOSURE_WEIGHT * min(1.0, rsa)
    if context.heme_contact[i]:
        reasons.append(f"heme contact: {context.heme_distance[i]:.1f} Å from the heme "
                       f"(iron {context.iron_distance[i]:.1f} Å)")
        closed, delta = True, delta - HEME_CONTACT_PENALTY
    partners = context.partners[i]
    if partners:
        reasons.append(f"interface: chain{'s' if len(partners) > 1 else ''} {', '.join(partners)}")
        closed, delta = True, delta - INTERFACE_PENALTY
    return reasons, closed, delta


def _check_context(target: Target, context: StructureContext | None) -> None:
    if context is not None and len(context.residue) != len(target.sequence):
        raise ValueError(f"the structure context has {len(context.residue)} residues, the target "
                         f"{len(target.sequence)}; build it for this target")


def _numbering_cells(target: Target, given: int, new: str | None = None) -> tuple[int | None, str]:
    return target.mature_position(given), hgvs_cell(target, given, new)


def _assess(target: Target, given: int, mutation: Mutation,
            context: StructureContext | None = None) -> dict[str, object]:
    family = target.family
    wild, new = target.sequence[given - 1], mutation.new
    label = target.placed.label_at(given)
    column = int(target.columns[given - 1])
    mature, hgvs = _numbering_cells(target, given, new)
    site_list = _site_reasons(target, label)
    reasons = [f"{label}: {site.role}" for site in site_list]
    frequency = float("nan")
    column_class = str(family.classes[column]) if column >= 0 else ""
    verdict = _base_verdict(bool(site_list), column_class)
    if column >= 0:
        reasons.append(_column_words(family, column))
        frequency = float(family.frequencies[column, RESIDUE_LETTERS.index(new)])
        reasons.append(f"{new} seen in {frequency:.0%} of the family here" if frequency > 0
                       else f"{new} never seen here in the family")
        core = _core_reason(family, column, new)
        if core:
            reasons.append(core)
            verdict = "guarded" if verdict == "open" else verdict
    else:
        reasons.append("not on the family's columns (a residue the family lacks)")
    evidence = _evidence_reason(family, column)
    if evidence:
        reasons.append(evidence)
    helix = _helix_interior(label)
    if helix and new in "PG" and wild != new:
        reasons.append(f"{'Pro' if new == 'P' else 'Gly'} inside helix {helix} ({label}), past its first turn")
        verdict = "guarded" if verdict == "open" else verdict
    structural, closed, _ = _structure_terms(context, given)
    reasons += structural
    if closed and verdict == "open":
        verdict = "guarded"
    score = matrix_score(family.matrix, wild, new)
    if score == score and score < 0:
        reasons.append(f"substitution scores {score:+.0f} in {family.matrix}")
    reasons += [r for r in (globin_reason(target),) if r]
    return {
        "mutation": mutation.text, "position": given, "wild_type": wild, "new_residue": new,
        "mature_position": mature, "hgvs": hgvs, "hgvs_note": "" if hgvs else hgvs_note(target),
        "frame_label": label, "column": column + 1 if column >= 0 else None, "column_class": column_class,
        **(context.cells(given) if context is not None else {}), "family_frequency": frequency, "blosum": score,
        "property_change": property_change(wild, new).text(),
        "verdict": verdict, "reasons": "; ".join(reasons),
    }


def _numbering_hint(target: Target, mutation: Mutation) -> str:
    """A hint when the wild-type residue is where the other numbering would put it."""
    if mutation.label is not None or mutation.hgvs or not target.starts_with_met:
        return ""
    other = "given" if target.numbering == "mature" else "mature"
    shifted = mutation.position + (1 if other == "mature" else -1)
    if 1 <= shifted <= len(target.sequence) and target.sequence[shifted - 1] == mutation.wild:
        return f" (in {other} numbering, without the initiator Met counted, it is: add --numbering {other})" \
            if other == "mature" else " (in numbering as given it is: drop --numbering mature)"
    return ""


def check(target, mutations: Iterable[str | Mutation], family: Family | None = None,
          numbering: str = "given", context: StructureContext | None = None) -> pd.DataFrame:
    """Judge mutations of a target (see the module notes).

    Parameters
    ----------
    target
        A :class:`Target`, a sequence, or an ``(id, sequence)`` pair.
    mutations
        Notations (``E6V``, ``Glu6Val``, ``p.Glu7Val``, ``p.E7V``, ``A3:V``) or parsed mutations.
    family
        As for :func:`prepare_target`.
    numbering
        ``"given"`` or ``"mature"``.
    context
        What a structure says about each target residue
        (:func:`globcons.structure.context.target_context`): adds :data:`STRUCTURE_COLUMNS` and the
        structural reasons; core, heme-contact and interface positions are never ``open``.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`CHECK_COLUMNS` (with :data:`STRUCTURE_COLUMNS` after ``column_class`` when a
        ``context`` is given), one row per mutation.

    Raises
    ------
    OptionError
        A mutation that does not parse, names a position outside the target, or whose wild-type residue is
        not the target's (the message names the mutation and the residue there).

    Examples
    --------
    >>> from globcons.frame.reference import reference_chain
    >>> beta = reference_chain("human_hemoglobin_beta").mature_sequence
    >>> table = check(("beta", beta), ["E6V", "H92Y"])
    >>> table[["mutation", "frame_label", "verdict"]].values.tolist()
    [['E6V', 'A3', 'open'], ['H92Y', 'F8', 'locked']]
    """
    target = as_target(target, family, numbering)
    _check_context(target, context)
    rows = []
    for item in mutations:
        mutation = item if isinstance(item, Mutation) else parse_mutation(item)
        given = target.given_position(mutation)
        there = target.sequence[given - 1]
        if mutation.wild is not None and mutation.wild != there:
            raise OptionError(f"{mutation.text}: the target has {there} at position {given} (as given"
                              + (f"; mature {target.mature_position(given)}" if target.mature_position(given) else "")
                              + f"), not {mutation.wild}" + _numbering_hint(target, mutation))
        rows.append(_assess(target, given, mutation, context))
    table = pd.DataFrame(rows, columns=_with_structure(CHECK_COLUMNS, "column_class", context))
    table["mature_position"] = pd.array(table["mature_position"], dtype="Int64")
    table["column"] = pd.array(table["column"], dtype="Int64")
    return table


def _with_structure(columns: tuple[str, ...], after: str, context: StructureContext | None) -> list[str]:
    """The table's columns, with :data:`STRUCTURE_COLUMNS` after ``after`` when there is a structure."""
    if context is None:
        return list(columns)
    at = columns.index(after) + 1
    return [*columns[:at], *STRUCTURE_COLUMNS, *columns[at:]]


def _substitutions(family: Family, column: int, wild: str, limit: int = SUBSTITUTIONS_SHOWN) -> str:
    frequencies = family.frequencies[column]
    order = [k for k in np.argsort(-frequencies, kind="stable") if frequencies[k] > 0 and RESIDUE_LETTERS[k] != wild]
    parts = []
    for k in order[:limit]:
        letter = RESIDUE_LETTERS[k]
        score = matrix_score(family.matrix, wild, letter)
        parts.append(f"{letter} {frequencies[k]:.0%} ({score:+.0f})")
    return ", ".join(parts)


def _position_row(target: Target, given: int, site_list: list[Site],
                  context: StructureContext | None = None) -> dict[str, object]:
    """One row of the plan: the tolerance, verdict and reasons of the residue at ``given``."""
    family, wild = target.family, target.sequence[given - 1]
    label = target.placed.label_at(given)
    mature, hgvs = _numbering_cells(target, given)
    cells = context.cells(given) if context is not None else {}
    if given == 1 and target.starts_with_met:
        return {"position": 1, "mature_position": mature, "hgvs": hgvs, "hgvs_note": "", "residue": wild,
                "frame_label": "",
                "column": None, "column_class": "", **cells, "tolerance": INITIATOR_TOLERANCE, "verdict": "locked",
                "substitutions": "", "reasons": "; ".join(r for r in (
                    "initiator Met: changing it loses the start of translation", globin_reason(target)) if r)}
    column = int(target.columns[given - 1])
    reasons = [f"{label}: {site.role}" for site in site_list]
    verdict = "locked" if site_list else "open"
    if column >= 0:
        entropy = float(np.nan_to_num(family.entropy_norm[column]))
        _, spread = _column_hydropathy(family, column)
        tolerance = (entropy + GAP_WEIGHT * float(family.gaps[column])
                     + SPREAD_WEIGHT * min(1.0, spread / SPREAD_SCALE))
        cls = str(family.classes[column])
        reasons.append(_column_words(family, column))
        verdict = _base_verdict(bool(site_list), cls)
        substitutions = _substitutions(family, column, wild)
    else:
        tolerance, cls, substitutions = OFF_COLUMN_TOLERANCE, "", ""
        reasons.append("not on the family's columns (a residue the family lacks)")
    if site_list:
        tolerance -= SITE_PENALTY
    evidence = _evidence_reason(family, column)
    if evidence:
        reasons.append(evidence)
    helix = _helix_interior(label)
    if helix and wild in "PG":
        tolerance -= HELIX_PG_PENALTY
        reasons.append(f"{'Pro' if wild == 'P' else 'Gly'} inside helix {helix} ({label}): structural")
        verdict = "guarded" if verdict == "open" else verdict
    structural, closed, delta = _structure_terms(context, given)
    reasons += structural
    tolerance += delta
    if closed and verdict == "open":
        verdict = "guarded"
    reasons += [r for r in (globin_reason(target),) if r]
    return {"position": given, "mature_position": mature, "hgvs": hgvs, "hgvs_note": "" if hgvs else hgvs_note(target),
            "residue": wild, "frame_label": label,
            "column": column + 1 if column >= 0 else None, "column_class": cls, **cells,
            "tolerance": round(tolerance, 6),
            "verdict": verdict, "substitutions": substitutions, "reasons": "; ".join(reasons)}


def _check_names(labels: set[str], kinds: set[str]) -> None:
    """Refuse excluded labels the frame does not have and site kinds no site has, naming the valid ones."""
    known_labels = {label for label in reference_alignment().own_labels.ravel() if label}
    unknown = sorted(labels - known_labels, key=str)
    if unknown:
        close = difflib.get_close_matches(unknown[0].upper(), sorted(known_labels), n=1)
        hint = f" (did you mean {close[0]}?)" if close else ""
        raise OptionError(f"--exclude-labels: {unknown[0]!r} is not a frame label{hint}; labels are upper case, a "
                          f"segment ({', '.join(FRAME_ORDER)}) then a place, e.g. A3, F8, FG3")
    known_kinds = sorted({site.kind for site in sites() if site.kind})
    unknown = sorted(kinds - set(known_kinds))
    if unknown:
        raise OptionError(f"--exclude-kinds: unknown site kind {unknown[0]!r}; the kinds are {', '.join(known_kinds)}")


def rank_sites(target, family: Family | None = None, numbering: str = "given",
               exclude_labels: Iterable[str] = (), exclude_helices: Iterable[str] = (),
               exclude_kinds: Iterable[str] = (), top: int | None = None,
               context: StructureContext | None = None, surface_only: bool = False,
               exclude_interfaces: bool = False) -> pd.DataFrame:
    """Every position of the target ranked for mutation, most tolerant first (see the module notes).

    Parameters
    ----------
    exclude_labels, exclude_helices, exclude_kinds
        Leave out these frame labels, helices (``"E"``) or site kinds (``"heme-ligand"``).
    top
        Keep the first ``top`` rows.
    context
        What a structure says about each target residue
        (:func:`globcons.structure.context.target_context`).
    surface_only
        Keep only positions the structure calls ``surface`` (needs ``context``).
    exclude_interfaces
        Leave out positions touching another chain of the structure (needs ``context``).

    Returns
    -------
    pandas.DataFrame
        Columns :data:`PLAN_COLUMNS` (with :data:`STRUCTURE_COLUMNS` after ``column_class`` when a
        ``context`` is given).

    Raises
    ------
    OptionError
        An unknown helix, or ``surface_only`` / ``exclude_interfaces`` without a structure.
    """
    target = as_target(target, family, numbering)
    _check_context(target, context)
    if context is None and (surface_only or exclude_interfaces):
        raise OptionError(f"{'--surface-only' if surface_only else '--exclude-interfaces'} needs a structure "
                          "(--structure FILE)")
    labels_out, helices_out, kinds_out = set(exclude_labels), set(exclude_helices), set(exclude_kinds)
    unknown_helices = helices_out - set(HELICES)
    if unknown_helices:
        raise OptionError(f"unknown helix {sorted(unknown_helices)[0]!r}; helices are {', '.join(HELICES)}")
    _check_names(labels_out, kinds_out)
    rows = []
    for given in range(1, len(target.sequence) + 1):
        label = target.placed.label_at(given)
        if label in labels_out or (label and segment_of(label) in helices_out):
            continue
        site_list = _site_reasons(target, label)
        if any(site.kind in kinds_out for site in site_list):
            continue
        if context is not None and ((surface_only and context.burial[given - 1] != "surface")
                                    or (exclude_interfaces and context.partners[given - 1])):
            continue
        rows.append(_position_row(target, given, site_list, context))
    rows.sort(key=lambda r: (_TIER[r["verdict"]], _CLASS_ORDER.get(r["column_class"], 0),
                             BURIAL_ORDER.get(r.get("burial", ""), 0) if context is not None else 0,
                             -r["tolerance"], r["position"]))
    for rank, row in enumerate(rows, start=1):
        row["rank"] = rank
    if top is not None:
        rows = rows[:top]
    table = pd.DataFrame(rows, columns=_with_structure(PLAN_COLUMNS, "column_class", context))
    table["mature_position"] = pd.array(table["mature_position"], dtype="Int64")
    table["column"] = pd.array(table["column"], dtype="Int64")
    return table
