"""The column table: weights, scores and classes of every column joined into one pandas DataFrame."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Callable, Iterable, Iterator, Mapping, Sequence

import numpy as np
import pandas as pd

from globcons._version import __version__
from globcons.core.alignment import Alignment
from globcons.core.alphabet import N_CODES, N_RESIDUES, UNKNOWN
from globcons.core.classes import CLASSES, ClassRules, classify
from globcons.core.counts import CHUNK_ROWS, block_counts, column_counts
from globcons.errors import OptionError
from globcons.frame.reference import sites as site_table
from globcons.align.anchor import ANCHOR_CANDIDATES, ColumnMapping, column_sites, map_columns
from globcons.core.scores import (PROPERTY_CLASSES, consensus, entropy_bits, gap_fraction, jsd_scores, property_entropy,
                     residue_frequencies, residue_strings, smooth_window)
from globcons.core.weights import HenikoffSums, compute_weights, hash_powers, henikoff_raw, henikoff_table, row_hashes

__all__ = ["ScoreOptions", "score_columns", "summarise", "COLUMN_ORDER", "ColumnSummary", "TopRows", "count_blocks",
           "matrix_blocks", "rows_alignment", "summarise_alignment", "table_from_summary"]

#: Order of the table's columns (``ref_position`` and ``ref_residue`` follow ``column`` with a reference).
COLUMN_ORDER = ("column", "frame_label", "sites", "class", "low_data", "consensus", "residues", "entropy_bits", "entropy_norm",
                "property_entropy", "jsd", "gap_fraction", "unknown_fraction", "n_eff")


@dataclass(frozen=True)
class ScoreOptions:
    """Everything that changes a column table, recorded in its metadata.

    Attributes
    ----------
    weights
        ``henikoff``, ``none`` or ``cluster``.
    identity
        Identity threshold of ``cluster`` weights.
    window
        Half-width of the JSD smoothing window (0: none).
    rules
        Class thresholds.
    reference
        Id of a row whose residue numbering is added (``ref_position``, ``ref_residue``); it is also the
        anchor that ties the columns to the globin frame.
    frame
        Tie the columns to the globin frame (``frame_label``, ``sites``); False leaves both empty.
    sites_path
        A user's site table (label or column, role, ...) added to the built-in sites.
    replace_sites
        Use only the user's sites.
    """

    weights: str = "henikoff"
    identity: float = 0.8
    window: int = 0
    rules: ClassRules = ClassRules()
    reference: str | None = None
    frame: bool = True
    sites_path: str | None = None
    replace_sites: bool = False

    def __post_init__(self) -> None:
        if self.window < 0:
            raise OptionError(f"--window must not be negative, got {self.window}")


@dataclass(frozen=True)
class ColumnSummary:
    """What the column table is made from: weighted counts and the alignment's metadata.

    The in-memory path (:func:`score_columns`) and the streaming path (:mod:`globcons.analysis.streaming`) both
    build one and hand it to :func:`table_from_summary`, so everything after the counts is shared.

    Attributes
    ----------
    counts
        ``float64``, shape (L, N_CODES): weighted count of every code in every column.
    n_eff
        Effective number of sequences (sum of the weights).
    n_rows, n_columns
        N and L of the whole alignment.
    rows
        An :class:`~globcons.core.alignment.Alignment` of the anchor candidates (the rows with the most
        residues, in file order) and the ``--reference`` row, with the source, format and column
        annotations of the whole alignment.
    notes
        The reader's notes.
    """

    counts: np.ndarray
    n_eff: float
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


def count_blocks(blocks: Callable[[], Iterable[np.ndarray]], n_columns: int | None, scheme: str,
                 top: TopRows | None = None) -> tuple[np.ndarray, float]:
    """Weighted column counts from blocks of rows, in one pass (``none``) or two (``henikoff``).

    Parameters
    ----------
    blocks
        Called once per pass; yields the alignment's rows in order, in blocks of
        :data:`~globcons.core.counts.CHUNK_ROWS` rows (the last may be shorter). The same blocks in every
        mode make the sums, and so the table, bit-identical.
    n_columns
        L (None: the width of the first block; a stream learns it there).
    scheme
        ``"henikoff"`` or ``"none"``.
    top
        Filled with the anchor candidates during the first pass, if given.

    Returns
    -------
    counts, n_eff
        Shape (L, N_CODES), and the sum of the weights.
    """
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
        if scheme == "henikoff":
            hashes.append(row_hashes(block, powers))
        n_rows += block.shape[0]
    if plain is None:
        n_columns = n_columns or 0
        plain = np.zeros(n_columns * N_CODES)
    size = n_columns * N_CODES
    if scheme == "none":
        return plain.reshape(n_columns, N_CODES), float(n_rows)
    if scheme != "henikoff":
        raise OptionError(f"weights {scheme!r} cannot be computed from blocks of rows")
    distinct = int(np.unique(np.concatenate(hashes)).size) if hashes else 0
    del hashes
    flat_table = henikoff_table(plain.reshape(n_columns, N_CODES))
    weighted, empty_counts = np.zeros(size), np.zeros(size)
    sums = HenikoffSums()
    for block in blocks():
        raw, empty = henikoff_raw(block, flat_table)
        sums.add(raw, empty)
        weighted += block_counts(block, raw)
        if empty.any():
            empty_counts += block_counts(block[empty])
    # Rows without residues weigh the mean raw weight, known only now: their counts were kept apart.
    scale = sums.scale(distinct) if n_rows else 0.0
    counts = (weighted + sums.mean_raw * empty_counts) * scale
    n_eff = (sums.raw_sum + sums.n_empty * sums.mean_raw) * scale
    return counts.reshape(n_columns, N_CODES), float(n_eff)


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


def summarise_alignment(alignment: Alignment, options: ScoreOptions) -> ColumnSummary:
    """The :class:`ColumnSummary` of an alignment in memory (weights, counts, anchor candidates)."""
    codes = alignment.codes
    top = TopRows(alignment.n_columns)
    if options.weights == "cluster" or options.weights not in ("henikoff", "none"):
        weights = compute_weights(codes, options.weights, options.identity)
        counts, n_eff = column_counts(codes, weights.values), weights.n_eff
        for start in range(0, codes.shape[0], CHUNK_ROWS):
            top.offer(codes[start:start + CHUNK_ROWS], start)
    else:
        counts, n_eff = count_blocks(matrix_blocks(codes), alignment.n_columns, options.weights, top)
    index, kept = top.index, top.codes
    if options.reference is not None:
        if options.reference not in alignment.ids:
            raise OptionError(f"--reference {options.reference!r} is not an id of {alignment.source}")
        row = alignment.ids.index(options.reference)
        index, kept = np.append(index, row), np.concatenate((kept, codes[row:row + 1]))
    rows = rows_alignment(alignment.ids, index, kept, alignment.source, alignment.format,
                          alignment.column_annotations)
    return ColumnSummary(counts, n_eff, alignment.n_rows, alignment.n_columns, rows, dict(alignment.notes))


def score_columns(alignment: Alignment, options: ScoreOptions | None = None, **kwargs) -> pd.DataFrame:
    """Score and class every column of an alignment.

    Parameters
    ----------
    alignment
        From :func:`globcons.io.readers.read_alignment`.
    options
        A :class:`ScoreOptions`; or give its fields (and those of :class:`~globcons.core.classes.ClassRules`,
        e.g. ``max_gaps=0.3``) as keyword arguments.

    Returns
    -------
    pandas.DataFrame
        One row per column, columns in :data:`COLUMN_ORDER` (see the README for their meaning); ``.attrs``
        holds the metadata (options, version, input, effective number of sequences).

    Examples
    --------
    >>> from globcons import read_alignment, score_columns
    >>> from globcons.demo import demo_alignment_path
    >>> table = score_columns(read_alignment(demo_alignment_path()), max_gaps=0.4)
    >>> sorted(set(table["class"])) == ['conservative', 'gap-rich', 'invariant', 'variable']
    True
    """
    options = _options(options, kwargs)
    user_sites = _user_sites(options)
    return table_from_summary(summarise_alignment(alignment, options), options, user_sites)


def _user_sites(options: ScoreOptions):
    user_sites = site_table(path=options.sites_path) if options.sites_path else None
    if options.replace_sites and user_sites is None:
        raise OptionError("replacing the sites needs a site table (--sites FILE)")
    return user_sites


def table_from_summary(summary: ColumnSummary, options: ScoreOptions, user_sites=None) -> pd.DataFrame:
    """The column table from a :class:`ColumnSummary` (scores, classes, frame labels, sites, metadata).

    Parameters
    ----------
    summary
        From :func:`summarise_alignment` or :func:`globcons.analysis.streaming.summarise_file`.
    options
        The options the summary was made with.
    user_sites
        Sites read from ``options.sites_path`` (read here if None and a path is given).
    """
    if user_sites is None:
        user_sites = _user_sites(options)
    counts, rows = summary.counts, summary.rows
    frequencies = residue_frequencies(counts)
    gaps = gap_fraction(counts)
    n_eff = counts[:, :N_RESIDUES].sum(axis=1)
    classes, low_data = classify(frequencies, gaps, n_eff, options.rules)
    entropy = entropy_bits(counts)
    total = counts.sum(axis=1)
    if options.frame:
        source = rows.source if Path(rows.source).is_file() else None
        mapping = map_columns(rows, anchor=options.reference, source_path=source)
    else:
        mapping = ColumnMapping(("",) * summary.n_columns, "none", note="frame mapping switched off")
    table = pd.DataFrame({
        "column": np.arange(1, summary.n_columns + 1),
        "frame_label": list(mapping.labels),
        "sites": column_sites(mapping.labels, mapping.nearest_reference, user_sites, options.replace_sites),
        "class": classes.astype(str),
        "low_data": low_data,
        "consensus": consensus(counts).astype(str),
        "residues": residue_strings(frequencies),
        "entropy_bits": entropy,
        "entropy_norm": entropy / np.log2(20),
        "property_entropy": property_entropy(counts),
        "jsd": smooth_window(jsd_scores(counts), options.window),
        "gap_fraction": gaps,
        "unknown_fraction": np.where(total > 0, counts[:, UNKNOWN] / np.where(total > 0, total, 1), 0.0),
        "n_eff": n_eff,
    })
    if options.reference is not None:
        if options.reference not in rows.ids:
            raise OptionError(f"--reference {options.reference!r} is not an id of {rows.source}")
        row = rows.ids.index(options.reference)
        positions = rows.ungapped_positions(row)
        letters = np.array(list(rows.row(row)))
        table.insert(1, "ref_position", pd.array(np.where(positions > 0, positions, 0), dtype="Int64"))
        table.loc[positions <= 0, "ref_position"] = pd.NA
        table.insert(2, "ref_residue", np.where(positions > 0, letters, ""))
    table.attrs.update(_metadata(summary, options, classes, low_data))
    table.attrs["frame"] = {"source": mapping.source, "anchor": mapping.anchor,
                            "nearest_reference": mapping.nearest_reference, "note": mapping.note,
                            "evalue": mapping.placement.evalue if mapping.placement else None}
    return table


def _options(options: ScoreOptions | None, kwargs: dict) -> ScoreOptions:
    if options is not None and kwargs:
        raise TypeError("give either options or keyword arguments, not both")
    if options is not None:
        return options
    rule_fields = set(ClassRules.__dataclass_fields__)
    rules = ClassRules(**{k: kwargs.pop(k) for k in list(kwargs) if k in rule_fields})
    unknown = set(kwargs) - set(ScoreOptions.__dataclass_fields__)
    if unknown:
        raise TypeError(f"unknown options: {', '.join(sorted(unknown))}")
    return ScoreOptions(rules=rules, **kwargs)


def _metadata(summary: ColumnSummary, options: ScoreOptions, classes: np.ndarray,
              low_data: np.ndarray) -> dict[str, object]:
    counts = {name: int((classes == name).sum()) for name in CLASSES}
    return {
        "tool": "globcons",
        "version": __version__,
        "input": summary.rows.source,
        "format": summary.rows.format,
        "sequences": summary.n_rows,
        "columns": summary.n_columns,
        "effective_sequences": round(summary.n_eff, 6),
        "weights": options.weights,
        "identity": options.identity if options.weights == "cluster" else None,
        "window": options.window,
        "reference": options.reference,
        "property_classes": PROPERTY_CLASSES,
        "rules": options.rules.as_dict(),
        "grouping": options.rules.grouping,
        "class_counts": counts,
        "low_data_columns": int(low_data.sum()),
        "reader_notes": dict(summary.notes),
    }


def summarise(table: pd.DataFrame) -> str:
    """One line: sequences, effective sequences, columns and the count of each class."""
    meta = table.attrs
    counts = meta["class_counts"]
    parts = ", ".join(f"{counts[name]} {name}" for name in CLASSES)
    line = (f"{meta['sequences']} sequences ({meta['effective_sequences']:.1f} effective, {meta['weights']} "
            f"weights), {meta['columns']} columns: {parts}")
    frame = meta.get("frame")
    if frame and frame.get("note"):
        line += f"; {frame['note']}"
    if meta["low_data_columns"]:
        line += f"; {meta['low_data_columns']} low-data columns (n_eff < {meta['rules']['min_neff']:g})"
    return line
