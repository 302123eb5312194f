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
    code. Exact (all pairs, O(N^2 L)) up to :data:`NEFF_EXACT_MAX_ROWS` rows, estimated from a fixed
    sample above; see :func:`neighbour_counts`.
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
from globcons.core.counts import CHUNK_ROWS, block_counts, column_counts
from globcons.errors import OptionError

__all__ = ["SCHEMES", "Weights", "compute_weights", "henikoff_weights", "cluster_weights", "distinct_rows",
           "NEFF_IDENTITY", "NEFF_EXACT_MAX_ROWS", "NEFF_SAMPLE_ROWS", "NeighbourCounts", "neighbour_counts",
           "exact_neighbours", "shared_code_matrix", "sample_rows", "ClusterCounts", "row_keys",
           "sampled_neighbour_hits", "sampled_neighbours",
           "henikoff_table", "henikoff_raw", "HenikoffSums", "hash_powers", "row_hashes"]

SCHEMES = ("henikoff", "none", "cluster")

#: Identity threshold of the effective number of sequences and of cluster weights (the usual 80%).
NEFF_IDENTITY = 0.8
#: Up to this many rows, neighbour counts compare every pair (O(N^2 L): about two minutes at 50,000 x 300
#: on two cores); above, every row is compared with a fixed sample of :data:`NEFF_SAMPLE_ROWS` rows.
NEFF_EXACT_MAX_ROWS = 50_000
#: Rows of the sample of the estimate.
NEFF_SAMPLE_ROWS = 2_000
#: Rows per block of the pairwise comparison (memory: this many times N floats).
NEIGHBOUR_BLOCK_ROWS = 512


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
    offsets = (np.arange(block.shape[1], dtype=np.int64) * N_CODES)[None, :]
    residues = (block < N_RESIDUES).sum(axis=1)
    empty = residues == 0
    with np.errstate(invalid="ignore", divide="ignore"):
        raw = flat_table[block + offsets].sum(axis=1) / residues
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
    """Multipliers of the 64-bit polynomial row hash (see :func:`row_hashes`)."""
    powers = np.ones(n_columns, dtype=np.uint64)
    multiplier = np.uint64(0x9E3779B97F4A7C15)
    with np.errstate(over="ignore"):
        for index in range(1, n_columns):
            powers[index] = powers[index - 1] * multiplier
    return powers


def row_hashes(block: np.ndarray, powers: np.ndarray) -> np.ndarray:
    """64-bit polynomial hash of each row of a block (wrapping arithmetic)."""
    with np.errstate(over="ignore"):
        return ((block.astype(np.uint64) + np.uint64(1)) * powers).sum(axis=1, dtype=np.uint64)


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


@dataclass(frozen=True)
class NeighbourCounts:
    """How many rows lie within the identity threshold of each row (itself included).

    Attributes
    ----------
    values
        ``float64``, shape (N,): exact counts, or estimates (not whole numbers) for ``method="sampled"``.
    method
        ``"exact"`` (all pairs compared) or ``"sampled"`` (every row compared with a fixed sample).
    identity
        The threshold.
    sample_rows
        Size of the sample (``"sampled"`` only, else 0).
    """

    values: np.ndarray
    method: str
    identity: float
    sample_rows: int = 0

    @property
    def weights(self) -> np.ndarray:
        """``1 / m`` per row: the cluster weights."""
        return 1.0 / self.values

    @property
    def n_eff(self) -> float:
        """Effective number of sequences: the sum of ``1 / m``."""
        return float(self.weights.sum())

    def describe(self) -> str:
        """In words, for summaries and the methods text."""
        if self.method == "exact":
            return f"sequences clustered at {self.identity:.0%} identity (all pairs compared)"
        return (f"sequences clustered at {self.identity:.0%} identity, estimated by comparing every row with "
                f"{self.sample_rows:,} sampled rows")


def _check_identity(identity: float) -> None:
    if not 0.0 < identity <= 1.0:
        raise OptionError(f"--identity must be in (0, 1], got {identity}")


def shared_code_matrix(codes: np.ndarray) -> np.ndarray:
    """One-hot matrix of the (column, code) pairs that at least two rows share, ``float32`` (N, K).

    Row identity is ``one_hot @ one_hot.T`` plus the matches no pair can share; a code only one row
    holds in a column matches nothing but that row itself, and a code no row holds is all zeros, so
    both are left out: real families hold a few residues per column, and the product shrinks with them.
    """
    n_rows, n_columns = codes.shape
    counts = column_counts(codes).astype(np.int64)  # (L, N_CODES)
    columns, chosen = np.nonzero(counts >= 2)
    matrix = np.empty((n_rows, columns.size), dtype=np.float32)
    for start in range(0, n_rows, CHUNK_ROWS):
        block = codes[start:start + CHUNK_ROWS]
        matrix[start:start + block.shape[0]] = block[:, columns] == chosen[None, :].astype(block.dtype)
    return matrix


def _needed_matches(identity: float, n_columns: int) -> float:
    # Matches are whole numbers accumulated exactly in float32 (below 2**24); compare with a half margin.
    return int(np.ceil(identity * n_columns - 1e-9)) - 0.5


def exact_neighbours(codes: np.ndarray, identity: float = NEFF_IDENTITY,
                     block_rows: int = NEIGHBOUR_BLOCK_ROWS) -> np.ndarray:
    """Rows within ``identity`` of every row, counted over all pairs (itself included).

    Identity is the fraction of the L columns at which two rows carry the same code (a gap facing a gap
    counts as identical), the usual definition of the effective number of sequences (Morcos et al. 2011
    PNAS 108:E1293). Pairs are compared as one matrix product of the one-hot matrix of shared
    (column, code) pairs (:func:`shared_code_matrix`, BLAS), a block of rows against the rows after it,
    so each pair is computed once. Memory: that matrix (N x K floats, K at most 24 L and usually a few
    L) plus ``block_rows x N`` floats.

    Returns
    -------
    numpy.ndarray
        ``int64``, shape (N,).
    """
    _check_identity(identity)
    n_rows, n_columns = codes.shape
    needed = _needed_matches(identity, n_columns)
    matrix = shared_code_matrix(codes)
    neighbours = np.ones(n_rows, dtype=np.int64)  # every row is its own neighbour
    for start in range(0, n_rows, block_rows):
        stop = min(start + block_rows, n_rows)
        close = matrix[start:stop] @ matrix[start:].T >= needed
        inside = close[:, :stop - start]
        inside[np.tril_indices(stop - start)] = False  # each pair once; the row itself is counted already
        neighbours[start:stop] += close.sum(axis=1)
        neighbours[start:] += close.sum(axis=0)
    return neighbours


def sample_rows(n_rows: int, size: int) -> np.ndarray:
    """A fixed uniform sample of row indices: the ``size`` rows of smallest pseudo-random key.

    The key of a row depends only on its index (a 64-bit mix of it), so a file read in chunks picks
    the same rows as the file in memory. Returns sorted indices.
    """
    keys = row_keys(np.arange(n_rows, dtype=np.uint64))
    if size >= n_rows:
        return np.arange(n_rows)
    return np.sort(np.argpartition(keys, size - 1)[:size])


def row_keys(index: np.ndarray) -> np.ndarray:
    """Pseudo-random 64-bit key of each row index (the splitmix64 finaliser; Steele et al. 2014 OOPSLA)."""
    with np.errstate(over="ignore"):
        z = index.astype(np.uint64) + np.uint64(0x9E3779B97F4A7C15)
        z = (z ^ (z >> np.uint64(30))) * np.uint64(0xBF58476D1CE4E5B9)
        z = (z ^ (z >> np.uint64(27))) * np.uint64(0x94D049BB133111EB)
        return z ^ (z >> np.uint64(31))


def sampled_neighbour_hits(block: np.ndarray, sample: np.ndarray, identity: float = NEFF_IDENTITY) -> np.ndarray:
    """For each row of ``block``: how many rows of ``sample`` lie within ``identity`` of it (itself included,
    if it is one of them)."""
    needed = _needed_matches(identity, block.shape[1])
    present = np.union1d(np.unique(block), np.unique(sample))
    same = np.zeros((block.shape[0], sample.shape[0]), dtype=np.float32)
    for code in present:
        same += (block == code).astype(np.float32) @ (sample == code).astype(np.float32).T
    return (same >= needed).sum(axis=1)


def sampled_neighbours(hits: np.ndarray, in_sample: np.ndarray, n_rows: int, size: int) -> np.ndarray:
    """Neighbour counts estimated from the hits in a sample of ``size`` of the ``n_rows`` rows.

    A row's other neighbours are scaled up from the share of the other sampled rows they make:
    ``m = 1 + (hits - self) * (N - 1) / (S - self)``, where ``self`` is 1 for a sampled row. Exact
    for a row with no neighbour; for rows in clusters much smaller than N / S the sample sees none of
    their neighbours, so their counts come out too low (their weights too high): see the benchmark.
    """
    own = in_sample.astype(np.float64)
    others = np.maximum(size - own, 1.0)
    return 1.0 + (hits - own) * (n_rows - 1) / others


def neighbour_counts(codes: np.ndarray, identity: float = NEFF_IDENTITY,
                     exact_max_rows: int = NEFF_EXACT_MAX_ROWS, sample_size: int = NEFF_SAMPLE_ROWS,
                     block_rows: int = NEIGHBOUR_BLOCK_ROWS) -> NeighbourCounts:
    """Rows within ``identity`` of every row: exact up to ``exact_max_rows`` rows, else estimated.

    Parameters
    ----------
    codes
        ``uint8``, shape (N, L).
    identity
        Threshold in (0, 1].
    exact_max_rows
        Up to this many rows every pair is compared (:func:`exact_neighbours`, O(N^2 L)); above it,
        every row is compared with a fixed sample of ``sample_size`` rows (:func:`sample_rows`,
        :func:`sampled_neighbours`, O(N S L)).
    """
    _check_identity(identity)
    n_rows = codes.shape[0]
    if n_rows <= exact_max_rows:
        return NeighbourCounts(exact_neighbours(codes, identity, block_rows).astype(np.float64), "exact", identity)
    chosen = sample_rows(n_rows, sample_size)
    sample = np.ascontiguousarray(codes[chosen])
    in_sample = np.zeros(n_rows, dtype=bool)
    in_sample[chosen] = True
    hits = np.concatenate([sampled_neighbour_hits(codes[start:start + block_rows], sample, identity)
                           for start in range(0, n_rows, block_rows)])
    return NeighbourCounts(sampled_neighbours(hits, in_sample, n_rows, chosen.size), "sampled", identity,
                           int(chosen.size))


class ClusterCounts:
    """Cluster weights and cluster-weighted column counts, from blocks of rows in two passes.

    The first pass (:meth:`first_pass`, every block in row order) keeps the rows' codes while there are
    at most ``exact_max_rows`` of them, and always the ``sample_size`` rows of smallest key
    (:func:`sample_rows`); :meth:`finish_first_pass` then counts every row's neighbours, exactly or
    against the sample; the second pass (:meth:`second_pass`) weighs each block and sums its counts.
    An alignment in memory and a file read in chunks give the same blocks, hence the same numbers.
    """

    def __init__(self, identity: float = NEFF_IDENTITY, exact_max_rows: int = NEFF_EXACT_MAX_ROWS,
                 sample_size: int = NEFF_SAMPLE_ROWS) -> None:
        _check_identity(identity)
        if exact_max_rows < 0 or sample_size < 1:
            raise OptionError(f"exact rows must be 0 or more and the sample 1 or more, got {exact_max_rows}, "
                              f"{sample_size}")
        self.identity, self.exact_max_rows, self.sample_size = identity, exact_max_rows, sample_size
        self._kept: list[np.ndarray] | None = []
        self._sample_keys = np.empty(0, dtype=np.uint64)
        self._sample_index = np.empty(0, dtype=np.int64)
        self._sample_codes: np.ndarray | None = None
        self.n_rows = 0
        self.neighbours: NeighbourCounts | None = None
        self.counts: np.ndarray | None = None
        self._sample: np.ndarray | None = None
        self._sampled_values: list[np.ndarray] = []

    def first_pass(self, block: np.ndarray, first_row: int) -> None:
        """Offer one block of rows (row ``first_row`` onwards) in the first pass."""
        if self._sample_codes is None:
            self._sample_codes = np.empty((0, block.shape[1]), dtype=np.uint8)
        if self._kept is not None:
            self._kept.append(block.copy())
            if first_row + block.shape[0] > self.exact_max_rows:
                self._kept = None  # too many rows to compare every pair: the sample will do
        index = np.arange(first_row, first_row + block.shape[0], dtype=np.int64)
        keys = np.concatenate((self._sample_keys, row_keys(index.astype(np.uint64))))
        rows = np.concatenate((self._sample_index, index))
        codes = np.concatenate((self._sample_codes, block))
        keep = np.argsort(keys, kind="stable")[:self.sample_size]
        self._sample_keys, self._sample_index, self._sample_codes = keys[keep], rows[keep], codes[keep]
        self.n_rows = first_row + block.shape[0]

    def finish_first_pass(self) -> None:
        """Count the neighbours: exactly when the first pass kept every row, else against the sample."""
        if self._kept is not None:
            codes = np.concatenate(self._kept) if self._kept else np.zeros((0, 0), dtype=np.uint8)
            self._kept = None
            values = exact_neighbours(codes, self.identity).astype(np.float64)
            self.neighbours = NeighbourCounts(values, "exact", self.identity)
            return
        order = np.argsort(self._sample_index)
        self._sample_index, self._sample = self._sample_index[order], self._sample_codes[order]

    def second_pass(self, block: np.ndarray, first_row: int) -> np.ndarray:
        """The cluster weights of one block of the second pass; its weighted counts are summed too."""
        if self.neighbours is not None and self.neighbours.method == "exact":
            weights = 1.0 / self.neighbours.values[first_row:first_row + block.shape[0]]
        else:
            hits = np.concatenate([sampled_neighbour_hits(block[start:start + NEIGHBOUR_BLOCK_ROWS], self._sample,
                                                          self.identity)
                                   for start in range(0, block.shape[0], NEIGHBOUR_BLOCK_ROWS)])
            index = np.arange(first_row, first_row + block.shape[0])
            in_sample = np.isin(index, self._sample_index)
            values = sampled_neighbours(hits, in_sample, self.n_rows, self._sample_index.size)
            self._sampled_values.append(values)
            weights = 1.0 / values
        block_total = block_counts(block, weights)
        self.counts = block_total if self.counts is None else self.counts + block_total
        return weights

    def finish(self, n_columns: int) -> tuple[np.ndarray, NeighbourCounts]:
        """The cluster-weighted counts (L, N_CODES) and the neighbour counts of every row."""
        if self.neighbours is None:
            values = np.concatenate(self._sampled_values) if self._sampled_values else np.zeros(0)
            self.neighbours = NeighbourCounts(values, "sampled", self.identity, int(self._sample_index.size))
        counts = self.counts if self.counts is not None else np.zeros(n_columns * N_CODES)
        return counts.reshape(n_columns, N_CODES), self.neighbours


def cluster_weights(codes: np.ndarray, identity: float = NEFF_IDENTITY,
                    exact_max_rows: int = NEFF_EXACT_MAX_ROWS) -> np.ndarray:
    """``1 / (rows within the identity threshold)`` for every row (see :func:`neighbour_counts`)."""
    return neighbour_counts(codes, identity, exact_max_rows).weights


def compute_weights(codes: np.ndarray, scheme: str = "henikoff", identity: float = 0.8) -> Weights:
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
