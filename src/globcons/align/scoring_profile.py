"""Profiles to place sequences on: per-column residue scores and helix-aware gap costs.

A profile column scores a residue by the frequency-weighted average of the substitution-matrix scores
between the column's residues and it (Gribskov, McLachlan & Eisenberg 1987 PNAS 84:4355), where the
sequences with a gap in the column count with a score of 0 (so a column few sequences have counts less). Gap costs
depend on where they fall: opening or extending a gap inside a helix costs more than in a corner or a
terminus, because globins tolerate insertions and deletions in their loops far better than inside their
helices (common knowledge of the fold, e.g. Lesk & Chothia 1980 J Mol Biol 136:225).

The built-in profile is the frame's reference alignment (:func:`frame_profile`), its rows weighted by
Henikoff weights so that the two myoglobins do not count twice.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from globcons.align.dp import GapCosts
from globcons.align.frame_columns import reference_alignment
from globcons.core.alphabet import GAP, UNKNOWN, encode
from globcons.core.counts import column_counts
from globcons.core.matrices import DEFAULT_MATRIX, substitution_table
from globcons.core.scores import occupancy as column_occupancy
from globcons.core.scores import residue_frequencies
from globcons.core.weights import henikoff_weights

__all__ = ["GapScheme", "Profile", "frame_profile", "profile_from_counts", "query_codes"]

#: A column that most of the family lacks costs at least this share of the gapped costs to delete: a
#: column no sequence has still costs something, so the aligner does not skip columns for nothing.
MIN_OCCUPANCY_SCALE = 0.1
#: Score of a gap code in a profile column: queries hold no gaps, and the aligner wants finite scores.
GAP_SCORE = -1000.0
#: Occupancy below 1 by more than this counts as a column some sequences lack.
_OCCUPANCY_TOLERANCE = 1e-9


def query_codes(sequence: str) -> np.ndarray:
    """Codes of a query for placement: residues as themselves, anything else (stops, gaps, odd bytes) unknown."""
    codes = encode(sequence).copy()
    codes[codes >= GAP] = UNKNOWN
    return codes


@dataclass(frozen=True)
class GapScheme:
    """Gap costs (positive, in the matrix's units; BLOSUM62 is in half-bits) in three tiers.

    A gap of length L costs ``open + (L - 1) * extend``. Deleting a column, or inserting next to it, takes

    - the *gapped* costs where some of the profile's sequences lack the column (the family itself shows
      that an indel is tolerated there: myoglobin's H22-H26, alpha's missing D helix), scaled for a
      deletion by the column's occupancy (a column most of the family lacks costs little to skip);
    - else the *helix* costs inside a helix (for an insertion: between two columns of the same helix);
    - else the *loop* costs (corners and termini).
    """

    helix_open: float = 14.0
    helix_extend: float = 3.0
    loop_open: float = 8.0
    loop_extend: float = 1.0
    gapped_open: float = 3.0
    gapped_extend: float = 0.5

    def costs(self, in_helix: np.ndarray, segments: tuple[str, ...], occupancy: np.ndarray | None = None) -> GapCosts:
        """Per-column costs.

        Parameters
        ----------
        in_helix
            (M,) bool: the column lies inside a helix.
        segments
            (M,) segment names (an insertion takes the helix costs only inside one segment).
        occupancy
            (M,) weighted fraction of the profile's sequences with a residue in the column (default all 1).
        """
        in_helix = np.asarray(in_helix, dtype=bool)
        n = in_helix.size
        occupancy = np.ones(n) if occupancy is None else np.asarray(occupancy, dtype=np.float64)
        gapped = occupancy < 1.0 - _OCCUPANCY_TOLERANCE
        # Deleting a column that most of the family lacks should cost almost nothing: scale by occupancy.
        scale = np.clip(occupancy, MIN_OCCUPANCY_SCALE, 1.0)
        open_delete = np.where(gapped, self.gapped_open * scale, np.where(in_helix, self.helix_open, self.loop_open))
        extend_delete = np.where(gapped, self.gapped_extend * scale,
                                 np.where(in_helix, self.helix_extend, self.loop_extend))
        # Insertion slot k lies between columns k-1 and k (0 before the first, n after the last).
        same_helix = np.zeros(n + 1, dtype=bool)
        near_gapped = np.zeros(n + 1, dtype=bool)
        if n > 1:
            seg = np.array(segments, dtype=object)
            same_helix[1:n] = in_helix[:-1] & in_helix[1:] & (seg[:-1] == seg[1:])
            near_gapped[1:n] = gapped[:-1] | gapped[1:]
        open_insert = np.where(near_gapped, self.gapped_open, np.where(same_helix, self.helix_open, self.loop_open))
        extend_insert = np.where(near_gapped, self.gapped_extend,
                                 np.where(same_helix, self.helix_extend, self.loop_extend))
        return GapCosts(open_delete, extend_delete, open_insert, extend_insert)


@dataclass(frozen=True, eq=False)
class Profile:
    """What sequences are placed on.

    Attributes
    ----------
    name
        What the profile was made from (``"globin frame"`` or an alignment's source).
    labels
        Frame label of every column ('' where a column has none).
    segments
        Segment of every column ('' where none).
    frequencies
        (M, 22) weighted residue frequencies.
    scores
        (M, 24) score of each residue code at each column.
    gaps
        Per-column gap costs.
    """

    name: str
    labels: tuple[str, ...]
    segments: tuple[str, ...]
    frequencies: np.ndarray
    scores: np.ndarray
    gaps: GapCosts

    @property
    def n_columns(self) -> int:
        return self.scores.shape[0]


def profile_from_counts(name: str, counts: np.ndarray, labels: tuple[str, ...], segments: tuple[str, ...],
                        in_helix: np.ndarray, matrix: str = DEFAULT_MATRIX,
                        gap_scheme: GapScheme = GapScheme()) -> Profile:
    """A profile from weighted per-column counts (as from :func:`globcons.core.counts.column_counts`)."""
    frequencies = residue_frequencies(counts)
    occupancy = column_occupancy(counts)
    table = substitution_table(matrix)
    # Rows with a gap contribute nothing to a column's score: a column few sequences have counts less.
    scores = (frequencies @ np.where(np.isfinite(table), table, 0.0)) * occupancy[:, None]
    scores[:, GAP] = GAP_SCORE
    frequencies.flags.writeable = False
    scores.flags.writeable = False
    return Profile(name, tuple(labels), tuple(segments), frequencies, scores,
                   gap_scheme.costs(in_helix, segments, occupancy))


@functools.cache
def frame_profile(matrix: str = DEFAULT_MATRIX, gap_scheme: GapScheme = GapScheme()) -> Profile:
    """The built-in profile: the frame's reference alignment, Henikoff-weighted."""
    reference = reference_alignment()
    weights = henikoff_weights(reference.codes)
    counts = column_counts(reference.codes, weights)
    columns = reference.columns
    return profile_from_counts("globin frame", counts, tuple(c.label for c in columns),
                               tuple(c.segment for c in columns), np.array([c.in_helix for c in columns]),
                               matrix, gap_scheme)
