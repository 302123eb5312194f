"""Aligned FASTA and A2M read chunk by chunk, for alignments larger than memory.

A chunk holds whole records and is parsed by the same byte path as a file in memory
(:func:`globcons.io.fasta.parse_fasta_rows`); :func:`reblock` re-cuts the chunks' rows into the blocks of
:data:`~globcons.core.counts.CHUNK_ROWS` rows that the in-memory path uses, so both paths sum the same
numbers in the same order. The first pass also checks the file (as the in-memory reader does) and
gathers the ids and the rows a caller asks to keep; :class:`SpooledBlocks` keeps its blocks' codes in a
temporary file, so the second pass reads them back instead of parsing the file again.
"""

from __future__ import annotations

import re
import tempfile
from collections.abc import Callable, Iterator
from typing import BinaryIO

import numpy as np

from globcons.core.counts import CHUNK_ROWS
from globcons.errors import InputError
from globcons.io.checks import PROTEIN_SAMPLE, check_protein, stops_to_unknown
from globcons.io.fasta import parse_fasta_rows
from globcons.io.opening import BOM, InputSource, is_blank, read_checked
from globcons.io.sniff import text_problem

__all__ = ["STREAM_FORMATS", "CHUNK_BYTES", "record_chunks", "ChunkedFasta", "reblock", "chunk_rows_for",
           "SpooledBlocks"]

#: Formats that can be read in chunks.
STREAM_FORMATS = ("fasta", "a2m")

#: Target bytes per chunk when the number of rows per chunk is not given.
CHUNK_BYTES = 32 << 20
#: Bytes read at a time while looking for the end of a chunk.
_READ_BYTES = 1 << 20


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
    read_size, eof = _READ_BYTES, False
    while True:
        starts = _record_starts(pending)
        while starts.size <= chunk_rows and not eof:
            more = read_checked(stream, read_size, name)
            if not more:
                eof = True
                break
            pending += more
            starts = _record_starts(pending)
            # Read about what the missing records need, judged by the bytes per record so far.
            per_record = len(pending) / max(starts.size, 1)
            read_size = max(_READ_BYTES, int(per_record * (chunk_rows + 1 - starts.size)))
        if starts.size <= chunk_rows:
            if pending:
                yield bytes(pending)
            return
        cut = int(starts[chunk_rows])
        yield bytes(pending[:cut])
        del pending[:cut]


class ChunkedFasta:
    """A FASTA or A2M file read chunk by chunk; the first pass also checks it and gathers the ids.

    Parameters
    ----------
    source
        A rereadable input (it is read once per pass).
    fmt
        ``"fasta"`` or ``"a2m"``.
    chunk_rows
        Records per chunk.
    reference
        Id of a row to keep (with its codes, in :attr:`reference_rows`) during the first pass; a row
        whose id would become it once duplicates are renamed (``id_2``) is kept too.
    """

    def __init__(self, source: InputSource, fmt: str, chunk_rows: int, reference: str | None) -> None:
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
        lines_before = 0
        with self.source.open() as stream:
            for index, chunk in enumerate(record_chunks(stream, self.chunk_rows, self.name)):
                if index == 0:
                    chunk = self._first_checks(chunk)
                try:
                    ids, _, matrix, notes = parse_fasta_rows(chunk, self.name, self.fmt == "a2m", False,
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
                stops = stops_to_unknown(matrix)
                if first_pass:
                    self._gather(ids, matrix, stops, int(notes.get("inserts_dropped", 0)))
                yield matrix
        if first_pass and not self._checked:
            self._check_protein()

    def _first_checks(self, chunk: bytes) -> bytes:
        if chunk.startswith(BOM):
            chunk = chunk[len(BOM):]
        if is_blank(chunk):
            raise InputError("file is empty", source=self.name)
        problem = text_problem(chunk)
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
            self._sample.append(matrix.reshape(-1)[:PROTEIN_SAMPLE - self._sampled].copy())
            self._sampled += self._sample[-1].size
            if self._sampled >= PROTEIN_SAMPLE:
                self._check_protein()

    def _check_protein(self) -> None:
        self._checked = True
        sample = np.concatenate(self._sample) if self._sample else np.zeros(0, dtype=np.uint8)
        self._sample = []
        check_protein(sample, self.name)

    def notes(self) -> dict[str, object]:
        """Reader notes, as the in-memory reader records them."""
        notes: dict[str, object] = {"inserts_dropped": self.inserts_dropped} if self.fmt == "a2m" else {}
        if self.stops:
            notes["internal_stops"] = self.stops
        return notes


def reblock(matrices: Iterator[np.ndarray], rows: int = CHUNK_ROWS) -> Iterator[np.ndarray]:
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


class SpooledBlocks:
    """Blocks of rows for two passes: the first from ``first_pass()``, written to a temporary file as they
    pass; the second read back from that file (one uint8 byte per cell), in the same blocks.

    Blocks of the second pass share one buffer: each is valid until the next is asked for. The temporary
    file (``tempfile.TemporaryFile``, in ``TMPDIR``) is gone when :meth:`close` is called or the object is
    collected.

    Parameters
    ----------
    first_pass
        Called once: yields the blocks of the first pass.
    """

    def __init__(self, first_pass: Callable[[], Iterator[np.ndarray]]) -> None:
        self._first_pass = first_pass
        self._spool = tempfile.TemporaryFile(prefix="globcons-codes-")
        self._rows: list[int] = []
        self._width = 0
        self._passes = 0

    def __call__(self) -> Iterator[np.ndarray]:
        self._passes += 1
        if self._passes == 1:
            return self._write()
        if self._passes == 2:
            return self._read()
        raise RuntimeError("spooled blocks are read in two passes only")

    def _write(self) -> Iterator[np.ndarray]:
        for block in self._first_pass():
            self._width = block.shape[1]
            self._rows.append(block.shape[0])
            self._spool.write(np.ascontiguousarray(block, dtype=np.uint8).data)
            yield block
        self._spool.flush()

    def _read(self) -> Iterator[np.ndarray]:
        self._spool.seek(0)
        largest = max(self._rows, default=0)
        buffer = np.empty((largest, self._width), dtype=np.uint8)
        for rows in self._rows:
            block = buffer[:rows]
            if self._spool.readinto(memoryview(block).cast("B")) != block.nbytes:
                raise OSError("the temporary file of the first pass was cut short")
            yield block

    def close(self) -> None:
        self._spool.close()


def chunk_rows_for(source: InputSource) -> int:
    """Rows per chunk of about :data:`CHUNK_BYTES`, judged from the first megabyte."""
    with source.open() as stream:
        head = bytearray(read_checked(stream, _READ_BYTES, source.name))
    records = _record_starts(head).size
    return max(1, int(CHUNK_BYTES * max(records, 1) / max(len(head), 1)))

