"""Placing protein sequences on the globin frame: per-residue labels, nearest reference, significance.

Every query is aligned to the frame profile (all reference chains at once, see
:mod:`globcons.align.scoring_profile`) by the glocal affine-gap alignment of :mod:`globcons.align.dp`, with
gap costs that are higher inside helices than in corners and termini. Then, per query:

- **nearest reference**: the reference chain with the highest identity over the query residues placed
  on columns where that chain has a residue;
- **end extension**: up to :data:`END_EXTENSION` unplaced residues at an end of the aligned region go on
  the adjacent free columns (see :func:`_extend_ends`);
- **frame labels**: a placed residue takes the label the nearest reference gives its own residue in that
  column (so an alpha-like query gets alpha's CE names); where the nearest reference has no residue there,
  the frame's canonical label; residues that are inserted or outside the aligned region get none;
- **helix coverage**: for each helix of the nearest reference, the fraction of its residues' columns
  that hold a placed query residue;
- **significance**: an E-value against shuffled copies of the query (:mod:`globcons.align.significance`);
  a query is called a globin below :data:`~globcons.align.significance.GLOBIN_EVALUE`.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from globcons.align.dp import align
from globcons.align.frame_columns import ReferenceAlignment, reference_alignment
from globcons.align.scoring_profile import Profile, frame_profile, query_codes
from globcons.align.significance import DEFAULT_SHUFFLES, GLOBIN_EVALUE, evalues
from globcons.core.alphabet import N_RESIDUES, decode

__all__ = ["END_EXTENSION", "PlacedSequence", "place", "place_many"]


@dataclass(frozen=True, eq=False)
class PlacedSequence:
    """A sequence placed on the frame.

    Attributes
    ----------
    id
        The sequence's id.
    sequence
        Its residues as given (upper case), one letter each.
    column_of_residue
        ``int64`` (n,): the frame column (0-based) of each residue, -1 for insertions and unaligned ends.
    labels
        Frame label of each residue ('' for none).
    score, evalue
        Alignment score and its E-value-like significance (see the module notes).
    nearest_reference
        Name of the nearest reference chain.
    identity
        Percent identity to it.
    identities
        Percent identity to every reference chain, by name.
    coverage
        Fraction of each helix of the nearest reference covered by placed residues, by helix letter.
    """

    id: str
    sequence: str
    column_of_residue: np.ndarray
    labels: tuple[str, ...]
    score: float
    evalue: float
    nearest_reference: str
    identity: float
    identities: Mapping[str, float] = field(default_factory=dict)
    coverage: Mapping[str, float] = field(default_factory=dict)

    @property
    def is_globin(self) -> bool:
        """Whether the placement is significant (E-value below :data:`GLOBIN_EVALUE`)."""
        return self.evalue < GLOBIN_EVALUE

    def residue_at(self, label: str) -> tuple[int, str] | None:
        """(1-based position, residue) of the query residue carrying ``label``, or None."""
        try:
            index = self.labels.index(label)
        except ValueError:
            return None
        return index + 1, self.sequence[index]

    def label_at(self, position: int) -> str:
        """Frame label of the residue at 1-based ``position`` ('' if none)."""
        return self.labels[position - 1]


#: Unplaced residues at either end of the aligned region that are put on the adjacent free columns.
END_EXTENSION = 3


def _extend_ends(columns: np.ndarray, n_columns: int, limit: int = END_EXTENSION) -> np.ndarray:
    """Put up to ``limit`` unplaced terminal residues on the free columns next to the aligned region.

    A local alignment drops an end residue that scores below zero (human myoglobin's Gly1 against the
    frame's Val NA1); a terminal residue right next to the aligned region almost always occupies the
    adjacent column, so it is placed there, one to one, while columns remain. Longer unplaced ends
    (tags, signal peptides, extensions) stay unplaced.
    """
    placed = np.flatnonzero(columns >= 0)
    if placed.size == 0:
        return columns
    columns = columns.copy()
    first, last = int(placed[0]), int(placed[-1])
    lead = min(first, int(columns[first]), limit)
    if lead and first <= limit:
        columns[first - lead:first] = np.arange(columns[first] - lead, columns[first])
    trail = min(columns.size - 1 - last, n_columns - 1 - int(columns[last]), limit)
    if trail and columns.size - 1 - last <= limit:
        columns[last + 1:last + 1 + trail] = np.arange(columns[last] + 1, columns[last] + 1 + trail)
    return columns


def _identities(reference: ReferenceAlignment, codes: np.ndarray, columns: np.ndarray) -> np.ndarray:
    """Percent identity to every reference chain over the placed residues where that chain has one."""
    placed = columns >= 0
    ref = reference.codes[:, columns[placed]]  # (chains, placed residues)
    present = ref < N_RESIDUES
    same = present & (ref == codes[placed][None, :])
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(present.sum(axis=1) > 0, 100.0 * same.sum(axis=1) / present.sum(axis=1), 0.0)


def _coverage(reference: ReferenceAlignment, chain: int, columns: np.ndarray) -> dict[str, float]:
    covered = np.zeros(len(reference.columns), dtype=bool)
    covered[columns[columns >= 0]] = True
    return {helix: float(covered[mask].mean()) for helix, mask in reference.helix_masks[chain].items()}


def place_many(records: Iterable[tuple[str, str]], profile: Profile | None = None,
               shuffles: int = DEFAULT_SHUFFLES) -> list[PlacedSequence]:
    """Place many sequences on the frame in one batch.

    Parameters
    ----------
    records
        ``(id, sequence)`` pairs; sequences are protein letters (no gaps), any case.
    profile
        The frame profile (default) ; its columns must be the frame's reference alignment columns.
    shuffles
        Shuffled copies per query for the E-value (0 skips it: ``evalue`` is NaN).

    Returns
    -------
    list of PlacedSequence, in input order.
    """
    profile = profile or frame_profile()
    reference = reference_alignment()
    if profile.n_columns != len(reference.columns):
        raise ValueError("the profile's columns are not the frame's")
    records = list(records)
    codes_list = [query_codes(sequence) for _, sequence in records]
    if not codes_list:
        return []
    placements = align(profile.scores, profile.gaps, codes_list)
    scores = np.array([p.score for p in placements])
    significance = evalues(profile, codes_list, scores, shuffles)
    names = [chain.name for chain in reference.chains]
    canonical = reference.labels
    result = []
    for (identifier, _), codes, placement, evalue in zip(records, codes_list, placements, significance, strict=True):
        columns = _extend_ends(placement.column_of_residue, profile.n_columns)
        identities = _identities(reference, codes, columns)
        nearest = int(np.argmax(identities))
        own = reference.own_labels[nearest]
        labels = tuple(own[c] or canonical[c] if c >= 0 else "" for c in columns.tolist())
        result.append(PlacedSequence(
            id=identifier, sequence=decode(codes), column_of_residue=columns, labels=labels,
            score=float(placement.score), evalue=float(evalue), nearest_reference=names[nearest],
            identity=float(identities[nearest]),
            identities=MappingProxyType(dict(zip(names, map(float, identities), strict=True))),
            coverage=MappingProxyType(_coverage(reference, nearest, columns)),
        ))
    return result


def place(sequence: str, id: str = "query", profile: Profile | None = None,
          shuffles: int = DEFAULT_SHUFFLES) -> PlacedSequence:
    """Place one protein sequence on the frame.

    Examples
    --------
    >>> from globcons.frame import reference_chain
    >>> beta = reference_chain("human_hemoglobin_beta").full_sequence   # with its initiator Met
    >>> placed = place(beta, id="beta")
    >>> placed.residue_at("F8"), placed.nearest_reference, placed.is_globin
    ((93, 'H'), 'human_hemoglobin_beta', True)
    """
    return place_many([(id, sequence)], profile=profile, shuffles=shuffles)[0]

