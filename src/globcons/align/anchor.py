"""Tying the columns of any alignment to the globin frame, and the functional sites at each column.

Labels come, in this order of preference, from

1. the file itself: the ``#=GC frame_*`` lines that ``globcons align`` writes into Stockholm output, or a
   sidecar table ``<alignment>.frame.tsv`` (columns ``column``, ``frame_label``) beside a FASTA output;
2. an anchor row: ``--reference ID``, or else the row that places best among the rows with the most
   residues; its residues are placed on the frame (:mod:`globcons.align.place`) and each alignment column takes
   the label of the anchor residue in it. Columns where the anchor has a gap get no label.

When no row places significantly (the family may not be globins), no labels are given and the summary says
so. Sites: each labelled column lists the kinds of the functional sites at its label (built-in list, or a
user's table via ``--sites``; a user's table may also name sites by alignment column).
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import N_RESIDUES, decode
from globcons.errors import InputError, OptionError
from globcons.frame.reference import Site, reference_chain, sites
from globcons.io.frame_labels import decode_labels
from globcons.align.place import GLOBIN_EVALUE, PlacedSequence, place_many

__all__ = ["ColumnMapping", "map_columns", "column_sites", "sidecar_path", "read_label_sidecar", "label_sidecar_table",
           "ANCHOR_CANDIDATES"]

#: Rows tried as anchors when none is named: the ones with the most residues.
ANCHOR_CANDIDATES = 12


@dataclass(frozen=True)
class ColumnMapping:
    """Frame labels of an alignment's columns and where they came from.

    Attributes
    ----------
    labels
        One label per column ('' for none).
    source
        ``"file"``, ``"sidecar"``, ``"anchor"`` or ``"none"``.
    anchor
        Id of the anchor row (source ``"anchor"``).
    placement
        The anchor's placement (its nearest reference, identity, E-value).
    note
        One line for the summary.
    """

    labels: tuple[str, ...]
    source: str
    anchor: str | None = None
    placement: PlacedSequence | None = None
    note: str = ""

    @property
    def nearest_reference(self) -> str | None:
        return self.placement.nearest_reference if self.placement else None


def sidecar_path(alignment_path: str | os.PathLike) -> Path:
    """Where the frame labels of a FASTA alignment written by ``globcons align`` are kept."""
    path = str(alignment_path)
    if path.endswith(".gz"):
        path = path[:-3]
    return Path(path + ".frame.tsv")


def label_sidecar_table(labels: tuple[str, ...] | list[str], inserts: list[bool] | None = None):
    """The sidecar table: ``column`` (as written), ``frame_label``, ``match_column`` (the column's number once
    insert columns are dropped, as an A2M reader does by default; empty for insert columns)."""
    import pandas as pd

    inserts = inserts or [False] * len(labels)
    match, count = [], 0
    for is_insert in inserts:
        count += not is_insert
        match.append("" if is_insert else str(count))
    return pd.DataFrame({"column": range(1, len(labels) + 1), "frame_label": list(labels), "match_column": match})


def read_label_sidecar(path: str | os.PathLike, n_columns: int) -> tuple[str, ...] | None:
    """Labels from a sidecar table (see :func:`label_sidecar_table`), or None if it does not fit.

    It fits an alignment with as many columns as it has rows, or as many as it has match columns (an A2M
    file read without its insert columns).
    """
    source = str(path)
    try:
        lines = Path(path).read_text(encoding="utf-8").splitlines()
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read frame labels ({exc})", source=source) from None
    if not lines or lines[0].split("\t")[:2] != ["column", "frame_label"]:
        raise InputError("frame label table must start with the header 'column<TAB>frame_label'", source=source,
                         line=1)
    rows = []
    for number, line in enumerate(lines[1:], start=2):
        if not line.strip():
            continue
        fields = line.split("\t") + ["", ""]
        if not fields[0].isdigit() or (fields[2] and not fields[2].isdigit()):
            raise InputError(f"column {fields[0]!r} is not a column number", source=source, line=number)
        rows.append((int(fields[0]), fields[1].strip(), int(fields[2]) if fields[2] else None))
    if len(rows) == n_columns:
        key = 0
    elif sum(1 for row in rows if row[2] is not None) == n_columns:
        key = 2
    else:
        return None
    labels = [""] * n_columns
    for row in rows:
        if row[key] is not None and 1 <= row[key] <= n_columns:
            labels[row[key] - 1] = row[1]
    return tuple(labels)


def _anchor_candidates(alignment: Alignment, limit: int) -> list[int]:
    residues = (alignment.codes < N_RESIDUES).sum(axis=1)
    order = np.argsort(-residues, kind="stable")
    return [int(i) for i in order[:limit] if residues[i] > 0]


def _labels_through(alignment: Alignment, row: int, placed: PlacedSequence) -> tuple[str, ...]:
    occupied = alignment.codes[row] != 23  # residues and unknowns occupy a position of the sequence
    labels = [""] * alignment.n_columns
    for column, label in zip(np.flatnonzero(occupied).tolist(), placed.labels):
        labels[column] = label
    return tuple(labels)


def map_columns(alignment: Alignment, anchor: str | None = None, source_path: str | os.PathLike | None = None,
                candidates: int = ANCHOR_CANDIDATES) -> ColumnMapping:
    """Frame labels for every column of ``alignment`` (see the module notes).

    Parameters
    ----------
    alignment
        Any protein alignment.
    anchor
        Id of the row to place (None: labels from the file, else the best-placing row).
    source_path
        Path the alignment was read from (to find a sidecar label table).
    candidates
        Rows tried when choosing the anchor.
    """
    if anchor is None:
        carried = decode_labels(dict(alignment.column_annotations))
        if carried is not None:
            return ColumnMapping(tuple(carried), "file", note="frame labels carried by the file")
        if source_path is not None and str(source_path) != "-":
            sidecar = sidecar_path(source_path)
            labels = read_label_sidecar(sidecar, alignment.n_columns) if sidecar.is_file() else None
            if labels is not None:
                return ColumnMapping(labels, "sidecar", note=f"frame labels from {sidecar}")
        rows = _anchor_candidates(alignment, candidates)
    else:
        if anchor not in alignment.ids:
            raise OptionError(f"--reference {anchor!r} is not an id of {alignment.source}")
        rows = [alignment.ids.index(anchor)]
    if not rows:
        return ColumnMapping(("",) * alignment.n_columns, "none", note="no row holds residues: no frame labels")
    sequences = [(alignment.ids[r], decode(alignment.codes[r]).replace("-", "")) for r in rows]
    # Choose by score without significance (cheap), then compute the chosen row's E-value.
    scored = place_many(sequences, shuffles=0)
    best = max(range(len(rows)), key=lambda k: (scored[k].score, -k))
    chosen, row = place_many([sequences[best]])[0], rows[best]
    described = (f"anchor {chosen.id}: nearest {reference_chain(chosen.nearest_reference).display_name}, "
                 f"{chosen.identity:.0f}% identity, E-value {chosen.evalue:.1e}")
    if not chosen.is_globin and anchor is None:
        return ColumnMapping(("",) * alignment.n_columns, "none", chosen.id, chosen,
                             f"no row places on the globin frame (best {described}); no frame labels "
                             "(name an anchor with --reference, or give sites by column with --sites)")
    labels = _labels_through(alignment, row, chosen)
    placed_share = sum(1 for label in chosen.labels if label) / max(len(chosen.labels), 1)
    note = f"frame labels through {described}, {placed_share:.0%} of its residues placed"
    if not chosen.is_globin:
        note += f" (weak: E-value above {GLOBIN_EVALUE:g})"
    return ColumnMapping(labels, "anchor", chosen.id, chosen, note)


def column_sites(labels: tuple[str, ...], chain: str | None = None,
                 user_sites: tuple[Site, ...] | None = None, replace: bool = False) -> list[str]:
    """Kinds of functional sites at every column, joined by ',' ('' for none).

    Parameters
    ----------
    labels
        Frame label per column.
    chain
        Reference chain whose site list applies (None: sites listed for any chain at the label).
    user_sites
        Sites from a user's table: by label, or by alignment column (``Site.column``).
    replace
        Use only the user's sites instead of adding them to the built-in ones.
    """
    built_in = () if replace else (sites(chain) if chain else sites())
    by_label: dict[str, list[str]] = {}
    by_column: dict[int, list[str]] = {}
    for site in list(built_in) + list(user_sites or ()):
        kind = site.kind or site.role
        if site.column is not None:
            by_column.setdefault(site.column, []).append(kind)
        elif site.label:
            by_label.setdefault(site.label, []).append(kind)
    result = []
    for index, label in enumerate(labels, start=1):
        kinds = by_label.get(label, []) if label else []
        kinds = kinds + by_column.get(index, [])
        result.append(",".join(dict.fromkeys(kinds)))
    return result
