"""Placing protein sequences on the globin frame: per-residue labels, nearest reference, significance.

Every query is aligned to the frame profile (all reference chains at once, see :mod:`globcons.align.scoring_profile`)
by the glocal affine-gap alignment of :mod:`globcons.align.dp`, with gap costs that are higher inside helices
than in corners and termini. Then, per query:

- **nearest reference**: the reference chain with the highest identity over the query residues placed
  on columns where that chain has a residue;
- **end extension**: up to three unplaced residues at an end of the aligned region go on the adjacent
  free columns (see :func:`_extend_ends`);
- **frame labels**: a placed residue takes the label the nearest reference gives its own residue in that
  column (so an alpha-like query gets alpha's CE names); where the nearest reference has no residue there,
  the frame's canonical label; residues that are inserted or outside the aligned region get none;
- **helix coverage**: for each helix of the nearest reference, the fraction of its residues' columns
  that hold a placed query residue;
- **significance**: the score is compared with the scores of shuffled copies of the query (same
  composition). Local alignment scores of unrelated sequences follow an extreme-value (Gumbel)
  distribution (Karlin & Altschul 1990 PNAS 87:2264); its scale ``beta`` is calibrated once from
  shuffled reference chains, its location per query from the mean of the query's own shuffles
  (``mu = mean - 0.5772 beta``). The E-value-like figure is ``exp(-(score - mu) / beta)``: the
  expected number of shuffled copies scoring at least as well. A query is called a globin when it is
  below :data:`GLOBIN_EVALUE`. Shuffles use a random generator seeded from the sequence itself, so
  results do not depend on batch order or worker count.
"""

from __future__ import annotations

import functools
import zlib
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import TYPE_CHECKING, Iterable, Mapping, Sequence

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE, GAP, N_RESIDUES, UNKNOWN, decode, encode
from globcons.align.dp import align, align_scores
from globcons.frame.reference import HELICES
from globcons.align.scoring_profile import Profile, frame_profile
from globcons.align.reference import ReferenceAlignment, reference_alignment

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["PlacedSequence", "FrameAlignment", "place", "place_many", "align_to_frame", "GLOBIN_EVALUE", "DEFAULT_SHUFFLES", "EULER_GAMMA"]

#: E-value below which a sequence is called a globin.
GLOBIN_EVALUE = 1e-3
#: Shuffled copies per query for the significance.
DEFAULT_SHUFFLES = 12
EULER_GAMMA = 0.5772156649015329
_CALIBRATION_SHUFFLES = 60


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


def _query_codes(sequence: str) -> np.ndarray:
    codes = encode(sequence).copy()
    codes[codes >= GAP] = UNKNOWN  # internal stops and anything odd score as unknown residues
    return codes


def _seed(codes: np.ndarray) -> int:
    return zlib.crc32(codes.tobytes()) ^ 0x5EED


def _shuffled(codes_list: Sequence[np.ndarray], copies: int) -> list[np.ndarray]:
    shuffled = []
    for codes in codes_list:
        rng = np.random.default_rng(_seed(codes))
        # One permutation per copy, drawn as argsort of random keys: a (copies x n) array at once.
        order = np.argsort(rng.random((copies, codes.size)), axis=1)
        shuffled.extend(codes[order])
    return shuffled


@functools.lru_cache(maxsize=None)
def _gumbel_scale(profile: Profile) -> float:
    """Gumbel scale beta from shuffled reference chains (pooled, each centred on its own mean)."""
    reference = reference_alignment()
    chains = [_query_codes(chain.mature_sequence) for chain in reference.chains]
    scores = align_scores(profile.scores, profile.gaps, _shuffled(chains, _CALIBRATION_SHUFFLES))
    scores = scores.reshape(len(chains), _CALIBRATION_SHUFFLES)
    centred = scores - scores.mean(axis=1, keepdims=True)
    sd = float(np.sqrt((centred ** 2).sum() / (centred.size - len(chains))))
    return sd * np.sqrt(6.0) / np.pi


def _evalues(profile: Profile, codes_list: Sequence[np.ndarray], scores: np.ndarray, shuffles: int) -> np.ndarray:
    if shuffles <= 0:
        return np.full(len(codes_list), np.nan)
    null = align_scores(profile.scores, profile.gaps, _shuffled(codes_list, shuffles)).reshape(len(codes_list),
                                                                                              shuffles)
    beta = _gumbel_scale(profile)
    mu = null.mean(axis=1) - EULER_GAMMA * beta
    return np.exp(-(scores - mu) / beta)


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
    codes_list = [_query_codes(sequence) for _, sequence in records]
    if not codes_list:
        return []
    placements = align(profile.scores, profile.gaps, codes_list)
    scores = np.array([p.score for p in placements])
    evalues = _evalues(profile, codes_list, scores, shuffles)
    names = [chain.name for chain in reference.chains]
    canonical = reference.labels
    result = []
    for (identifier, _), codes, placement, evalue in zip(records, codes_list, placements, evalues):
        columns = _extend_ends(placement.column_of_residue, profile.n_columns)
        identities = _identities(reference, codes, columns)
        nearest = int(np.argmax(identities))
        own = reference.own_labels[nearest]
        labels = tuple(own[c] or canonical[c] if c >= 0 else "" for c in columns.tolist())
        result.append(PlacedSequence(
            id=identifier, sequence=decode(codes), column_of_residue=columns, labels=labels,
            score=float(placement.score), evalue=float(evalue), nearest_reference=names[nearest],
            identity=float(identities[nearest]),
            identities=MappingProxyType(dict(zip(names, map(float, identities)))),
            coverage=MappingProxyType(_coverage(reference, nearest, columns)),
        ))
    return result


def place(sequence: str, id: str = "query", profile: Profile | None = None,
          shuffles: int = DEFAULT_SHUFFLES) -> PlacedSequence:
    """Place one protein sequence on the frame.

    Examples
    --------
    >>> from globcons.frame.reference import reference_chain
    >>> beta = reference_chain("human_hemoglobin_beta").full_sequence   # with its initiator Met
    >>> placed = place(beta, id="beta")
    >>> placed.residue_at("F8"), placed.nearest_reference, placed.is_globin
    ((93, 'H'), 'human_hemoglobin_beta', True)
    """
    return place_many([(id, sequence)], profile=profile, shuffles=shuffles)[0]


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

    def summary(self) -> "pd.DataFrame":
        """One row per sequence: nearest reference, identity, score, E-value, helix coverage, residues left out."""
        import pandas as pd

        rows = []
        for placed, unplaced in zip(self.placed, self.unplaced):
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
        """The rows as an :class:`~globcons.core.alignment.Alignment`, labels in its column annotations."""
        from globcons.io.frame_labels import encode_labels

        text = "".join(self.rows).replace(".", "-").encode("ascii")
        codes = BYTE_TO_CODE[np.frombuffer(text, dtype=np.uint8)].reshape(len(self.rows), len(self.labels)).copy()
        codes[codes >= GAP] = GAP
        return Alignment(ids=self.ids, codes=codes, column_annotations=encode_labels(self.labels),
                         source=source, format="frame")


def align_to_frame(records: Iterable[tuple[str, str]], keep_inserts: bool = False,
                   shuffles: int = DEFAULT_SHUFFLES, profile: Profile | None = None) -> FrameAlignment:
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

    Examples
    --------
    >>> from globcons.frame.reference import reference_chains
    >>> chains = [(c.name, c.mature_sequence) for c in reference_chains()]
    >>> frame = align_to_frame(chains)
    >>> len(frame.labels), frame.labels[frame.labels.index("F8")]
    (154, 'F8')
    """
    placed = place_many(records, profile=profile, shuffles=shuffles)
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
    for index, label in zip(frame_column.tolist(), canonical):
        labels[index] = label
    rows = []
    for p, slots in zip(placed, slots_of):
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
