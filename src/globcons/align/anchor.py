"""Tying the columns of any alignment to the globin frame.

Labels come, in this order of preference, from

1. the alignment itself: the labels its file carried (:attr:`~globcons.core.alignment.Alignment.frame_labels`,
   read with the file: the ``#=GC frame_*`` lines that ``globcons align`` writes into Stockholm output, or
   the sidecar table beside a FASTA output);
2. an anchor row: ``--reference ID``, or else the row that places best among the rows with the most
   residues; its residues are placed on the frame (:mod:`globcons.align.placement`) and each alignment column
   takes the label of the anchor residue in it. Columns where the anchor has a gap get no label.

When no row places significantly (the family may not be globins), no labels are given and the summary says
so. Nothing here reads a file: the same alignment always gets the same labels.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from globcons.align.placement import PlacedSequence, place_many
from globcons.align.significance import GLOBIN_EVALUE
from globcons.core.alignment import Alignment
from globcons.core.alphabet import GAP, N_RESIDUES, decode
from globcons.errors import OptionError
from globcons.frame.reference import reference_chain

__all__ = ["ANCHOR_CANDIDATES", "ColumnMapping", "map_columns"]

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


def _anchor_candidates(alignment: Alignment, limit: int) -> list[int]:
    residues = (alignment.codes < N_RESIDUES).sum(axis=1)
    order = np.argsort(-residues, kind="stable")
    return [int(i) for i in order[:limit] if residues[i] > 0]


def _labels_through(alignment: Alignment, row: int, placed: PlacedSequence) -> tuple[str, ...]:
    occupied = alignment.codes[row] != GAP  # residues and unknowns occupy a position of the sequence
    labels = [""] * alignment.n_columns
    for column, label in zip(np.flatnonzero(occupied).tolist(), placed.labels, strict=True):
        labels[column] = label
    return tuple(labels)


def map_columns(alignment: Alignment, anchor: str | None = None, candidates: int = ANCHOR_CANDIDATES) -> ColumnMapping:
    """Frame labels for every column of ``alignment`` (see the module notes).

    Parameters
    ----------
    alignment
        Any protein alignment.
    anchor
        Id of the row to place (None: the labels the alignment carries, else the best-placing row).
    candidates
        Rows tried when choosing the anchor.
    """
    if anchor is None:
        if alignment.frame_labels is not None:
            found_in = alignment.frame_labels_from
            if found_in in ("file", "placement"):
                note = "frame labels carried by the file" if found_in == "file" else "frame labels from the placement"
                return ColumnMapping(alignment.frame_labels, "file", note=note)
            return ColumnMapping(alignment.frame_labels, "sidecar", note=f"frame labels from {found_in}")
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
