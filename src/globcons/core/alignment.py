"""The :class:`Alignment` value object: row ids and the ``uint8`` code matrix."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from types import MappingProxyType

import numpy as np

from globcons.core.alphabet import GAP, N_RESIDUES, decode

__all__ = ["Alignment"]


@dataclass(frozen=True, eq=False)
class Alignment:
    """A protein multiple alignment, encoded.

    Attributes
    ----------
    ids
        Row identifiers (unique), length N.
    codes
        ``uint8`` array, shape (N, L), read-only: residue codes of :mod:`globcons.core.alphabet`.
    descriptions
        Text after the id on each header line (may be empty strings), length N.
    column_annotations
        Per-column text annotations, each a string of length L (Stockholm ``#=GC`` lines), by feature.
    source
        Where it was read from (a path, ``"<stdin>"`` or ``"<memory>"``).
    format
        The format it was read as.
    notes
        Reader notes worth reporting (e.g. how many insert states were dropped), by key.
    frame_labels
        The globin frame label of every column ('' for a column without one), when the input carried
        them (written by ``globcons align``), else None; :attr:`frame_labels_from` says where they came
        from. Labels are data of the alignment: scoring never looks for them on disk.
    frame_labels_from
        ``"file"`` (the file's own ``#=GC`` lines), the path of the sidecar table they were read from, or
        ``""`` when there are none.
    """

    ids: tuple[str, ...]
    codes: np.ndarray
    descriptions: tuple[str, ...] = ()
    column_annotations: Mapping[str, str] = field(default_factory=dict)
    source: str = "<memory>"
    format: str = "fasta"
    notes: Mapping[str, object] = field(default_factory=dict)
    frame_labels: tuple[str, ...] | None = None
    frame_labels_from: str = ""

    def __post_init__(self) -> None:
        codes = np.asarray(self.codes, dtype=np.uint8)
        if codes.ndim != 2:
            raise ValueError(f"codes must be 2-D (rows x columns), got shape {codes.shape}")
        if codes.shape[0] != len(self.ids):
            raise ValueError(f"{len(self.ids)} ids for {codes.shape[0]} rows")
        if codes.size and int(codes.max()) > GAP:
            raise ValueError("codes hold values outside the alphabet")
        if codes.flags.writeable:
            # Never freeze the caller's array: take a private copy (readers hand over frozen arrays).
            codes = codes.copy()
            codes.flags.writeable = False
        object.__setattr__(self, "codes", codes)
        object.__setattr__(self, "ids", tuple(self.ids))
        descriptions = tuple(self.descriptions) or ("",) * len(self.ids)
        if len(descriptions) != len(self.ids):
            raise ValueError(f"{len(descriptions)} descriptions for {len(self.ids)} rows")
        object.__setattr__(self, "descriptions", descriptions)
        for key, text in self.column_annotations.items():
            if len(text) != codes.shape[1]:
                raise ValueError(f"column annotation {key!r} has {len(text)} characters for {codes.shape[1]} columns")
        object.__setattr__(self, "column_annotations", MappingProxyType(dict(self.column_annotations)))
        object.__setattr__(self, "notes", MappingProxyType(dict(self.notes)))
        if self.frame_labels is not None:
            labels = tuple(str(label) for label in self.frame_labels)
            if len(labels) != codes.shape[1]:
                raise ValueError(f"{len(labels)} frame labels for {codes.shape[1]} columns")
            object.__setattr__(self, "frame_labels", labels)

    def with_frame_labels(self, labels: tuple[str, ...] | list[str] | None, source: str) -> Alignment:
        """A copy carrying ``labels`` (one per column) as its frame labels, read from ``source``."""
        return replace(self, frame_labels=None if labels is None else tuple(labels),
                       frame_labels_from=source if labels is not None else "")

    @property
    def n_rows(self) -> int:
        """Number of sequences N."""
        return self.codes.shape[0]

    @property
    def n_columns(self) -> int:
        """Number of columns L."""
        return self.codes.shape[1]

    def row(self, key: int | str) -> str:
        """The letters of one row (by index or id), gaps as '-'."""
        index = self.ids.index(key) if isinstance(key, str) else key
        return decode(self.codes[index])

    def ungapped_positions(self, key: int | str) -> np.ndarray:
        """1-based residue number of row ``key`` at every column, -1 where it has no residue.

        Unknown letters (X) count as residues of the sequence: they occupy a position.
        """
        index = self.ids.index(key) if isinstance(key, str) else key
        row = self.codes[index]
        occupied = row != GAP
        positions = np.cumsum(occupied)
        return np.where(occupied, positions, -1).astype(np.int64)

    def residue_mask(self) -> np.ndarray:
        """Boolean (N, L): True where a row holds a residue (not a gap, not unknown)."""
        return self.codes < N_RESIDUES

    def __repr__(self) -> str:
        return f"Alignment({self.n_rows} rows x {self.n_columns} columns from {self.source}, {self.format})"
