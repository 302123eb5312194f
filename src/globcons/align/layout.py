"""Sequences placed on the frame laid out as an alignment: one column per frame position (plus inserts)."""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from globcons.align.frame_columns import reference_alignment
from globcons.align.placement import PlacedSequence, place_many
from globcons.align.scoring_profile import Profile
from globcons.align.significance import DEFAULT_SHUFFLES
from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE, GAP
from globcons.core.labels import HELICES

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["FrameAlignment", "align_to_frame", "PLACE_BATCH"]

#: Sequences placed per batch by :func:`align_to_frame` (the progress it reports moves by batches; the
#: placements do not depend on the batch: every query is aligned and shuffled on its own).
PLACE_BATCH = 256


@dataclass(frozen=True, eq=False)
class FrameAlignment:
    """Sequences placed on the frame as an alignment: one column per frame position (plus insert columns).

    Attributes
    ----------
    placed
        The placement of every sequence, in input order.
    rows
        Aligned text per sequence: frame columns upper case or '-', insert columns (``keep_inserts``) lower
        case or '.' (the A2M convention).
    labels
        Frame label of every column ('' for insert columns).
    unplaced
        Residues of each sequence left out of the frame columns (insertions and unaligned ends).
    """

    placed: tuple[PlacedSequence, ...]
    rows: tuple[str, ...]
    labels: tuple[str, ...]
    unplaced: tuple[int, ...]

    @property
    def ids(self) -> tuple[str, ...]:
        return tuple(p.id for p in self.placed)

    def summary(self) -> pd.DataFrame:
        """One row per sequence: nearest reference, identity, score, E-value, helix coverage, residues left out."""
        import pandas as pd

        rows = []
        for placed, unplaced in zip(self.placed, self.unplaced, strict=True):
            row = {"id": placed.id, "length": len(placed.sequence), "nearest_reference": placed.nearest_reference,
                   "identity": round(placed.identity, 1), "score": round(placed.score, 1),
                   "evalue": f"{placed.evalue:.2e}" if np.isfinite(placed.evalue) else "",
                   "is_globin": ("yes" if placed.is_globin else "no") if np.isfinite(placed.evalue) else "",
                   "unplaced_residues": unplaced}
            for helix in HELICES:
                row[f"coverage_{helix}"] = placed.coverage.get(helix, float("nan"))
            rows.append(row)
        return pd.DataFrame(rows)

    def to_alignment(self, source: str = "<placed>") -> Alignment:
        """The rows as an :class:`~globcons.core.alignment.Alignment` carrying the frame labels."""
        text = "".join(self.rows).replace(".", "-").encode("ascii")
        codes = BYTE_TO_CODE[np.frombuffer(text, dtype=np.uint8)].reshape(len(self.rows), len(self.labels)).copy()
        codes[codes >= GAP] = GAP
        return Alignment(ids=self.ids, codes=codes, source=source, format="frame", frame_labels=self.labels,
                         frame_labels_from="placement")


def align_to_frame(records: Iterable[tuple[str, str]], keep_inserts: bool = False,
                   shuffles: int = DEFAULT_SHUFFLES, profile: Profile | None = None,
                   progress: Callable[[int], None] | None = None) -> FrameAlignment:
    """Place sequences on the frame and lay them out as an alignment.

    Parameters
    ----------
    records
        ``(id, sequence)`` pairs.
    keep_inserts
        Keep residues that fall between frame columns (and unaligned ends) as lower-case insert columns,
        padded with '.' (A2M convention), instead of dropping them.
    shuffles, profile
        As for :func:`place_many`.
    progress
        Called with the number of sequences placed after each batch of :data:`PLACE_BATCH` (for a progress
        display; the library prints nothing).

    Examples
    --------
    >>> from globcons.frame import reference_chains
    >>> chains = [(c.name, c.mature_sequence) for c in reference_chains()]
    >>> frame = align_to_frame(chains)
    >>> len(frame.labels), frame.labels[frame.labels.index("F8")]
    (154, 'F8')
    """
    records = list(records)
    placed: list[PlacedSequence] = []
    for start in range(0, len(records), PLACE_BATCH):
        batch = records[start:start + PLACE_BATCH]
        placed += place_many(batch, profile=profile, shuffles=shuffles)
        if progress is not None:
            progress(len(batch))
    reference = reference_alignment()
    canonical = [column.label for column in reference.columns]
    n_frame = len(canonical)
    slots_of = []  # per sequence: slot index (0..n_frame) of every unplaced residue
    for p in placed:
        columns = p.column_of_residue
        previous = np.maximum.accumulate(np.where(columns >= 0, columns + 1, 0))  # slot after last placed
        slots_of.append(previous[columns < 0])
    unplaced = tuple(int(s.size) for s in slots_of)
    if not keep_inserts:
        rows = []
        for p in placed:
            row = np.full(n_frame, ord("-"), dtype=np.uint8)
            ok = p.column_of_residue >= 0
            row[p.column_of_residue[ok]] = np.frombuffer(p.sequence.encode("ascii"), dtype=np.uint8)[ok]
            rows.append(row.tobytes().decode("ascii"))
        return FrameAlignment(tuple(placed), tuple(rows), tuple(canonical), unplaced)
    widths = np.zeros(n_frame + 1, dtype=np.int64)
    for slots in slots_of:
        widths = np.maximum(widths, np.bincount(slots, minlength=n_frame + 1))
    # Column layout: slot 0 inserts, frame column 0, slot 1 inserts, frame column 1, ...
    slot_start = np.concatenate(([0], np.cumsum(widths[:-1] + 1)))
    frame_column = slot_start[1:] - 1
    width = int(widths.sum()) + n_frame
    labels = [""] * width
    for index, label in zip(frame_column.tolist(), canonical, strict=True):
        labels[index] = label
    rows = []
    for p, slots in zip(placed, slots_of, strict=True):
        row = np.full(width, ord("."), dtype=np.uint8)
        row[frame_column] = ord("-")
        letters = np.frombuffer(p.sequence.encode("ascii"), dtype=np.uint8)
        ok = p.column_of_residue >= 0
        row[frame_column[p.column_of_residue[ok]]] = letters[ok]
        if slots.size:
            first = np.r_[True, slots[1:] != slots[:-1]]
            run_start = np.maximum.accumulate(np.where(first, np.arange(slots.size), 0))
            row[slot_start[slots] + np.arange(slots.size) - run_start] = letters[~ok] + 32  # lower case
        rows.append(row.tobytes().decode("ascii"))
    return FrameAlignment(tuple(placed), tuple(rows), tuple(labels), unplaced)

