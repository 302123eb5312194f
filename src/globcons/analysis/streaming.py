"""Column tables of alignments larger than memory: the file is read twice, in chunks of whole records.

Aligned FASTA and A2M only (the formats of large family alignments). Each chunk holds whole records and is
parsed by the same byte path as a file in memory (:func:`globcons.io.readers._parse_fasta_rows`); its rows are
re-cut into the blocks of :data:`~globcons.core.counts.CHUNK_ROWS` rows that the in-memory path uses, so both
paths sum the same numbers in the same order and the column tables are identical.

``henikoff`` weights take two passes: pass 1 gathers the unweighted counts (``r`` and ``s`` of every
column), a 64-bit hash per row (the number of distinct rows), the ids, the anchor candidates and the
``--reference`` row; pass 2 computes each row's raw weight and the weighted counts. ``none`` weights take
one pass; ``cluster`` weights compare all pairs of rows and refuse to stream.

Memory is that of one chunk (a few times its bytes) plus, per row, one id string and one 8-byte hash.

When to stream (:func:`plan_reading`): always with ``--chunk-rows N``; otherwise when the estimated
in-memory need (three times the uncompressed file size plus the code matrix, taken as the file size)
exceeds the memory available (``MemAvailable`` of ``/proc/meminfo``, else free physical pages).
"""

from __future__ import annotations

import gzip
import os
import re
import shutil
import struct
import sys
import tempfile
import warnings
import zlib
from dataclasses import dataclass
from pathlib import Path
from typing import BinaryIO, Callable, Iterator

import numpy as np
import pandas as pd

from globcons.analysis.columns import (ColumnSummary, ScoreOptions, TopRows, count_blocks, rows_alignment, table_from_summary,
                      _user_sites)
from globcons.core.counts import CHUNK_ROWS
from globcons.errors import InputError, InputWarning, OptionError
from globcons.io.readers import (_BOM, _GZIP_MAGIC, _check_protein, _format_from_name, _is_blank, _parse_fasta_rows,
                 _stops_to_unknown, _text_problem, _unique_ids, sniff_format)
from globcons.core.weights import CLUSTER_MAX_ROWS

__all__ = ["STREAM_FORMATS", "CHUNK_BYTES", "ReadPlan", "available_memory", "plan_reading", "summarise_file",
           "stream_columns", "record_chunks"]

#: Formats that can be streamed.
STREAM_FORMATS = ("fasta", "a2m")

#: Target bytes per chunk when the number of rows per chunk is not given.
CHUNK_BYTES = 32 << 20

#: Codes that decide whether the input is protein (as in memory: the first four million).
_PROTEIN_SAMPLE = 4_000_000


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
        Rows per chunk (None: chosen from :data:`CHUNK_BYTES`).
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
        if stream.read(2) != _GZIP_MAGIC or size < 18:
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
    needed, available = 4 * size, available_memory()  # 3 x file + the code matrix (at most the file)
    if needed <= available:
        return ReadPlan(False)
    shown = f"about {needed / 1e9:.1f} GB needed in memory, {available / 1e9:.1f} GB available"
    fmt = format or _format_from_name(alignment) or _sniff_path(path)
    if fmt in STREAM_FORMATS and weights in ("henikoff", "none") and not keep_inserts:
        return ReadPlan(True, None, f"{alignment}: {shown}: reading it in two passes, in chunks "
                                    "(--chunk-rows sets their size)")
    raise OptionError(f"{alignment}: {shown}; use --chunk-rows (streaming reads FASTA or A2M, with --weights "
                      "henikoff or none and without --keep-inserts)")


def _sniff_path(path: Path) -> str:
    source = _Source(str(path))
    stream, close = source.open()
    try:
        head = _read_checked(stream, 1 << 16, source.name)
    finally:
        close()
    return sniff_format(head[len(_BOM):] if head.startswith(_BOM) else head, source.name)


# --------------------------------------------------------------------------------------------------
# reading in chunks


class _Source:
    """An input that can be read twice: a path, or standard input (or a stream) spooled to a temporary file."""

    def __init__(self, source: str | os.PathLike | BinaryIO) -> None:
        self._spool = None
        if hasattr(source, "read") or str(source) == "-":
            stream = source if hasattr(source, "read") else sys.stdin.buffer
            self.name = "<stdin>" if str(source) == "-" else str(getattr(source, "name", "<stream>"))
            self._spool = tempfile.TemporaryFile(prefix="globcons-stream-")
            shutil.copyfileobj(stream, self._spool, 1 << 22)  # type: ignore[arg-type]
            self.path = None
            return
        self.name = str(source)
        self.path = Path(source)
        if not self.path.exists():
            raise InputError("no such file", source=self.name)
        if self.path.is_dir():
            raise InputError("is a folder, not a file", source=self.name)
        if not os.access(self.path, os.R_OK):
            raise InputError("cannot be read (permission denied)", source=self.name)

    def open(self) -> tuple[BinaryIO, Callable[[], None]]:
        """A fresh binary stream from the start (un-gzipped) and the function that closes it."""
        if self._spool is not None:
            self._spool.seek(0)
            raw: BinaryIO = self._spool
            close_raw: Callable[[], None] = lambda: None  # the spool lives as long as the source
        else:
            raw = open(self.path, "rb")  # type: ignore[arg-type]
            close_raw = raw.close
        magic = raw.read(2)
        raw.seek(0)
        if magic == _GZIP_MAGIC:
            unzipped = gzip.GzipFile(fileobj=raw, mode="rb")

            def close() -> None:
                unzipped.close()
                close_raw()
            return unzipped, close  # type: ignore[return-value]
        return raw, close_raw

    def close(self) -> None:
        if self._spool is not None:
            self._spool.close()


def _read_checked(stream: BinaryIO, size: int, name: str) -> bytes:
    try:
        return stream.read(size)
    except (EOFError, zlib.error, gzip.BadGzipFile, OSError) as exc:
        detail = "truncated" if isinstance(exc, EOFError) else "corrupt"
        raise InputError(f"gzip data is {detail}; the file may be an incomplete download", source=name) from None


def _record_starts(buffer: bytearray) -> np.ndarray:
    """Offsets of the '>' that start a line (a record) in ``buffer``."""
    view = np.frombuffer(buffer, dtype=np.uint8)
    starts = np.flatnonzero((view[1:] == 62) & (view[:-1] == 10)) + 1
    if view.size and view[0] == 62:
        starts = np.concatenate(([0], starts))
    del view  # release the export: the buffer is resized next
    return starts


def record_chunks(stream: BinaryIO, chunk_rows: int, name: str = "<input>") -> Iterator[bytes]:
    """Cut a FASTA stream into chunks of ``chunk_rows`` whole records (the last may hold fewer).

    A chunk ends just before a line starting with '>', so every chunk after the first starts with a header
    and no line is split. Bytes before the first header go with the first chunk.
    """
    pending = bytearray()
    read_size, eof = 1 << 20, False
    while True:
        starts = _record_starts(pending)
        while starts.size <= chunk_rows and not eof:
            more = _read_checked(stream, read_size, name)
            if not more:
                eof = True
                break
            pending += more
            starts = _record_starts(pending)
            # Read about what the missing records need, judged by the bytes per record so far.
            per_record = len(pending) / max(starts.size, 1)
            read_size = max(1 << 20, int(per_record * (chunk_rows + 1 - starts.size)))
        if starts.size <= chunk_rows:
            if pending:
                yield bytes(pending)
            return
        cut = int(starts[chunk_rows])
        yield bytes(pending[:cut])
        del pending[:cut]


class _ChunkedAlignment:
    """A FASTA or A2M file read chunk by chunk; pass 1 also checks it and gathers what the table needs."""

    def __init__(self, source: _Source, fmt: str, chunk_rows: int, reference: str | None) -> None:
        self.source, self.name, self.fmt = source, source.name, fmt
        self.chunk_rows = chunk_rows
        self.width: int | None = None
        self.ids: list[str] = []
        self.stops = 0
        self.inserts_dropped = 0
        self._sample: list[np.ndarray] = []
        self._sampled = 0
        self._checked = False
        # Rows whose id is, or may become once duplicates are renamed, the reference.
        self._targets: set[str] = set()
        if reference is not None:
            self._targets.add(reference)
            renamed = re.fullmatch(r"(.+)_(\d+)", reference)
            if renamed:
                self._targets.add(renamed.group(1))
        self.reference_rows: list[tuple[int, np.ndarray]] = []

    def matrices(self, first_pass: bool) -> Iterator[np.ndarray]:
        """The code matrix of every chunk in order (stops already made unknown)."""
        stream, close = self.source.open()
        lines_before = 0
        try:
            for index, chunk in enumerate(record_chunks(stream, self.chunk_rows, self.name)):
                if index == 0:
                    chunk = self._first_checks(chunk)
                try:
                    ids, _, matrix, notes = _parse_fasta_rows(chunk, self.name, self.fmt == "a2m", False,
                                                              width=self.width)
                except InputError as exc:
                    if exc.line is not None:
                        exc.line += lines_before  # the chunk's lines are numbered from its start
                    raise
                lines_before += chunk.count(b"\n")
                del chunk
                if self.width is None:
                    if matrix.shape[1] == 0:
                        raise InputError("the sequences are empty (no columns)", source=self.name)
                    self.width = matrix.shape[1]
                stops = _stops_to_unknown(matrix)
                if first_pass:
                    self._gather(ids, matrix, stops, int(notes.get("inserts_dropped", 0)))
                yield matrix
        finally:
            close()
        if first_pass and not self._checked:
            self._check_protein()

    def _first_checks(self, chunk: bytes) -> bytes:
        if chunk.startswith(_BOM):
            chunk = chunk[len(_BOM):]
        if _is_blank(chunk):
            raise InputError("file is empty", source=self.name)
        problem = _text_problem(chunk)
        if problem:
            raise InputError(problem, source=self.name)
        return chunk

    def _gather(self, ids: list[str], matrix: np.ndarray, stops: int, dropped: int) -> None:
        first_row = len(self.ids)
        self.ids.extend(ids)
        self.stops += stops
        self.inserts_dropped += dropped
        if self._targets:
            for k, identifier in enumerate(ids):  # header strings are Python objects already
                if identifier in self._targets:
                    self.reference_rows.append((first_row + k, matrix[k].copy()))
        if not self._checked:
            self._sample.append(matrix.reshape(-1)[:_PROTEIN_SAMPLE - self._sampled].copy())
            self._sampled += self._sample[-1].size
            if self._sampled >= _PROTEIN_SAMPLE:
                self._check_protein()

    def _check_protein(self) -> None:
        self._checked = True
        sample = np.concatenate(self._sample) if self._sample else np.zeros(0, dtype=np.uint8)
        self._sample = []
        _check_protein(sample, self.name)

    def notes(self) -> dict[str, object]:
        """Reader notes, as the in-memory reader records them."""
        notes: dict[str, object] = {"inserts_dropped": self.inserts_dropped} if self.fmt == "a2m" else {}
        if self.stops:
            notes["internal_stops"] = self.stops
        return notes


def _reblock(matrices: Iterator[np.ndarray], rows: int = CHUNK_ROWS) -> Iterator[np.ndarray]:
    """Re-cut chunks of any size into consecutive blocks of ``rows`` rows (the last may be shorter)."""
    carry: np.ndarray | None = None
    for matrix in matrices:
        start = 0
        if carry is not None:
            start = rows - carry.shape[0]
            carry = np.concatenate((carry, matrix[:start]))
            if carry.shape[0] < rows:
                continue
            yield carry
            carry = None
        while matrix.shape[0] - start >= rows:
            yield matrix[start:start + rows]
            start += rows
        if start < matrix.shape[0]:
            carry = matrix[start:].copy()
    if carry is not None and carry.shape[0]:
        yield carry


def _chunk_rows_for(source: _Source) -> int:
    """Rows per chunk of about :data:`CHUNK_BYTES`, judged from the first megabyte."""
    stream, close = source.open()
    try:
        head = bytearray(_read_checked(stream, 1 << 20, source.name))
    finally:
        close()
    records = _record_starts(head).size
    return max(1, int(CHUNK_BYTES * max(records, 1) / max(len(head), 1)))


def _refuse(options: ScoreOptions, keep_inserts: bool, fmt: str) -> None:
    if options.weights == "cluster":
        raise OptionError(
            "cluster weights compare every pair of rows, so they need the whole alignment in memory and "
            "cannot stream; with --chunk-rows use --weights henikoff (the default) or none, or read the "
            f"alignment in memory (without --chunk-rows; cluster weights allow up to {CLUSTER_MAX_ROWS:,} rows)")
    if options.weights not in ("henikoff", "none"):
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
        The scoring options (``weights`` must be ``henikoff`` or ``none``).
    chunk_rows
        Records per chunk (None: about :data:`CHUNK_BYTES` per chunk). Memory grows with it; the result
        does not depend on it.
    format
        ``"fasta"`` or ``"a2m"``; None: from a ``.a2m`` name, else sniffed.
    keep_inserts
        Refused (A2M inserts kept as columns need every row at once).

    Raises
    ------
    OptionError
        Cluster weights, ``keep_inserts``, a format other than FASTA/A2M, an unknown ``--reference``.
    InputError
        As the in-memory reader, with the line numbers of the whole file.
    """
    if format is not None and format not in ("fasta", "a2m", "stockholm", "phylip", "nexus"):
        raise OptionError(f"unknown format {format!r}")
    if options.weights == "cluster" or keep_inserts:
        _refuse(options, keep_inserts, format or "fasta")
    if chunk_rows is not None and chunk_rows < 1:
        raise OptionError(f"--chunk-rows must be at least 1, got {chunk_rows}")
    opened = _Source(source)
    try:
        stream, close = opened.open()
        try:
            head = _read_checked(stream, 1 << 20, opened.name)
        finally:
            close()
        if head.startswith(_BOM):
            head = head[len(_BOM):]
        fmt = format or _format_from_name(opened.name) or sniff_format(head, opened.name)
        _refuse(options, keep_inserts, fmt)
        reader = _ChunkedAlignment(opened, fmt, chunk_rows or _chunk_rows_for(opened), options.reference)
        top = TopRows()
        passes = iter((True, False))
        counts, n_eff = count_blocks(lambda: _reblock(reader.matrices(next(passes))), None, options.weights, top)
    finally:
        opened.close()
    n_rows = len(reader.ids)
    if reader.stops:
        warnings.warn(f"{opened.name}: {reader.stops} internal stop(s) '*' counted as unknown residues",
                      InputWarning, stacklevel=2)
    ids = _unique_ids(reader.ids, opened.name)
    reader.ids = []
    index, kept = top.index, top.codes
    if options.reference is not None:
        found = [(row, codes) for row, codes in reader.reference_rows if ids[row] == options.reference]
        if not found:
            raise OptionError(f"--reference {options.reference!r} is not an id of {opened.name}")
        index = np.append(index, found[0][0])
        kept = np.concatenate((kept, found[0][1][None, :]))
    rows = rows_alignment(ids, index, kept, opened.name, fmt)
    return ColumnSummary(counts, n_eff, n_rows, int(reader.width or 0), rows, reader.notes())


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
    user_sites = _user_sites(options)
    return table_from_summary(summarise_file(source, options, chunk_rows, format), options, user_sites)
