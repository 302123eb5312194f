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
from functools import lru_cache

import numpy as np

from globcons.core.alphabet import GROUP_SOURCES, MATRIX_STAND_IN, N_RESIDUES, RESIDUE_GROUPS, RESIDUE_LETTERS, STANDARD, group_index
from globcons.errors import OptionError

__all__ = ["CLASSES", "ClassRules", "compatible_pairs", "classify", "load_matrix", "top_residues"]

#: The column classes (a contract: scripts rely on these words).
CLASSES = ("invariant", "conservative", "variable", "gap-rich")

_TOLERANCE = 1e-9  # weighted frequencies are sums of floats: 1.0 may arrive as 0.9999999999


@dataclass(frozen=True)
class ClassRules:
    """Thresholds of the column classes (see the module notes)."""

    max_gaps: float = 0.5
    invariant_min: float = 1.0
    group_min: float = 1.0
    matrix: str = "BLOSUM62"
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


@lru_cache(maxsize=None)
def load_matrix(name: str):
    """A substitution matrix Biopython ships, checked to cover the 20 standard residues."""
    from Bio.Align import substitution_matrices

    available = substitution_matrices.load()
    if name not in available:
        raise OptionError(f"unknown --matrix {name!r}; Biopython ships: {', '.join(available)}")
    matrix = substitution_matrices.load(name)
    missing = set(STANDARD) - set(matrix.alphabet)
    if missing:
        raise OptionError(f"matrix {name} does not cover the 20 amino acids (missing {''.join(sorted(missing))}); "
                          "choose a protein matrix such as BLOSUM62")
    return matrix


@lru_cache(maxsize=None)
def compatible_pairs(matrix: str = "BLOSUM62", residue_groups: str | None = None) -> np.ndarray:
    """Which residue pairs may share a conservative column.

    Returns
    -------
    numpy.ndarray
        Read-only bool, shape (22, 22) over :data:`~globcons.core.alphabet.RESIDUE_LETTERS`; the diagonal is True.
    """
    if residue_groups is not None:
        index = group_index(residue_groups)
        table = index[:, None] == index[None, :]
    else:
        scores = load_matrix(matrix)
        letters = [MATRIX_STAND_IN.get(c, c) for c in RESIDUE_LETTERS]
        table = np.array([[scores[a][b] > 0 for b in letters] for a in letters])
        np.fill_diagonal(table, True)
    table.flags.writeable = False
    return table


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
