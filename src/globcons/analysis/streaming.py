"""Column tables of alignments larger than memory: the file is read twice, in chunks of whole records.

Aligned FASTA and A2M only (the formats of large family alignments), read by :mod:`globcons.io.chunks`:
each chunk holds whole records, parsed by the same byte path as a file in memory and re-cut into the
blocks of :data:`~globcons.core.counts.CHUNK_ROWS` rows that the in-memory path uses, so both paths sum
the same numbers in the same order and the column tables are identical.

Two passes: pass 1 parses the file (keeping its codes in a temporary file, one byte per cell; see
:class:`~globcons.io.chunks.SpooledBlocks`) and gathers the unweighted counts (``r`` and ``s`` of every
column, for Henikoff weights), a 64-bit hash per row (the number of distinct rows), the ids, the anchor
candidates, the ``--reference`` row, and what the cluster weights need (every row's codes up to the exact limit of
:class:`~globcons.core.neighbours.ClusterCounts`, else its fixed sample); pass 2 reads the codes back and
computes each row's weights and the weighted counts.

Memory is that of one chunk (a few times its bytes) plus, per row, one id string and one 8-byte hash, plus
the codes the cluster weights keep (at most the exact limit's rows, else the sample's); the temporary
file takes one byte per cell of disk (``TMPDIR``).

When to stream (:func:`plan_reading`): always with ``--chunk-rows N``; otherwise when the estimated
in-memory need (three times the uncompressed file size plus the code matrix, taken as the file size)
exceeds the memory available (``MemAvailable`` of ``/proc/meminfo``, else free physical pages).
"""

from __future__ import annotations

import os
import struct
import warnings
from dataclasses import dataclass
from pathlib import Path
from typing import BinaryIO

import numpy as np
import pandas as pd

from globcons.analysis.columns import read_user_sites, table_from_summary
from globcons.analysis.options import ScoreOptions
from globcons.analysis.summary import ColumnSummary, TopRows, cluster_counter, count_blocks, rows_alignment
from globcons.core.weights import SCHEMES
from globcons.errors import InputWarning, OptionError
from globcons.io.checks import unique_ids
from globcons.io.chunks import STREAM_FORMATS, ChunkedFasta, SpooledBlocks, chunk_rows_for, reblock
from globcons.io.formats import FORMATS, format_from_name
from globcons.io.frame_labels import carried_labels
from globcons.io.opening import BOM, GZIP_MAGIC, InputSource, read_checked
from globcons.io.sniff import sniff_format

__all__ = ["ReadPlan", "available_memory", "plan_reading", "summarise_file", "stream_columns"]

#: In-memory reading needs about this many times the uncompressed file (file, codes, working copies).
MEMORY_FACTOR = 4
#: Bytes read to sniff the format of a file too large for memory.
_SNIFF_BYTES = 1 << 16
#: Bytes read to tell the format of a file that is streamed.
_HEAD_BYTES = 1 << 20


# --------------------------------------------------------------------------------------------------
# when to stream


@dataclass(frozen=True)
class ReadPlan:
    """How ``globcons columns`` reads its input.

    Attributes
    ----------
    stream
        Read in chunks (two passes) instead of all at once.
    chunk_rows
        Rows per chunk (None: chosen from :data:`~globcons.io.chunks.CHUNK_BYTES`).
    note
        One line for stderr when streaming was chosen automatically, else ''.
    """

    stream: bool
    chunk_rows: int | None = None
    note: str = ""


def available_memory() -> int:
    """Bytes of memory available to a new allocation (``MemAvailable``, else free physical pages)."""
    try:
        with open("/proc/meminfo", encoding="ascii") as meminfo:
            for line in meminfo:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    try:
        return os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    except (ValueError, OSError, AttributeError):
        return 1 << 62  # unknown: never stream automatically


def _uncompressed_size(path: Path) -> int:
    """Size of a file's content: gzip's recorded size (modulo 4 GiB; if smaller than the file, 8x the file)."""
    size = path.stat().st_size
    with open(path, "rb") as stream:
        if stream.read(2) != GZIP_MAGIC or size < 18:
            return size
        stream.seek(-4, os.SEEK_END)
        recorded = struct.unpack("<I", stream.read(4))[0]
    return recorded if recorded >= size else 8 * size


def plan_reading(alignment: str, weights: str = "henikoff", keep_inserts: bool = False,
                 chunk_rows: int | None = None, format: str | None = None) -> ReadPlan:
    """Decide between reading in memory and streaming (see the module notes for the rule).

    Raises
    ------
    OptionError
        ``chunk_rows`` below 1; or the input is too large for memory and cannot be streamed.
    """
    if chunk_rows is not None:
        if chunk_rows < 1:
            raise OptionError(f"--chunk-rows must be at least 1, got {chunk_rows}")
        return ReadPlan(True, chunk_rows)
    path = Path(alignment)
    if alignment == "-" or not path.is_file():
        return ReadPlan(False)  # standard input or a missing file: the reader says what is wrong
    size = _uncompressed_size(path)
    needed, available = MEMORY_FACTOR * size, available_memory()
    if needed <= available:
        return ReadPlan(False)
    shown = f"about {needed / 1e9:.1f} GB needed in memory, {available / 1e9:.1f} GB available"
    fmt = format or format_from_name(alignment) or _sniff_path(path)
    if fmt in STREAM_FORMATS and weights in SCHEMES and not keep_inserts:
        return ReadPlan(True, None, f"{alignment}: {shown}: reading it in two passes, in chunks "
                                    "(--chunk-rows sets their size)")
    raise OptionError(f"{alignment}: {shown}; use --chunk-rows (streaming reads FASTA or A2M, without "
                      "--keep-inserts)")


def _sniff_path(path: Path) -> str:
    source = InputSource(path)
    with source.open() as stream:
        head = read_checked(stream, _SNIFF_BYTES, source.name)
    return sniff_format(head[len(BOM):] if head.startswith(BOM) else head, source.name)


def _refuse(options: ScoreOptions, keep_inserts: bool, fmt: str) -> None:
    if options.weights not in SCHEMES:
        raise OptionError(f"unknown weighting scheme {options.weights!r}")
    if keep_inserts:
        raise OptionError("--keep-inserts pads the insert columns to the longest over all rows and cannot "
                          "stream; leave out --chunk-rows, or leave the inserts out")
    if fmt not in STREAM_FORMATS:
        raise OptionError(f"streaming (--chunk-rows) reads aligned FASTA and A2M; this input is {fmt}: read it "
                          "without --chunk-rows, or convert it to FASTA")


def summarise_file(source: str | os.PathLike | BinaryIO, options: ScoreOptions, chunk_rows: int | None = None,
                   format: str | None = None, keep_inserts: bool = False) -> ColumnSummary:
    """The :class:`~globcons.analysis.columns.ColumnSummary` of a FASTA or A2M file, read in chunks.

    Parameters
    ----------
    source
        A path (gzip detected by its magic bytes), ``"-"`` for standard input (spooled to a temporary
        file, as it is read twice) or a binary stream.
    options
        The scoring options.
    chunk_rows
        Records per chunk (None: about :data:`~globcons.io.chunks.CHUNK_BYTES` per chunk). Memory grows with it;
        the result
        does not depend on it.
    format
        ``"fasta"`` or ``"a2m"``; None: from a ``.a2m`` name, else sniffed.
    keep_inserts
        Refused (A2M inserts kept as columns need every row at once).

    Raises
    ------
    OptionError
        ``keep_inserts``, a format other than FASTA/A2M, an unknown ``--reference``.
    InputError
        As the in-memory reader, with the line numbers of the whole file.
    """
    if format is not None and format not in FORMATS:
        raise OptionError(f"unknown format {format!r}")
    if keep_inserts:
        _refuse(options, keep_inserts, format or "fasta")
    if chunk_rows is not None and chunk_rows < 1:
        raise OptionError(f"--chunk-rows must be at least 1, got {chunk_rows}")
    opened = InputSource(source, rereadable=True)
    opened.check_readable()
    try:
        with opened.open() as stream:
            head = read_checked(stream, _HEAD_BYTES, opened.name)
        if head.startswith(BOM):
            head = head[len(BOM):]
        fmt = format or format_from_name(opened.name) or sniff_format(head, opened.name)
        _refuse(options, keep_inserts, fmt)
        reader = ChunkedFasta(opened, fmt, chunk_rows or chunk_rows_for(opened), options.reference)
        top = TopRows()
        # Pass 1 parses the file and spools its codes; pass 2 reads the codes back.
        blocks = SpooledBlocks(lambda: reblock(reader.matrices(True)))
        try:
            counted = count_blocks(blocks, None, options.weights, top, cluster_counter(options))
        finally:
            blocks.close()
    finally:
        opened.close()
    n_rows = len(reader.ids)
    if reader.stops:
        warnings.warn(f"{opened.name}: {reader.stops} internal stop(s) '*' counted as unknown residues",
                      InputWarning, stacklevel=2)
    ids = unique_ids(reader.ids, opened.name)
    reader.ids = []
    index, kept = top.index, top.codes
    if options.reference is not None:
        found = [(row, codes) for row, codes in reader.reference_rows if ids[row] == options.reference]
        if not found:
            raise OptionError(f"--reference {options.reference!r} is not an id of {opened.name}")
        index = np.append(index, found[0][0])
        kept = np.concatenate((kept, found[0][1][None, :]))
    width = int(reader.width or 0)
    labels, found_in = carried_labels(None, opened.path, width)
    rows = rows_alignment(ids, index, kept, opened.name, fmt).with_frame_labels(labels, found_in)
    return ColumnSummary(counted.counts, counted.neff_counts, counted.n_eff, counted.neighbours, n_rows, width, rows,
                         reader.notes())


def stream_columns(source: str | os.PathLike | BinaryIO, options: ScoreOptions | None = None,
                   chunk_rows: int | None = None, format: str | None = None) -> pd.DataFrame:
    """The column table of :func:`globcons.analysis.columns.score_columns`, reading the file in chunks.

    See :func:`summarise_file` for the parameters. The table equals the in-memory one.

    Examples
    --------
    >>> from globcons.analysis.columns import ScoreOptions
    >>> from globcons.demo import demo_alignment_path
    >>> table = stream_columns(demo_alignment_path(), ScoreOptions(), chunk_rows=5)
    >>> int(table.attrs["columns"]) == len(table)
    True
    """
    options = options or ScoreOptions()
    user_sites = read_user_sites(options)
    return table_from_summary(summarise_file(source, options, chunk_rows, format), options, user_sites)
