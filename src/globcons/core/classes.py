"""Column classes: ``invariant``, ``conservative``, ``variable``, ``gap-rich``.

Rules, in order (every threshold is a field of :class:`ClassRules`):

1. ``gap-rich``: the weighted gap fraction is above ``max_gaps``.
2. ``invariant``: one residue carries at least ``invariant_min`` of the residue weight.
3. ``conservative``: the most frequent residues that together carry at least ``group_min`` of the
   residue weight form one substitution group: with a matrix, every pair of them scores above 0
   (Biopython's copy of the matrix; U and O scored as C and K); with ``residue_groups``, they all
   fall in one group of that reduced alphabet.
4. ``variable``: the rest.

A column whose ``n_eff`` is below ``min_neff`` keeps its class and is flagged ``low_data``.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from globcons.core.alphabet import GROUP_SOURCES, N_RESIDUES, RESIDUE_GROUPS
from globcons.core.matrices import DEFAULT_MATRIX, compatible_pairs, load_matrix
from globcons.core.scores import LOG2_20, entropy_bits, gap_fraction, residue_frequencies
from globcons.core.vocabulary import CLASSES
from globcons.errors import OptionError

__all__ = ["CLASSES", "ClassRules", "ColumnStatistics", "column_statistics", "classify", "top_residues"]

_TOLERANCE = 1e-9  # weighted frequencies are sums of floats: 1.0 may arrive as 0.9999999999


@dataclass(frozen=True)
class ClassRules:
    """Thresholds of the column classes (see the module notes)."""

    max_gaps: float = 0.5
    invariant_min: float = 1.0
    group_min: float = 1.0
    matrix: str = DEFAULT_MATRIX
    residue_groups: str | None = None
    min_neff: float = 5.0

    def __post_init__(self) -> None:
        if not 0.0 <= self.max_gaps <= 1.0:
            raise OptionError(f"--max-gaps must be between 0 and 1, got {self.max_gaps}")
        if not 0.0 < self.invariant_min <= 1.0:
            raise OptionError(f"--invariant-min must be in (0, 1], got {self.invariant_min}")
        if not 0.0 < self.group_min <= 1.0:
            raise OptionError(f"--group-min must be in (0, 1], got {self.group_min}")
        if self.min_neff < 0:
            raise OptionError(f"--min-neff must not be negative, got {self.min_neff}")
        if self.residue_groups is not None and self.residue_groups not in RESIDUE_GROUPS:
            raise OptionError(f"unknown --residue-groups {self.residue_groups!r}; choose one of "
                              f"{', '.join(RESIDUE_GROUPS)}")
        if self.residue_groups is None:
            load_matrix(self.matrix)  # fail early on a bad name

    @property
    def grouping(self) -> str:
        """How substitution groups are judged, in words (for the methods text and metadata)."""
        if self.residue_groups:
            return f"reduced alphabet {self.residue_groups} ({GROUP_SOURCES[self.residue_groups]})"
        return f"all pairs score > 0 in {self.matrix}"

    def as_dict(self) -> dict[str, object]:
        return asdict(self)


def top_residues(frequencies: np.ndarray, share: float) -> np.ndarray:
    """The most frequent residues of each column that together carry at least ``share`` of its weight.

    Chosen by descending frequency, ties alphabetical; residues of frequency 0 never count.

    Returns
    -------
    numpy.ndarray
        bool, shape (L, 22).
    """
    order = np.argsort(-frequencies, axis=1, kind="stable")
    ranked = np.take_along_axis(frequencies, order, axis=1)
    reached = np.cumsum(ranked, axis=1) >= share - _TOLERANCE
    needed = np.where(reached.any(axis=1), reached.argmax(axis=1) + 1, N_RESIDUES)
    in_top = np.zeros_like(frequencies, dtype=bool)
    np.put_along_axis(in_top, order, np.arange(N_RESIDUES)[None, :] < needed[:, None], axis=1)
    return in_top & (frequencies > 0)


def classify(frequencies: np.ndarray, gap_fraction: np.ndarray, n_eff: np.ndarray,
             rules: ClassRules = ClassRules()) -> tuple[np.ndarray, np.ndarray]:
    """Class and low-data flag of every column.

    Parameters
    ----------
    frequencies
        (L, 22) weighted residue frequencies (rows sum to 1, or to 0 where a column has no residue).
    gap_fraction
        (L,) weighted gap fraction.
    n_eff
        (L,) summed weight of the rows holding a residue.
    rules
        Thresholds.

    Returns
    -------
    classes, low_data
        ``classes`` an object array of the words in :data:`CLASSES`; ``low_data`` bool.
    """
    n_columns = frequencies.shape[0]
    has_residue = frequencies.sum(axis=1) > 0
    invariant = frequencies.max(axis=1, initial=0.0) >= rules.invariant_min - _TOLERANCE

    in_top = top_residues(frequencies, rules.group_min)
    clash = (in_top.astype(np.int64) @ (~compatible_pairs(rules.matrix, rules.residue_groups)).astype(np.int64))
    conservative = ~(clash * in_top).any(axis=1) & has_residue

    classes = np.full(n_columns, "variable", dtype=object)
    classes[conservative] = "conservative"
    classes[invariant & has_residue] = "invariant"
    classes[gap_fraction > rules.max_gaps + _TOLERANCE] = "gap-rich"
    low_data = n_eff < rules.min_neff - _TOLERANCE
    return classes, low_data


@dataclass(frozen=True, eq=False)
class ColumnStatistics:
    """What every consumer of a family's columns needs, computed once from weighted counts.

    Attributes
    ----------
    frequencies
        (L, 22) weighted residue frequencies (gaps and unknowns left out).
    gap_fraction
        (L,) weighted gap fraction.
    n_eff
        (L,) summed weight of the rows holding a residue.
    entropy_bits
        (L,) Shannon entropy over the 20 standard residues (NaN where a column has none).
    classes
        (L,) the words of :data:`CLASSES`.
    low_data
        (L,) bool: ``n_eff`` below the rules' ``min_neff``.
    groups
        (L, 22) bool: each column's substitution group (its top residues carrying ``group_min``).
    """

    frequencies: np.ndarray
    gap_fraction: np.ndarray
    n_eff: np.ndarray
    entropy_bits: np.ndarray
    classes: np.ndarray
    low_data: np.ndarray
    groups: np.ndarray

    @property
    def entropy_norm(self) -> np.ndarray:
        """Entropy over log2(20): 0 invariant, 1 all twenty residues alike."""
        return self.entropy_bits / LOG2_20


def column_statistics(counts: np.ndarray, rules: ClassRules = ClassRules()) -> ColumnStatistics:
    """Frequencies, gaps, effective counts, entropy and classes of every column of weighted counts.

    Parameters
    ----------
    counts
        (L, N_CODES) weighted counts (:func:`globcons.core.counts.column_counts`).
    rules
        Class thresholds.
    """
    frequencies = residue_frequencies(counts)
    gaps = gap_fraction(counts)
    n_eff = counts[:, :N_RESIDUES].sum(axis=1)
    classes, low_data = classify(frequencies, gaps, n_eff, rules)
    return ColumnStatistics(frequencies, gaps, n_eff, entropy_bits(counts), classes, low_data,
                            top_residues(frequencies, rules.group_min))
