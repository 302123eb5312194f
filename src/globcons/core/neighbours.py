"""Neighbours at an identity threshold: the effective number of sequences and cluster weights.

A row's *neighbours* are the rows (itself included) whose identity with it is at least ``identity``
(default 0.8); identity is the fraction of the L columns at which the two rows carry the same code (a gap
facing a gap counts as identical). A row's cluster weight is ``1 / neighbours`` and the family's effective
number of sequences is the sum of those weights, the usual definition (Morcos et al. 2011 PNAS
108:E1293): a family of 50 near-copies of one sequence is one effective sequence.

Three ways to count, by the number of rows N:

``exact`` (N up to :data:`NEFF_EXACT_MAX_ROWS`, or ``--neff-exact-rows``)
    Every pair compared, as one matrix product of one-hot codes (BLAS), O(N^2 L).
``estimated`` (above, for the effective number of the column table)
    A fixed sample of :data:`NEFF_QUERY_ROWS` rows is compared with *every* row, so each sampled row's
    neighbour count is exact and ``N * mean(1 / neighbours)`` over the sample is an unbiased estimate of
    the sum over all rows (simple random sampling; its standard error, with the finite-population
    correction, is reported beside it; Cochran 1977, Sampling Techniques, ch. 2). O(N Q L). Per column,
    the effective count is the column's residue count times the mean weight of the sampled rows that
    hold a residue there (a ratio estimate).
``sampled`` (above, when every row needs its own weight: ``--weights cluster`` and families)
    Every row compared with a fixed sample of :data:`NEFF_SAMPLE_ROWS` rows and its count scaled up. Rows
    in clusters much smaller than N / S see none of their neighbours in the sample and weigh too much;
    ``benchmarks/bench_neff.py`` measures the error.

Samples are the rows of smallest pseudo-random key, a function of the row index alone, so a file read in
chunks and the same file in memory pick the same rows and give the same numbers.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from globcons.core.alphabet import N_RESIDUES
from globcons.core.counts import CHUNK_ROWS, block_counts, column_counts
from globcons.errors import OptionError

__all__ = ["NEFF_IDENTITY", "NEFF_EXACT_MAX_ROWS", "NEFF_SAMPLE_ROWS", "NEFF_QUERY_ROWS", "NeighbourCounts",
           "neighbour_counts", "estimate_neighbours", "exact_neighbours", "query_neighbours",
           "shared_code_matrix", "sample_rows", "row_keys", "sampled_neighbour_hits", "sampled_neighbours",
           "ClusterCounts", "cluster_weights", "check_identity", "estimated_column_counts", "needed_matches"]

#: Identity threshold of the effective number of sequences and of cluster weights (the usual 80%).
NEFF_IDENTITY = 0.8
#: Up to this many rows every pair is compared (O(N^2 L): about a quarter of a second at 2,000 x 300 on
#: two cores, two minutes at 50,000); above, a sample is used (see the module notes).
NEFF_EXACT_MAX_ROWS = 2_000
#: Rows compared with every row for the ``estimated`` effective number (standard error about 7% of the
#: value when a third of the rows sit in clusters, far less when most rows are alone).
NEFF_QUERY_ROWS = 128
#: Rows of the sample every row is compared with, for per-row ``sampled`` weights.
NEFF_SAMPLE_ROWS = 2_000
#: Rows per block of the pairwise comparison (memory: this many times N floats).
NEIGHBOUR_BLOCK_ROWS = 512
#: Columns compared at once by :func:`query_neighbours` (their matches are summed in uint8).
_QUERY_COLUMN_GROUP = 16
#: Cells (rows x queries) of one block of :func:`query_neighbours`: small enough to stay in cache.
_QUERY_BLOCK_CELLS = 2**15
#: Sampled rows holding a residue a column needs before its own ratio is used (else the family's).
_MIN_QUERIES_PER_COLUMN = 10


@dataclass(frozen=True)
class NeighbourCounts:
    """Neighbour counts at an identity threshold, and the effective number of sequences they give.

    Attributes
    ----------
    values
        ``float64``: one count per row (``exact``, ``sampled``; estimates for the latter), or the exact
        counts of the sampled rows only (``estimated``, shape (Q,)).
    method
        ``"exact"``, ``"estimated"`` or ``"sampled"`` (see the module notes).
    identity
        The threshold.
    sample_rows
        Size of the sample (0 for ``exact``).
    n_rows
        Rows of the alignment (N).
    """

    values: np.ndarray
    method: str
    identity: float
    sample_rows: int = 0
    n_rows: int = 0

    @property
    def per_row(self) -> bool:
        """True if there is a count for every row (so :attr:`weights` exists)."""
        return self.method != "estimated"

    @property
    def weights(self) -> np.ndarray:
        """``1 / m`` per row: the cluster weights (not for ``estimated`` counts, which cover a sample)."""
        if not self.per_row:
            raise ValueError("estimated neighbour counts cover a sample of the rows, not every row")
        return 1.0 / self.values

    @property
    def n_eff(self) -> float:
        """Effective number of sequences: the sum of ``1 / m`` (estimated from the sample if need be)."""
        if self.method == "estimated":
            return float(self.n_rows * np.mean(1.0 / self.values)) if self.values.size else 0.0
        return float((1.0 / self.values).sum())

    @property
    def standard_error(self) -> float:
        """Standard error of :attr:`n_eff`: 0 when exact, NaN when ``sampled`` (a biased estimate)."""
        if self.method == "exact":
            return 0.0
        if self.method == "sampled" or self.values.size < 2:
            return float("nan")
        size = self.values.size
        spread = np.std(1.0 / self.values, ddof=1)
        return float(self.n_rows * spread / np.sqrt(size) * np.sqrt(max(0.0, 1.0 - size / self.n_rows)))

    def describe(self) -> str:
        """In words, for summaries and the methods text."""
        clustered = f"sequences clustered at {self.identity:.0%} identity"
        if self.method == "exact":
            return f"{clustered} (all pairs compared)"
        if self.method == "estimated":
            return (f"{clustered}, estimated from {self.sample_rows:,} sampled rows each compared with all "
                    f"{self.n_rows:,} (standard error {self.standard_error:,.1f})")
        return f"{clustered}, estimated by comparing every row with {self.sample_rows:,} sampled rows"


def check_identity(identity: float) -> None:
    """Refuse an identity threshold outside (0, 1]."""
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


def needed_matches(identity: float, n_columns: int) -> int:
    """Matching columns a pair needs to reach ``identity`` (a whole number; 0.8 of 300 is 240)."""
    return int(np.ceil(identity * n_columns - 1e-9))


def exact_neighbours(codes: np.ndarray, identity: float = NEFF_IDENTITY,
                     block_rows: int = NEIGHBOUR_BLOCK_ROWS) -> np.ndarray:
    """Rows within ``identity`` of every row, counted over all pairs (itself included).

    Pairs are compared as one matrix product of the one-hot matrix of shared (column, code) pairs
    (:func:`shared_code_matrix`, BLAS), a block of rows against the rows after it, so each pair is
    computed once. Memory: that matrix (N x K floats, K at most 24 L and usually a few L) plus
    ``block_rows x N`` floats.

    Returns
    -------
    numpy.ndarray
        ``int64``, shape (N,).
    """
    check_identity(identity)
    n_rows, n_columns = codes.shape
    # Matches are whole numbers, exact in float32 (below 2**24); compare with a half margin.
    needed = needed_matches(identity, n_columns) - 0.5
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


def query_neighbours(block: np.ndarray, queries: np.ndarray, identity: float = NEFF_IDENTITY) -> np.ndarray:
    """For each query row, how many rows of ``block`` lie within ``identity`` of it.

    Exact integer counts, summed block by block (so any cut of the rows into blocks gives the same
    totals). Columns are compared a group at a time (uint8 sums), rows in cache-sized blocks.

    Parameters
    ----------
    block
        ``uint8``, shape (B, L).
    queries
        ``uint8``, shape (Q, L).

    Returns
    -------
    numpy.ndarray
        ``int64``, shape (Q,).
    """
    n_queries, n_columns = queries.shape
    needed = needed_matches(identity, n_columns)
    found = np.zeros(n_queries, dtype=np.int64)
    if n_queries == 0 or block.shape[0] == 0:
        return found
    query_columns = np.ascontiguousarray(queries.T)  # (L, Q)
    rows_per_step = max(1, _QUERY_BLOCK_CELLS // n_queries)
    for start in range(0, block.shape[0], rows_per_step):
        columns = np.ascontiguousarray(block[start:start + rows_per_step].T)  # (L, b)
        matches = np.zeros((columns.shape[1], n_queries), dtype=np.uint16)
        for first in range(0, n_columns, _QUERY_COLUMN_GROUP):
            group = slice(first, first + _QUERY_COLUMN_GROUP)
            same = columns[group, :, None] == query_columns[group, None, :]
            matches += same.sum(axis=0, dtype=np.uint8)
        found += (matches >= needed).sum(axis=0)
    return found


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
    needed = needed_matches(identity, block.shape[1]) - 0.5
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
    """A neighbour count for every row: exact up to ``exact_max_rows`` rows, else ``sampled``.

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
    check_identity(identity)
    n_rows = codes.shape[0]
    if n_rows <= exact_max_rows:
        return NeighbourCounts(exact_neighbours(codes, identity, block_rows).astype(np.float64), "exact", identity,
                               n_rows=n_rows)
    chosen = sample_rows(n_rows, sample_size)
    sample = np.ascontiguousarray(codes[chosen])
    in_sample = np.zeros(n_rows, dtype=bool)
    in_sample[chosen] = True
    hits = np.concatenate([sampled_neighbour_hits(codes[start:start + block_rows], sample, identity)
                           for start in range(0, n_rows, block_rows)])
    return NeighbourCounts(sampled_neighbours(hits, in_sample, n_rows, chosen.size), "sampled", identity,
                           int(chosen.size), n_rows)


def estimate_neighbours(codes: np.ndarray, identity: float = NEFF_IDENTITY,
                        exact_max_rows: int = NEFF_EXACT_MAX_ROWS,
                        query_rows: int = NEFF_QUERY_ROWS) -> NeighbourCounts:
    """The neighbour counts behind a column table's effective number, for a code matrix in memory: exact up
    to ``exact_max_rows``, else ``estimated`` from ``query_rows`` sampled rows compared with every row.

    The same computation as the column table's (:class:`ClusterCounts`, in the same blocks).
    """
    counter = ClusterCounts(identity, exact_max_rows, query_rows=query_rows)
    starts = range(0, codes.shape[0], CHUNK_ROWS)
    for start in starts:
        counter.first_pass(codes[start:start + CHUNK_ROWS], start)
    counter.finish_first_pass()
    for start in starts:
        counter.second_pass(codes[start:start + CHUNK_ROWS], start)
    return counter.finish(column_counts(codes))[1]


def estimated_column_counts(plain: np.ndarray, queries: np.ndarray, neighbours: NeighbourCounts) -> np.ndarray:
    """Cluster-weighted counts (L, N_CODES) estimated from the sampled rows (a ratio estimate).

    A column's residue counts are scaled by the mean cluster weight of the sampled rows holding a residue
    there (by the family's mean weight where fewer than ten sampled rows do); gaps and unknowns by the
    family's mean weight.

    Parameters
    ----------
    plain
        Unweighted counts, shape (L, N_CODES).
    queries
        The sampled rows' codes, shape (Q, L), in the order of ``neighbours.values``.
    """
    weights = 1.0 / neighbours.values
    overall = float(weights.mean()) if weights.size else 0.0
    holds = queries.T < N_RESIDUES  # (L, Q)
    holding = holds.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        own = (holds * weights[None, :]).sum(axis=1) / holding
    residue_ratio = np.where(holding >= _MIN_QUERIES_PER_COLUMN, own, overall)
    ratio = np.full(plain.shape, overall)
    ratio[:, :N_RESIDUES] = residue_ratio[:, None]
    return plain * ratio


class ClusterCounts:
    """The effective number of sequences and cluster-weighted column counts, from blocks in two passes.

    The first pass (:meth:`first_pass`, every block in row order) keeps the rows' codes while there are
    at most ``exact_max_rows`` of them, and always the sample rows (those of smallest key,
    :func:`sample_rows`); :meth:`finish_first_pass` counts every row's neighbours when all rows were kept;
    the second pass (:meth:`second_pass`) compares each block with the sample when they were not (the
    sampled rows with every row for the ``estimated`` effective number, or every row with the sample when
    ``per_row`` weights are needed) and sums the weighted counts. An alignment in memory and a file read
    in chunks give the same blocks, hence the same numbers.

    Parameters
    ----------
    identity
        Threshold in (0, 1].
    exact_max_rows
        Up to this many rows every pair is compared.
    sample_size
        Rows of the per-row (``sampled``) sample.
    query_rows
        Rows of the ``estimated`` sample.
    per_row
        Every row needs its own weight (``--weights cluster``): above ``exact_max_rows`` use ``sampled``
        counts instead of the ``estimated`` effective number.
    """

    def __init__(self, identity: float = NEFF_IDENTITY, exact_max_rows: int = NEFF_EXACT_MAX_ROWS,
                 sample_size: int = NEFF_SAMPLE_ROWS, query_rows: int = NEFF_QUERY_ROWS,
                 per_row: bool = False) -> None:
        check_identity(identity)
        if exact_max_rows < 0 or sample_size < 1 or query_rows < 2:
            raise OptionError(f"exact rows must be 0 or more, the sample 1 or more and the sampled rows 2 or "
                              f"more, got {exact_max_rows}, {sample_size}, {query_rows}")
        self.identity, self.exact_max_rows, self.per_row = identity, exact_max_rows, per_row
        self.sample_size = sample_size if per_row else query_rows
        self._kept: list[np.ndarray] | None = []
        self._sample_keys = np.empty(0, dtype=np.uint64)
        self._sample_index = np.empty(0, dtype=np.int64)
        self._sample_codes: np.ndarray | None = None
        self.n_rows = 0
        self.neighbours: NeighbourCounts | None = None
        self.counts: np.ndarray | None = None
        self._sample: np.ndarray | None = None
        self._sampled_values: list[np.ndarray] = []
        self._found: np.ndarray | None = None

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
        """Count the neighbours exactly when the first pass kept every row; else order the sample."""
        if self._kept is not None:
            codes = np.concatenate(self._kept) if self._kept else np.zeros((0, 0), dtype=np.uint8)
            self._kept = None
            values = exact_neighbours(codes, self.identity).astype(np.float64)
            self.neighbours = NeighbourCounts(values, "exact", self.identity, n_rows=self.n_rows)
            return
        order = np.argsort(self._sample_index)
        self._sample_index, self._sample = self._sample_index[order], self._sample_codes[order]
        self._found = np.zeros(self._sample_index.size, dtype=np.int64)

    def second_pass(self, block: np.ndarray, first_row: int) -> None:
        """Weigh and count one block of the second pass (or compare it with the sampled rows)."""
        if self.neighbours is not None:
            weights = 1.0 / self.neighbours.values[first_row:first_row + block.shape[0]]
        elif not self.per_row:
            self._found += query_neighbours(block, self._sample, self.identity)
            return
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

    def finish(self, plain: np.ndarray) -> tuple[np.ndarray, NeighbourCounts]:
        """The cluster-weighted counts (L, N_CODES) and the neighbour counts.

        Parameters
        ----------
        plain
            The unweighted counts (L, N_CODES), for the ``estimated`` ratio (see
            :func:`estimated_column_counts`).
        """
        if self.neighbours is None and not self.per_row:
            self.neighbours = NeighbourCounts(self._found.astype(np.float64), "estimated", self.identity,
                                              int(self._sample_index.size), self.n_rows)
            return estimated_column_counts(plain, self._sample, self.neighbours), self.neighbours
        if self.neighbours is None:
            values = np.concatenate(self._sampled_values) if self._sampled_values else np.zeros(0)
            self.neighbours = NeighbourCounts(values, "sampled", self.identity, int(self._sample_index.size),
                                              self.n_rows)
        counts = self.counts.reshape(plain.shape) if self.counts is not None else np.zeros(plain.shape)
        return counts, self.neighbours


def cluster_weights(codes: np.ndarray, identity: float = NEFF_IDENTITY,
                    exact_max_rows: int = NEFF_EXACT_MAX_ROWS) -> np.ndarray:
    """``1 / (rows within the identity threshold)`` for every row (see :func:`neighbour_counts`)."""
    return neighbour_counts(codes, identity, exact_max_rows).weights
