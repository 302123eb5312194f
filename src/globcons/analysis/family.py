"""A family to judge sequences against: its columns' classes, residues and (for a user's alignment) profile.

The built-in family is the frame's reference chains; a user's alignment gives its own (``--family``).
Column statistics are those of the column table (:func:`globcons.core.classes.column_statistics`: Henikoff
weights for the frequencies, cluster weights at 80% identity for the effective numbers, and the same
class rules and defaults as ``globcons columns``). A family with fewer effective sequences than the
rules' ``min_neff`` is *thin* (:attr:`Family.thin`): its classes rest on little evidence, and the
commands that judge against it say so.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from globcons.align.dp import align
from globcons.align.frame_columns import reference_alignment
from globcons.align.placement import place
from globcons.align.scoring_profile import Profile, profile_from_counts, query_codes
from globcons.core.alignment import Alignment
from globcons.core.classes import ClassRules, column_statistics
from globcons.core.counts import column_counts
from globcons.core.labels import is_helix, segment_of
from globcons.core.matrices import DEFAULT_MATRIX
from globcons.core.neighbours import neighbour_counts
from globcons.core.properties import core_hydrophobicity
from globcons.core.scores import residue_strings
from globcons.core.weights import compute_weights

__all__ = ["Family", "frame_family", "family_from_alignment"]


@dataclass(frozen=True, eq=False)
class Family:
    """What departures are judged against.

    Attributes
    ----------
    name
        ``"globin frame"`` or the alignment's source.
    profile
        The profile queries are aligned to (None for the frame: the frame placement is used).
    classes
        (M,) column classes.
    consensus
        (M,) residue codes of the top residue per column.
    groups
        (M, 22) bool: the residues of each column's substitution group.
    family_residues
        (M,) strings of the top residues (``"H:0.97,Q:0.03"``, at most three).
    frequencies
        (M, 22) weighted residue frequencies.
    gaps
        (M,) weighted gap fractions.
    entropy_norm
        (M,) Shannon entropy over the 20 residues / log2(20) (NaN where a column has no residue).
    labels
        (M,) frame label of each column ('' where none).
    matrix
        The matrix that judges ``leaves-group``.
    n_eff
        Effective number of sequences of the whole family (cluster weights).
    column_n_eff
        (M,) effective number of sequences holding a residue in each column.
    low_data
        (M,) bool: ``column_n_eff`` below ``min_neff``.
    min_neff
        The rules' ``min_neff``.
    """

    name: str
    profile: Profile | None
    classes: np.ndarray
    consensus: np.ndarray
    groups: np.ndarray
    family_residues: np.ndarray
    frequencies: np.ndarray
    gaps: np.ndarray
    entropy_norm: np.ndarray
    labels: tuple[str, ...]
    matrix: str = DEFAULT_MATRIX
    residue_groups: str | None = None
    n_eff: float = float("nan")
    column_n_eff: np.ndarray | None = None
    low_data: np.ndarray | None = None
    min_neff: float = ClassRules().min_neff

    @property
    def n_columns(self) -> int:
        return self.classes.size

    @functools.cached_property
    def core_hydrophobicity(self) -> np.ndarray:
        """(M,) weighted mean Fauchère-Pliška hydrophobicity of each column's residues (NaN without any)."""
        return core_hydrophobicity(self.frequencies)

    @property
    def thin(self) -> bool:
        """Fewer effective sequences than ``min_neff``: every class rests on little evidence."""
        return bool(self.n_eff < self.min_neff)

    def columns_of(self, sequence: str) -> np.ndarray:
        """The family column of each residue of a sequence: the one mapping of targets and structure chains.

        A user's family aligns the sequence to its profile (glocal, affine gaps:
        :func:`globcons.align.dp.align`); the built-in frame places it on the frame
        (:func:`globcons.align.placement.place`, no shuffles: only the columns are needed).

        Parameters
        ----------
        sequence
            One-letter residues (any case).

        Returns
        -------
        numpy.ndarray
            ``int64``, shape (len(sequence),): 0-based column of each residue, -1 for a residue outside
            the aligned region or inserted between two columns.
        """
        if not sequence:
            return np.zeros(0, dtype=np.int64)
        if self.profile is None:
            return np.asarray(place(sequence, shuffles=0).column_of_residue, dtype=np.int64)
        placement = align(self.profile.scores, self.profile.gaps, [query_codes(sequence.upper())])[0]
        return np.asarray(placement.column_of_residue, dtype=np.int64)

    def describe(self) -> str:
        """One line: what the family is and how much evidence it holds."""
        line = f"family {self.name}: {self.n_eff:.1f} effective sequences, {self.n_columns} columns"
        if self.thin:
            line += (f"; fewer than {self.min_neff:g} effective sequences, so its classes rest on little "
                     "evidence (give --family with a larger alignment)")
        return line


def _top_three(frequencies: np.ndarray) -> np.ndarray:
    return np.array([",".join(item.split(",")[:3]) for item in residue_strings(frequencies)], dtype=object)


def _family(name: str, codes: np.ndarray, labels: tuple[str, ...], rules: ClassRules, weights: str,
            profile_of=None) -> Family:
    neighbours = neighbour_counts(codes)
    counts = (column_counts(codes, neighbours.weights) if weights == "cluster"
              else column_counts(codes, compute_weights(codes, weights).values))
    neff_counts = column_counts(codes, neighbours.weights)
    stats = column_statistics(counts, neff_counts, rules)
    profile = profile_of(counts) if profile_of is not None else None
    return Family(name, profile, stats.classes, stats.frequencies.argmax(axis=1), stats.groups,
                  _top_three(stats.frequencies), stats.frequencies, stats.gap_fraction, stats.entropy_norm,
                  tuple(labels), rules.matrix, rules.residue_groups, neighbours.n_eff, stats.n_eff, stats.low_data,
                  rules.min_neff)


def frame_family(rules: ClassRules = ClassRules()) -> Family:
    """The built-in family: the reference chains on the frame and the classes of their columns (a thin one)."""
    reference = reference_alignment()
    return _family("built-in reference chains", reference.codes, reference.labels, rules, "henikoff")


def family_from_alignment(alignment: Alignment, rules: ClassRules = ClassRules(), weights: str = "henikoff",
                          labels: tuple[str, ...] | None = None) -> Family:
    """A family from a user's alignment: its profile (Henikoff-weighted) and its column classes.

    ``labels`` (frame labels per column, e.g. from :func:`globcons.align.anchor.map_columns`) set the helix
    gap costs of the profile; without them every column takes the loop costs.
    """
    labels = labels or ("",) * alignment.n_columns
    segments = tuple(segment_of(label) if label else "" for label in labels)
    in_helix = np.array([is_helix(s) for s in segments], dtype=bool)

    def profile_of(counts: np.ndarray) -> Profile:
        return profile_from_counts(alignment.source, counts, labels, segments, in_helix, rules.matrix)

    return _family(alignment.source, alignment.codes, labels, rules, weights, profile_of)
