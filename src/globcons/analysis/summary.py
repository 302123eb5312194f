"""What a column table is made from: weighted counts of every code in every column, and a few rows.

Both ways of reading an alignment end here: in memory (:func:`summarise_alignment`) and in chunks
(:func:`globcons.analysis.streaming.summarise_file`). Both sum block by block, in blocks of
:data:`~globcons.core.counts.CHUNK_ROWS` rows in row order (:func:`count_blocks`), so the two give
bit-identical counts, and :func:`globcons.analysis.columns.table_from_summary` makes the same table.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from globcons.align.anchor import ANCHOR_CANDIDATES
from globcons.analysis.options import ScoreOptions
from globcons.core.alignment import Alignment
from globcons.core.alphabet import N_CODES, N_RESIDUES
from globcons.core.counts import CHUNK_ROWS, block_counts
from globcons.core.neighbours import ClusterCounts, NeighbourCounts
from globcons.core.weights import HenikoffSums, hash_powers, henikoff_raw, henikoff_table, row_hashes
from globcons.errors import OptionError

__all__ = ["ColumnSummary", "TopRows", "BlockCounts", "count_blocks", "cluster_counter", "matrix_blocks",
           "rows_alignment", "summarise_alignment"]


@dataclass(frozen=True)
class ColumnSummary:
    """What the column table is made from: weighted counts and the alignment's metadata.

    Attributes
    ----------
    counts
        ``float64``, shape (L, N_CODES): count of every code in every column, weighted by the frequency
        weights (``--weights``).
    neff_counts
        ``float64``, shape (L, N_CODES): the same weighted by cluster weights (``1 / m``, ``m`` the rows
        within the identity threshold): their sums are the effective numbers of sequences.
    n_eff
        Effective number of sequences: the sum of the cluster weights.
    neighbours
        How the cluster weights were counted (exact, or estimated from a sample).
    n_rows, n_columns
        N and L of the whole alignment.
    rows
        An :class:`~globcons.core.alignment.Alignment` of the anchor candidates (the rows with the most
        residues, in file order) and the ``--reference`` row, with the source, format, column
        annotations and frame labels of the whole alignment.
    notes
        The reader's notes.
    """

    counts: np.ndarray
    neff_counts: np.ndarray
    n_eff: float
    neighbours: NeighbourCounts
    n_rows: int
    n_columns: int
    rows: Alignment
    notes: Mapping[str, object]


class TopRows:
    """The rows with the most residues seen so far (ties go to the earlier row), with their codes."""

    def __init__(self, n_columns: int | None = None, limit: int = ANCHOR_CANDIDATES) -> None:
        self.limit = limit
        self.residues = np.empty(0, dtype=np.int64)
        self.index = np.empty(0, dtype=np.int64)
        self.codes = np.empty((0, n_columns or 0), dtype=np.uint8)

    def offer(self, block: np.ndarray, first_row: int) -> None:
        """Consider the rows of ``block``, whose first row is row ``first_row`` of the alignment."""
        if self.codes.shape[1] != block.shape[1] and not self.index.size:
            self.codes = np.empty((0, block.shape[1]), dtype=np.uint8)  # width known from the first block
        residues = (block < N_RESIDUES).sum(axis=1)
        best = np.argsort(-residues, kind="stable")[:self.limit]
        residues = np.concatenate((self.residues, residues[best]))
        index = np.concatenate((self.index, first_row + best))
        codes = np.concatenate((self.codes, block[best]))
        keep = np.lexsort((index, -residues))[:self.limit]
        self.residues, self.index, self.codes = residues[keep], index[keep], codes[keep]


@dataclass(frozen=True, eq=False)
class BlockCounts:
    """The result of :func:`count_blocks`."""

    counts: np.ndarray
    neff_counts: np.ndarray
    neighbours: NeighbourCounts

    @property
    def n_eff(self) -> float:
        """The effective number of sequences: the sum of the cluster weights."""
        return self.neighbours.n_eff


def count_blocks(blocks: Callable[[], Iterable[np.ndarray]], n_columns: int | None, scheme: str,
                 top: TopRows | None = None, clusters: ClusterCounts | None = None) -> BlockCounts:
    """Weighted column counts from blocks of rows, in two passes.

    Parameters
    ----------
    blocks
        Called once per pass; yields the alignment's rows in order, in blocks of
        :data:`~globcons.core.counts.CHUNK_ROWS` rows (the last may be shorter). The same blocks in every
        mode make the sums, and so the table, bit-identical.
    n_columns
        L (None: the width of the first block; a stream learns it there).
    scheme
        Frequency weights: ``"henikoff"``, ``"none"`` or ``"cluster"``.
    top
        Filled with the anchor candidates during the first pass, if given.
    clusters
        How the cluster weights are counted (default: :class:`~globcons.core.neighbours.ClusterCounts`
        with its defaults).

    Returns
    -------
    BlockCounts
        Counts (L, N_CODES) under the frequency weights and under the cluster weights, and how the latter
        were counted.
    """
    if scheme not in ("henikoff", "none", "cluster"):
        raise OptionError(f"unknown weighting scheme {scheme!r}")
    clusters = clusters or ClusterCounts()
    plain: np.ndarray | None = None
    hashes: list[np.ndarray] = []
    n_rows = 0
    for block in blocks():
        if plain is None:
            n_columns = block.shape[1] if n_columns is None else n_columns
            plain, powers = np.zeros(n_columns * N_CODES), hash_powers(n_columns)
        plain += block_counts(block)
        if top is not None:
            top.offer(block, n_rows)
        clusters.first_pass(block, n_rows)
        if scheme == "henikoff":
            hashes.append(row_hashes(block, powers))
        n_rows += block.shape[0]
    n_columns = n_columns or 0
    if plain is None:
        plain = np.zeros(n_columns * N_CODES)
    clusters.finish_first_pass()
    distinct = int(np.unique(np.concatenate(hashes)).size) if hashes else 0
    del hashes
    flat_table = henikoff_table(plain.reshape(n_columns, N_CODES)) if scheme == "henikoff" else None
    size = n_columns * N_CODES
    weighted, empty_counts = np.zeros(size), np.zeros(size)
    sums = HenikoffSums()
    start = 0
    for block in blocks():
        clusters.second_pass(block, start)
        start += block.shape[0]
        if flat_table is None:
            continue
        raw, empty = henikoff_raw(block, flat_table)
        sums.add(raw, empty)
        weighted += block_counts(block, raw)
        if empty.any():
            empty_counts += block_counts(block[empty])
    neff_counts, neighbours = clusters.finish(plain.reshape(n_columns, N_CODES))
    if scheme == "none":
        counts = plain.reshape(n_columns, N_CODES)
    elif scheme == "cluster":
        counts = neff_counts
    else:
        # Rows without residues weigh the mean raw weight, known only now: their counts were kept apart.
        scale = sums.scale(distinct) if n_rows else 0.0
        counts = ((weighted + sums.mean_raw * empty_counts) * scale).reshape(n_columns, N_CODES)
    return BlockCounts(counts, neff_counts, neighbours)


def matrix_blocks(codes: np.ndarray, chunk_rows: int = CHUNK_ROWS) -> Callable[[], Iterator[np.ndarray]]:
    """The ``blocks`` argument of :func:`count_blocks` for a code matrix in memory."""
    return lambda: (codes[start:start + chunk_rows] for start in range(0, codes.shape[0], chunk_rows))


def rows_alignment(alignment_ids: Sequence[str], index: np.ndarray, codes: np.ndarray, source: str, fmt: str,
                   annotations: Mapping[str, str] | None = None) -> Alignment:
    """The small alignment of :attr:`ColumnSummary.rows`: the given rows, sorted by their place in the file."""
    order = np.argsort(index, kind="stable")
    index, codes = index[order], codes[order]
    unique = np.r_[True, index[1:] != index[:-1]] if index.size else np.zeros(0, dtype=bool)
    index, codes = index[unique], codes[unique]
    return Alignment(ids=tuple(alignment_ids[int(i)] for i in index), codes=codes, source=source, format=fmt,
                     column_annotations=dict(annotations or {}))


def cluster_counter(options: ScoreOptions) -> ClusterCounts:
    """The :class:`~globcons.core.neighbours.ClusterCounts` the options ask for."""
    return ClusterCounts(options.identity, options.neff_exact_rows, query_rows=options.neff_sample,
                         per_row=options.weights == "cluster")


def summarise_alignment(alignment: Alignment, options: ScoreOptions) -> ColumnSummary:
    """The :class:`ColumnSummary` of an alignment in memory (weights, counts, anchor candidates)."""
    codes = alignment.codes
    top = TopRows(alignment.n_columns)
    counted = count_blocks(matrix_blocks(codes), alignment.n_columns, options.weights, top, cluster_counter(options))
    index, kept = top.index, top.codes
    if options.reference is not None:
        if options.reference not in alignment.ids:
            raise OptionError(f"--reference {options.reference!r} is not an id of {alignment.source}")
        row = alignment.ids.index(options.reference)
        index, kept = np.append(index, row), np.concatenate((kept, codes[row:row + 1]))
    rows = rows_alignment(alignment.ids, index, kept, alignment.source, alignment.format,
                          alignment.column_annotations)
    if alignment.frame_labels is not None:
        rows = rows.with_frame_labels(alignment.frame_labels, alignment.frame_labels_from)
    return ColumnSummary(counted.counts, counted.neff_counts, counted.n_eff, counted.neighbours, alignment.n_rows,
                         alignment.n_columns, rows, dict(alignment.notes))
