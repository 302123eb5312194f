"""A family to judge sequences against: its columns' classes, residues and (for a user's alignment) profile.

The built-in family is the frame's reference chains; a user's alignment gives its own (``--family``).
Column statistics are those of the column table (:func:`globcons.core.classes.column_statistics`, Henikoff
weights and the same class rules and defaults as ``globcons columns``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from globcons.align.frame_columns import reference_alignment
from globcons.align.scoring_profile import Profile, profile_from_counts
from globcons.core.alignment import Alignment
from globcons.core.classes import ClassRules, column_statistics
from globcons.core.counts import column_counts
from globcons.core.labels import is_helix, segment_of
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
        (M, 22) bool: the residues of each column's substitution group (those carrying ``group_min``).
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
    matrix: str = "BLOSUM62"
    residue_groups: str | None = None

    @property
    def n_columns(self) -> int:
        return self.classes.size


def _top_three(frequencies: np.ndarray) -> np.ndarray:
    return np.array([",".join(item.split(",")[:3]) for item in residue_strings(frequencies)], dtype=object)


def frame_family(rules: ClassRules = ClassRules()) -> Family:
    """The built-in family: the reference chains on the frame and the classes of their columns."""
    reference = reference_alignment()
    stats = column_statistics(column_counts(reference.codes, compute_weights(reference.codes).values), rules)
    return Family("globin frame", None, stats.classes, stats.frequencies.argmax(axis=1), stats.groups,
                  _top_three(stats.frequencies), stats.frequencies, stats.gap_fraction, stats.entropy_norm,
                  reference.labels, rules.matrix, rules.residue_groups)


def family_from_alignment(alignment: Alignment, rules: ClassRules = ClassRules(), weights: str = "henikoff",
                          labels: tuple[str, ...] | None = None) -> Family:
    """A family from a user's alignment: its profile (Henikoff-weighted) and its column classes.

    ``labels`` (frame labels per column, e.g. from :func:`globcons.align.anchor.map_columns`) set the helix
    gap costs of the profile; without them every column takes the loop costs.
    """
    counts = column_counts(alignment.codes, compute_weights(alignment.codes, weights).values)
    stats = column_statistics(counts, rules)
    labels = labels or ("",) * alignment.n_columns
    segments = tuple(segment_of(label) if label else "" for label in labels)
    in_helix = np.array([is_helix(s) for s in segments], dtype=bool)
    profile = profile_from_counts(alignment.source, counts, labels, segments, in_helix, rules.matrix)
    return Family(alignment.source, profile, stats.classes, stats.frequencies.argmax(axis=1), stats.groups,
                  _top_three(stats.frequencies), stats.frequencies, stats.gap_fraction, stats.entropy_norm,
                  tuple(labels), rules.matrix, rules.residue_groups)
