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

import functools
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from globcons.align.dp import align
from globcons.align.frame_columns import ReferenceAlignment, reference_alignment
from globcons.align.scoring_profile import Profile, frame_profile, query_codes
from globcons.align.significance import DEFAULT_SHUFFLES, GLOBIN_EVALUE, evalues
from globcons.core.alphabet import N_RESIDUES, decode

__all__ = ["END_EXTENSION", "PlacedSequence", "place", "place_many", "frame_labels"]


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


@dataclass(frozen=True, eq=False)
class _FrameTables:
    """Per-chain tables of the reference alignment that placement reads for every residue of a batch."""

    labels: np.ndarray  # object (chains, columns): the chain's own label, else the canonical one
    helices: tuple[tuple[str, ...], ...]  # per chain: its helices, in HELICES order
    helix_columns: np.ndarray  # int64 (all chains' helices, columns): 1 where that helix holds the column
    helix_start: np.ndarray  # int64 (chains + 1,): each chain's rows in helix_columns


@functools.cache
def _frame_tables(reference: ReferenceAlignment) -> _FrameTables:
    own = reference.own_labels
    labels = np.where(own != "", own, np.array(reference.labels, dtype=object)[None, :])
    helices = tuple(tuple(masks) for masks in reference.helix_masks)
    rows = [mask for masks in reference.helix_masks for mask in masks.values()]
    helix_columns = np.array(rows, dtype=np.int64).reshape(len(rows), len(reference.columns))
    helix_start = np.concatenate(([0], np.cumsum([len(h) for h in helices]))).astype(np.int64)
    return _FrameTables(labels, helices, helix_columns, helix_start)


def frame_labels(columns: np.ndarray, chains: np.ndarray, reference: ReferenceAlignment | None = None) -> np.ndarray:
    """Frame label of each placed residue: the label its nearest reference chain gives its own residue in
    that column, else the column's canonical label; '' for residues on no column.

    Parameters
    ----------
    columns
        ``int`` (n,): the frame column of each residue (-1: none), e.g. of many queries end to end.
    chains
        ``int`` (n,): the nearest reference chain (its index in the reference alignment) of each residue.

    Returns
    -------
    numpy.ndarray
        object (n,) of str.
    """
    reference = reference or reference_alignment()
    table = _frame_tables(reference).labels
    placed = columns >= 0
    return np.where(placed, table[chains, np.where(placed, columns, 0)], "")


def _identities(reference: ReferenceAlignment, codes: np.ndarray, columns: np.ndarray, query: np.ndarray,
                n_queries: int) -> np.ndarray:
    """(queries, chains) percent identity to every reference chain over each query's placed residues where that
    chain has one (0 where it has none); ``codes``, ``columns`` and ``query`` (its index) run over all residues."""
    placed = columns >= 0
    ref = reference.codes[:, columns[placed]]  # (chains, placed residues)
    present = ref < N_RESIDUES
    same = present & (ref == codes[placed][None, :])
    owner = query[placed]
    identities = np.empty((n_queries, ref.shape[0]))
    for chain in range(ref.shape[0]):  # a handful of chains; the residues are counted in bulk
        n_present = np.bincount(owner, weights=present[chain], minlength=n_queries)
        n_same = np.bincount(owner, weights=same[chain], minlength=n_queries)
        with np.errstate(invalid="ignore", divide="ignore"):
            identities[:, chain] = np.where(n_present > 0, 100.0 * n_same / n_present, 0.0)
    return identities


def _coverage(tables: _FrameTables, columns: np.ndarray, query: np.ndarray,
              chains: np.ndarray) -> list[dict[str, float]]:
    """Per query: the fraction of each helix of its nearest chain whose columns hold one of its residues."""
    n_queries, n_columns = chains.shape[0], tables.helix_columns.shape[1]
    covered = np.zeros((n_queries, n_columns), dtype=np.int64)
    placed = columns >= 0
    covered[query[placed], columns[placed]] = 1
    counts = covered @ tables.helix_columns.T  # (queries, all helices): whole numbers, so exact
    sizes = tables.helix_columns.sum(axis=1)
    shares = (counts / sizes).tolist()
    result = []
    for q, chain in enumerate(chains.tolist()):
        first = int(tables.helix_start[chain])
        result.append(dict(zip(tables.helices[chain], shares[q][first:first + len(tables.helices[chain])],
                               strict=True)))
    return result


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
    # The batch end to end: every per-residue step below is one array operation for all queries.
    lengths = np.array([c.shape[0] for c in codes_list])
    query = np.repeat(np.arange(len(records)), lengths)
    codes = np.concatenate(codes_list)
    columns = np.concatenate([_extend_ends(p.column_of_residue, profile.n_columns) for p in placements])
    identities = _identities(reference, codes, columns, query, len(records))
    nearest = np.argmax(identities, axis=1)
    tables = _frame_tables(reference)
    labels = frame_labels(columns, nearest[query], reference)
    coverage = _coverage(tables, columns, query, nearest)
    bounds = np.cumsum(lengths)[:-1]
    names = [chain.name for chain in reference.chains]
    letters = decode(codes)
    result = []
    for q, ((identifier, _), placed_columns, placed_labels, evalue, start, end) in enumerate(zip(
            records, np.split(columns, bounds), np.split(labels, bounds), significance.tolist(),
            np.concatenate(([0], bounds)).tolist(), np.cumsum(lengths).tolist(), strict=True)):
        chain = int(nearest[q])
        result.append(PlacedSequence(
            id=identifier, sequence=letters[start:end], column_of_residue=placed_columns,
            labels=tuple(placed_labels.tolist()), score=float(placements[q].score), evalue=evalue,
            nearest_reference=names[chain], identity=float(identities[q, chain]),
            identities=MappingProxyType(dict(zip(names, identities[q].tolist(), strict=True))),
            coverage=MappingProxyType(coverage[q]),
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

