"""Sequence weights, so that a family's many near-copies do not outvote its few distant members.

Three schemes (``--weights``):

``henikoff`` (default)
    Position-based weights of Henikoff & Henikoff 1994 (J Mol Biol 243:574): in a column with ``r``
    distinct residue types, a row whose residue occurs ``s`` times there receives ``1 / (r * s)``. The
    paper worked on ungapped blocks; here gaps and unknowns contribute nothing and a row's weight is the
    mean over its own residue positions, so a fragment is judged by what it has, not penalised for what
    it lacks (a row with no residue weighs as an average row). The weights are scaled to sum to the
    number of distinct rows, so exact duplicates add no evidence (a family of identical sequences has an
    effective number of 1). For the identity-threshold effective number, use ``cluster``.
``cluster``
    ``1 / m``, where ``m`` counts the rows (itself included) whose identity with the row is at least
    ``identity`` (default 0.8): the usual effective-sequence-number definition (e.g. Morcos et al. 2011
    PNAS 108:E1293), identity being the fraction of the L columns at which the two rows carry the same
    code. Exact (all pairs) up to a limit, from a fixed sample above; see :mod:`globcons.core.neighbours`.
``none``
    Every row weighs 1.

Whatever weights give the frequencies, the *effective number of sequences* of the column table is the
cluster count: the sum of the cluster weights (a family of 50 near-copies of one sequence is one
effective sequence); per column, ``n_eff`` is the summed cluster weight of the rows that hold a residue
there.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from globcons.core.alphabet import N_CODES, N_RESIDUES
from globcons.core.counts import CHUNK_ROWS, column_counts, column_offsets, scratch, step_rows
from globcons.core.neighbours import NEFF_IDENTITY, neighbour_counts
from globcons.errors import OptionError

__all__ = ["SCHEMES", "Weights", "compute_weights", "henikoff_weights", "distinct_rows", "henikoff_table",
           "henikoff_raw", "HenikoffSums", "hash_powers", "row_hashes"]

SCHEMES = ("henikoff", "none", "cluster")

@dataclass(frozen=True)
class Weights:
    """Row weights and how they were made.

    Attributes
    ----------
    values
        ``float64``, shape (N,).
    scheme
        One of :data:`SCHEMES`.
    identity
        The identity threshold (``cluster`` only, else None).
    """

    values: np.ndarray
    scheme: str
    identity: float | None = None

    @property
    def n_eff(self) -> float:
        """Effective number of sequences: the sum of the weights."""
        return float(self.values.sum())


def henikoff_table(counts: np.ndarray) -> np.ndarray:
    """Flat per-column table of ``1/(r*s)`` from unweighted counts (shape (L, N_CODES)), 0 off residues.

    ``table[j * N_CODES + c]`` is what a row with code ``c`` in column ``j`` receives.
    """
    residue_counts = counts[:, :N_RESIDUES]
    distinct = (residue_counts > 0).sum(axis=1)  # r per column
    table = np.zeros((counts.shape[0], N_CODES))
    with np.errstate(divide="ignore", invalid="ignore"):
        share = 1.0 / (distinct[:, None] * residue_counts)
    table[:, :N_RESIDUES] = np.where(residue_counts > 0, share, 0.0)
    return table.ravel()


def henikoff_raw(block: np.ndarray, flat_table: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Raw Henikoff weight of each row of a block (mean of its table look-ups over its residues).

    Returns the raw weights (0 for rows without residues) and a bool per row: True if it has none.
    """
    n_rows, n_columns = block.shape
    offsets = column_offsets(n_columns)
    totals = np.empty(n_rows)
    step = step_rows(n_columns)
    for start in range(0, n_rows, step):
        part = block[start:start + step]
        index = scratch("henikoff-index", part.shape, np.intp)
        np.add(part, offsets, out=index)
        looked_up = scratch("henikoff-value", part.shape, np.float64)
        np.take(flat_table, index, out=looked_up)
        totals[start:start + part.shape[0]] = looked_up.sum(axis=1)
    residues = np.count_nonzero(block < N_RESIDUES, axis=1)
    empty = residues == 0
    with np.errstate(invalid="ignore", divide="ignore"):
        raw = totals / residues
    raw[empty] = 0.0
    return raw, empty


class HenikoffSums:
    """Running sums that turn raw weights into the final scale, identical whatever the blocks' source.

    Sums are taken block by block in row order, so a file read in chunks (re-cut into the same blocks of
    :data:`~globcons.core.counts.CHUNK_ROWS` rows) gives bit-identical results to a matrix in memory.
    """

    def __init__(self) -> None:
        self.raw_sum = 0.0
        self.n_with = 0
        self.n_empty = 0

    def add(self, raw: np.ndarray, empty: np.ndarray) -> None:
        self.raw_sum += float(raw.sum())
        self.n_empty += int(empty.sum())
        self.n_with += raw.size - int(empty.sum())

    @property
    def mean_raw(self) -> float:
        """Mean raw weight of the rows with residues: the raw weight of a row without any (1 if none has)."""
        return self.raw_sum / self.n_with if self.n_with else 1.0

    def scale(self, distinct: int) -> float:
        """Factor taking raw weights to weights that sum to ``distinct``."""
        return distinct / (self.raw_sum + self.n_empty * self.mean_raw)


def henikoff_weights(codes: np.ndarray, chunk_rows: int = CHUNK_ROWS) -> np.ndarray:
    """Position-based weights (Henikoff & Henikoff 1994), scaled as described in the module notes.

    Three vectorised passes: per-column counts, a per-column table of ``1/(r*s)``, per-row sums of
    table look-ups (in blocks of rows, so no (N x L) float array is built).

    Parameters
    ----------
    codes
        ``uint8``, shape (N, L).
    chunk_rows
        Rows per block (memory bound only).

    Returns
    -------
    numpy.ndarray
        ``float64``, shape (N,).
    """
    n_rows = codes.shape[0]
    flat_table = henikoff_table(column_counts(codes, chunk_rows=chunk_rows))
    raw = np.empty(n_rows)
    empty = np.zeros(n_rows, dtype=bool)
    sums = HenikoffSums()
    for start in range(0, n_rows, chunk_rows):
        block_raw, block_empty = henikoff_raw(codes[start:start + chunk_rows], flat_table)
        sums.add(block_raw, block_empty)
        raw[start:start + block_raw.size] = block_raw
        empty[start:start + block_raw.size] = block_empty
    # A row without residues carries no evidence either way: it weighs as an average row, so its gaps
    # still count in the gap fractions.
    raw[empty] = sums.mean_raw
    return raw * sums.scale(distinct_rows(codes, chunk_rows))


def hash_powers(n_columns: int) -> np.ndarray:
    """Odd 64-bit multipliers, one per 8-column word of a row (see :func:`row_hashes`)."""
    words = (n_columns + 7) // 8
    powers = np.ones(words, dtype=np.uint64)
    multiplier = np.uint64(0x9E3779B97F4A7C15)
    with np.errstate(over="ignore"):
        for index in range(1, words):
            powers[index] = powers[index - 1] * multiplier
    return powers | np.uint64(1)


def row_hashes(block: np.ndarray, powers: np.ndarray) -> np.ndarray:
    """64-bit hash of each row of a block, eight codes (one 64-bit word) at a time.

    Each word is multiplied by its own odd constant, folded (``x ^ x >> 29``) and the words summed
    (wrapping arithmetic); rows are padded with zeros to whole words in a reused buffer.
    """
    n_rows, n_columns = block.shape
    words = powers.size
    hashes = np.empty(n_rows, dtype=np.uint64)
    step = step_rows(words * 8)
    with np.errstate(over="ignore"):
        for start in range(0, n_rows, step):
            part = block[start:start + step]
            padded = scratch("hash-bytes", (part.shape[0], words * 8), np.uint8)
            padded[:, :n_columns] = part
            padded[:, n_columns:] = 0
            mixed = scratch("hash-words", (part.shape[0], words), np.uint64)
            np.multiply(padded.view(np.uint64), powers, out=mixed)
            mixed ^= mixed >> np.uint64(29)
            hashes[start:start + part.shape[0]] = mixed.sum(axis=1, dtype=np.uint64)
    return hashes


def distinct_rows(codes: np.ndarray, chunk_rows: int = CHUNK_ROWS) -> int:
    """Number of distinct rows, from a 64-bit polynomial hash of each row (vectorised, in blocks).

    Two different rows collide with probability about 2^-64 per pair.
    """
    n_rows, n_columns = codes.shape
    if n_rows == 0:
        return 0
    powers = hash_powers(n_columns)
    hashes = np.empty(n_rows, dtype=np.uint64)
    for start in range(0, n_rows, chunk_rows):
        block = codes[start:start + chunk_rows]
        hashes[start:start + block.shape[0]] = row_hashes(block, powers)
    return int(np.unique(hashes).size)


def compute_weights(codes: np.ndarray, scheme: str = "henikoff", identity: float = NEFF_IDENTITY) -> Weights:
    """Weights of the rows of ``codes`` under a named scheme (see the module notes).

    Parameters
    ----------
    codes
        ``uint8``, shape (N, L).
    scheme
        ``"henikoff"``, ``"none"`` or ``"cluster"``.
    identity
        Identity threshold for ``"cluster"``.
    """
    if scheme == "henikoff":
        return Weights(henikoff_weights(codes), scheme)
    if scheme == "none":
        return Weights(np.ones(codes.shape[0]), scheme)
    if scheme == "cluster":
        return Weights(neighbour_counts(codes, identity).weights, scheme, identity)
    raise OptionError(f"unknown weighting scheme {scheme!r}; choose one of {', '.join(SCHEMES)}")
