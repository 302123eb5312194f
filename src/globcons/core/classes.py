"""Column classes: ``invariant``, ``conservative``, ``variable``, ``gap-rich``, decided with their support.

A column's class is a statement about the family, not about the sample: one divergent sequence in fifty
should not make a histidine column "variable", and three sequences that agree prove little. So every
class is decided from a posterior distribution of the column's residue shares given how much independent
evidence the column has (its effective number of sequences ``n_eff``: cluster weights at 80% identity,
:mod:`globcons.core.weights`).

The model
---------
A column's residue shares ``p`` get a Dirichlet prior of total weight ``prior_weight`` (``A``, default 1)
spread by the BLOSUM62 background frequencies ``q`` (Henikoff & Henikoff 1992); the observed residues are
``n = n_eff`` draws with the column's weighted frequencies ``f``, so the posterior is
``Dirichlet(A q + n f)`` (the conjugate update of a multinomial; e.g. Gelman et al., Bayesian Data
Analysis, 3rd ed., section 3.4). The share of any set of residues ``S`` is then Beta distributed:
``Beta(A q_S + n f_S, A (1 - q_S) + n (1 - f_S))``, and its tail is the regularised incomplete beta
function (``scipy.special.betainc``).

Rules, in order (every threshold is a field of :class:`ClassRules`):

1. ``gap-rich``: the weighted share of rows without a residue there, gaps and unknowns (X, B, Z, J), is above
   ``max_gaps``: a column of only X has nothing to class, so it is gap-rich (and ``low_data``), never
   ``variable``;
2. ``invariant``: the posterior probability that the most frequent residue's share is at least
   ``invariant_min`` (0.8) is at least ``confidence`` (0.9);
3. ``conservative``: the same for the share of the column's substitution group and ``group_min``
   (0.8). The group is built greedily: residues by descending frequency, each kept if it is compatible
   with every residue kept before it (with a matrix: the pair scores above 0 in Biopython's copy, U and O
   scored as C and K; with ``residue_groups``: both in one group of that reduced alphabet);
4. ``variable``: the rest.

``support`` is the posterior probability behind the class: of the invariant share (invariant), of the
group share (conservative), of the group share *not* reaching ``group_min`` (variable), of the gap share
exceeding ``max_gaps`` (gap-rich, with a Jeffreys prior). With the defaults, about eleven effective
sequences that agree are needed before a column is invariant (three give a support near 0.5), and one
outlier in fifty moves nothing. A column whose ``n_eff`` is below ``min_neff`` is also flagged
``low_data``.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

from globcons.core.alphabet import GROUP_SOURCES, N_RESIDUES, N_STANDARD, RESIDUE_GROUPS
from globcons.core.incomplete_beta import regularized_incomplete_beta
from globcons.core.matrices import DEFAULT_MATRIX, compatible_pairs, load_matrix
from globcons.core.scores import (
    BLOSUM62_BACKGROUND,
    LOG2_20,
    entropy_bits,
    gap_fraction,
    residue_frequencies,
    unknown_fraction,
)
from globcons.core.vocabulary import CLASSES
from globcons.errors import OptionError

__all__ = ["CLASSES", "ClassRules", "ColumnStatistics", "column_statistics", "classify", "substitution_groups",
           "share_above", "RESIDUE_BACKGROUND"]

_TOLERANCE = 1e-9  # weighted frequencies are sums of floats: 1.0 may arrive as 0.9999999999
#: Prior shares of the 22 residue codes: the BLOSUM62 background of the 20 standard residues; U and O,
#: which the matrix does not know, get none.
RESIDUE_BACKGROUND = np.concatenate((BLOSUM62_BACKGROUND, np.zeros(N_RESIDUES - N_STANDARD)))
RESIDUE_BACKGROUND.flags.writeable = False
#: The Jeffreys prior Beta(1/2, 1/2) of the gap share behind the support of a gap-rich column.
_JEFFREYS = 0.5


@dataclass(frozen=True)
class ClassRules:
    """Thresholds of the column classes (see the module notes)."""

    max_gaps: float = 0.5
    invariant_min: float = 0.8
    group_min: float = 0.8
    confidence: float = 0.9
    prior_weight: float = 1.0
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
        if not 0.0 < self.confidence < 1.0:
            raise OptionError(f"--confidence must be in (0, 1), got {self.confidence}")
        if not self.prior_weight > 0.0:
            raise OptionError(f"--prior-weight must be above 0, got {self.prior_weight}")
        for name in ("max_gaps", "invariant_min", "group_min", "confidence", "prior_weight", "min_neff"):
            if not math.isfinite(getattr(self, name)):  # nan passes every comparison below unnoticed
                raise OptionError(f"--{name.replace('_', '-')} must be a number, got {getattr(self, name)}")
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


def substitution_groups(frequencies: np.ndarray, matrix: str = DEFAULT_MATRIX,
                        residue_groups: str | None = None) -> np.ndarray:
    """Each column's substitution group, built greedily from its most frequent residue down.

    A residue joins when it is compatible with every residue already in (see the module notes);
    residues of frequency 0 never join. Vectorised over columns (one step per rank).

    Returns
    -------
    numpy.ndarray
        bool, shape (L, 22).
    """
    clash = ~compatible_pairs(matrix, residue_groups)  # (22, 22)
    order = np.argsort(-frequencies, axis=1, kind="stable")
    chosen = np.zeros(frequencies.shape, dtype=bool)
    rows = np.arange(frequencies.shape[0])
    for rank in range(N_RESIDUES):
        residue = order[:, rank]
        candidate = frequencies[rows, residue] > 0
        fits = ~(chosen & clash[residue]).any(axis=1)
        chosen[rows, residue] = candidate & fits
    return chosen


def share_above(share: np.ndarray, prior: np.ndarray, n: np.ndarray, threshold: float,
                prior_weight: float) -> np.ndarray:
    """Posterior probability that a true share is at least ``threshold``.

    The share is ``Beta(A q + n f, A (1 - q) + n (1 - f))`` (see the module notes), with ``f`` the
    observed ``share``, ``q`` its ``prior`` share and ``A`` the prior weight; any shape.
    """
    a = prior_weight * prior + n * share
    b = prior_weight * (1.0 - prior) + n * (1.0 - share)
    return 1.0 - regularized_incomplete_beta(np.maximum(a, 1e-12), np.maximum(b, 1e-12), threshold)


def classify(frequencies: np.ndarray, gap_fraction: np.ndarray, n_eff: np.ndarray,
             rules: ClassRules = ClassRules(), n_total: np.ndarray | None = None
             ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Class, support, low-data flag and substitution group of every column (see the module notes).

    Parameters
    ----------
    frequencies
        (L, 22) weighted residue frequencies (rows sum to 1, or to 0 where a column has no residue).
    gap_fraction
        (L,) weighted gap fraction.
    n_eff
        (L,) effective number of the sequences holding a residue in each column.
    rules
        Thresholds.
    n_total
        (L,) effective number of all sequences (with a residue, a gap or an unknown), for the support of
        gap-rich columns; default ``n_eff / (1 - gap_fraction)``.

    Returns
    -------
    classes, support, low_data, groups
        Object array of the words of :data:`CLASSES`; ``float64`` support; bool; bool (L, 22).
    """
    n_eff = np.asarray(n_eff, dtype=np.float64)
    has_residue = frequencies.sum(axis=1) > 0
    top = frequencies.argmax(axis=1)
    rows = np.arange(frequencies.shape[0])
    p_invariant = share_above(frequencies[rows, top], RESIDUE_BACKGROUND[top], n_eff, rules.invariant_min,
                              rules.prior_weight)
    groups = substitution_groups(frequencies, rules.matrix, rules.residue_groups)
    p_group = share_above((frequencies * groups).sum(axis=1), groups @ RESIDUE_BACKGROUND, n_eff, rules.group_min,
                          rules.prior_weight)
    if n_total is None:
        with np.errstate(invalid="ignore", divide="ignore"):
            n_total = np.where(gap_fraction < 1.0, n_eff / (1.0 - gap_fraction), n_eff)
    p_gaps = share_above(gap_fraction, np.full(gap_fraction.shape, 0.5), n_total, rules.max_gaps, 2 * _JEFFREYS)

    invariant = has_residue & (p_invariant >= rules.confidence - _TOLERANCE)
    conservative = has_residue & ~invariant & (p_group >= rules.confidence - _TOLERANCE)
    gap_rich = gap_fraction > rules.max_gaps + _TOLERANCE
    classes = np.full(frequencies.shape[0], "variable", dtype=object)
    classes[conservative] = "conservative"
    classes[invariant] = "invariant"
    classes[gap_rich] = "gap-rich"
    support = np.where(invariant, p_invariant, np.where(conservative, p_group, 1.0 - p_group))
    support = np.where(has_residue, support, np.nan)
    support = np.where(gap_rich, p_gaps, support)
    low_data = n_eff < rules.min_neff - _TOLERANCE
    return classes, support, low_data, groups


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
        (L,) effective number of the sequences holding a residue (cluster weights).
    entropy_bits
        (L,) Shannon entropy over the 20 standard residues (NaN where a column has none).
    classes
        (L,) the words of :data:`CLASSES`.
    support
        (L,) the posterior probability behind each class.
    low_data
        (L,) bool: ``n_eff`` below the rules' ``min_neff``.
    groups
        (L, 22) bool: each column's substitution group.
    """

    frequencies: np.ndarray
    gap_fraction: np.ndarray
    n_eff: np.ndarray
    entropy_bits: np.ndarray
    classes: np.ndarray
    support: np.ndarray
    low_data: np.ndarray
    groups: np.ndarray

    @property
    def entropy_norm(self) -> np.ndarray:
        """Entropy over log2(20): 0 invariant, 1 all twenty residues alike."""
        return self.entropy_bits / LOG2_20


def column_statistics(counts: np.ndarray, neff_counts: np.ndarray | None = None,
                      rules: ClassRules = ClassRules()) -> ColumnStatistics:
    """Frequencies, gaps, effective counts, entropy, classes and support of every column.

    Parameters
    ----------
    counts
        (L, N_CODES) counts weighted for the frequencies (Henikoff weights by default;
        :func:`globcons.core.counts.column_counts`).
    neff_counts
        (L, N_CODES) counts weighted by cluster weights, for the effective numbers; None: ``counts``.
    rules
        Class thresholds.
    """
    neff_counts = counts if neff_counts is None else neff_counts
    frequencies = residue_frequencies(counts)
    gaps = gap_fraction(counts)
    n_eff = neff_counts[:, :N_RESIDUES].sum(axis=1)
    missing = gaps + unknown_fraction(counts)  # rows with no residue here: the gap-rich rule counts both
    classes, support, low_data, groups = classify(frequencies, missing, n_eff, rules, neff_counts.sum(axis=1))
    return ColumnStatistics(frequencies, gaps, n_eff, entropy_bits(counts), classes, support, low_data, groups)
