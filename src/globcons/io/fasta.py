"""Aligned FASTA and A2M: the bulk byte path (numpy over the whole buffer, no per-record Python work).

Header and sequence bytes are told apart with masks over each slice of the buffer (a cumulative sum of +1
and -1 marks at header starts and ends); record lengths come from the newline and CR positions, so no
per-byte offset array is ever built; line numbers for errors are computed only on the error path. The
buffer is cut into slices of :data:`SLICE_BYTES` that end at line ends, so the temporary memory is a few
times a slice whatever the size of the file, and codes may be written over the file's own bytes.

Clean files take a faster road (:func:`clean_fasta_rows`): when every record is one header line and one
sequence line of the same width, with no CR, blank, stop or stray character, the sequence lines are
gathered by their offsets and translated in steps of reused index arrays; anything else goes the careful
way above, which gives the messages.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE, GAP, SPACE, STOP
from globcons.core.counts import step_rows
from globcons.errors import InputError
from globcons.io.checks import bad_character, finish_alignment, line_number

__all__ = ["SLICE_BYTES", "parse_fasta_rows", "parse_fasta", "clean_fasta_rows", "lone_returns_to_newlines",
           "split_header"]

#: Bytes per slice of the FASTA byte path. Slices end at line ends, and no whole-file mask is built, so
#: the temporary memory is a few times this whatever the size of the file.
SLICE_BYTES = 1 << 23


class _FastaLayout(NamedTuple):
    """Where the lines and records of a FASTA buffer are (position arrays, one entry per line or record)."""

    data: bytes
    buf: np.ndarray  # the file's bytes, uint8 (a view of ``data``)
    newlines: np.ndarray  # byte offsets of '\n'
    header_offsets: np.ndarray  # byte offset of each record's '>'
    header_ends: np.ndarray  # byte offset of the '\n' ending each header line (or the size)
    slices: list[tuple[int, int]]  # (start, stop) of each slice, at line boundaries

    def line_of(self, offset: int) -> int:
        return line_number(self.newlines, offset)

    def record_of(self, offsets: np.ndarray) -> np.ndarray:
        """Record index of each byte offset (offsets after the first header)."""
        return np.searchsorted(self.header_offsets, offsets, side="right") - 1


def _positions(buf: np.ndarray, value: int, slice_bytes: int = SLICE_BYTES) -> np.ndarray:
    """Offsets of every byte equal to ``value``, found slice by slice (no whole-file mask)."""
    found = [np.flatnonzero(buf[start:start + slice_bytes] == value) + start
             for start in range(0, buf.size, slice_bytes)]
    return np.concatenate(found) if found else np.empty(0, dtype=np.int64)


def lone_returns_to_newlines(data: bytes | bytearray) -> bytes | bytearray:
    """``data`` with every CR that does not start a CRLF turned into LF (old Mac line ends), so that every
    reader sees the same lines whatever the line ends; in place when ``data`` is a ``bytearray``."""
    if b"\r" not in data:
        return data
    buf = np.frombuffer(data, dtype=np.uint8)
    returns = _positions(buf, 13)
    following = np.minimum(returns + 1, buf.size - 1)
    lone = returns[(returns + 1 >= buf.size) | (buf[following] != 10)]
    if lone.size == 0:
        return data
    out = data if isinstance(data, bytearray) else bytearray(data)
    np.frombuffer(out, dtype=np.uint8)[lone] = 10
    return out


def _slice_bounds(newlines: np.ndarray, size: int, slice_bytes: int) -> list[tuple[int, int]]:
    """Slices of about ``slice_bytes`` that end just after a newline, so that no line straddles two."""
    if newlines.size == 0 or size <= slice_bytes:
        return [(0, size)]
    index = np.searchsorted(newlines, np.arange(slice_bytes, size, slice_bytes))
    ends = np.where(index < newlines.size, newlines[np.minimum(index, newlines.size - 1)] + 1, size)
    ends = np.unique(np.append(ends, size))
    starts = np.concatenate(([0], ends[:-1]))
    return list(zip(starts.tolist(), ends.tolist(), strict=True))


def _layout(data: bytes, name: str, slice_bytes: int = SLICE_BYTES) -> _FastaLayout:
    buf = np.frombuffer(data, dtype=np.uint8)
    size = buf.size
    newlines = _positions(buf, 10, slice_bytes)
    line_starts = np.concatenate(([0], newlines + 1))
    line_ends = np.concatenate((newlines, [size]))
    valid = line_starts < size
    line_starts, line_ends = line_starts[valid], line_ends[valid]
    is_header = buf[line_starts] == ord(">")
    header_starts, header_ends = line_starts[is_header], line_ends[is_header]
    if header_starts.size == 0:
        raise InputError("no FASTA header line ('>') found", source=name, line=1)
    first = int(header_starts[0])
    if first:
        head = buf[:first]
        stray = np.flatnonzero(~np.isin(head, (9, 10, 13, 32)))
        if stray.size:
            raise InputError("sequence data before the first '>' header", source=name,
                             line=line_number(newlines, int(stray[0])))
    return _FastaLayout(data, buf, newlines, header_starts, header_ends, _slice_bounds(newlines, size, slice_bytes))


def _header_mask(layout: _FastaLayout, start: int, stop: int) -> np.ndarray:
    """Bool per byte of the slice ``[start, stop)``: True from a header's '>' up to (not including) its newline."""
    lo, hi = np.searchsorted(layout.header_offsets, (start, stop))
    local_starts = layout.header_offsets[lo:hi] - start
    local_ends = layout.header_ends[lo:hi] - start  # a slice ends after a newline: headers never straddle
    marks = np.zeros(stop - start + 1, dtype=np.int8)
    marks[local_starts] = 1
    marks[local_ends] = -1  # +1 at '>', -1 at its newline: the running sum is 1 inside headers
    return np.cumsum(marks[:-1], dtype=np.int8).view(bool)


def _headers(layout: _FastaLayout) -> list[bytes]:
    """Header text without '>' and CR, in one bulk split on the newlines kept as separators."""
    buf, pieces = layout.buf, []
    for start, stop in layout.slices:
        block = buf[start:stop]
        keep = _header_mask(layout, start, stop)
        lo, hi = np.searchsorted(layout.header_offsets, (start, stop))
        keep[layout.header_offsets[lo:hi] - start] = False
        keep &= block != 13
        ends = layout.header_ends[lo:hi] - start
        keep[ends[ends < block.size]] = True
        pieces.append(block[keep].tobytes())
    joined = b"".join(pieces)
    if layout.header_ends[-1] >= buf.size:
        joined += b"\n"
    return joined.split(b"\n")[:-1]


def _parse_headers(layout: _FastaLayout, headers: list[bytes], name: str) -> tuple[list[str], list[str]]:
    ids, descriptions = [], []
    for index, raw in enumerate(headers):
        text = raw.decode("utf-8", errors="replace").strip()
        if not text:
            raise InputError("header line has no sequence id", source=name,
                             line=layout.line_of(int(layout.header_offsets[index])))
        identifier, description = split_header(text)
        ids.append(identifier)
        descriptions.append(description)
    return ids, descriptions


def split_header(text: str) -> tuple[str, str]:
    """A header line's id (its first word) and description (the rest, without surrounding blanks)."""
    fields = text.split(None, 1)
    return fields[0], fields[1].strip() if len(fields) > 1 else ""


def _sequence_lengths(layout: _FastaLayout) -> np.ndarray:
    """Sequence bytes per record: bytes after its header line and before the next '>', less the newlines and
    CRs among them (counted on the short position arrays, not byte by byte)."""
    size = layout.buf.size
    region_start = np.minimum(layout.header_ends + 1, size)
    region_end = np.concatenate((layout.header_offsets[1:], [size]))
    returns = _positions(layout.buf, 13)

    def inside(positions: np.ndarray) -> np.ndarray:
        return np.searchsorted(positions, region_end) - np.searchsorted(positions, region_start)

    return ((region_end - region_start) - inside(layout.newlines) - inside(returns)).astype(np.int64)


def _bad_at(layout: _FastaLayout, offset: int, name: str, what: str) -> InputError:
    return bad_character(layout.data, layout.newlines, offset, name, what)


def _fasta_codes(layout: _FastaLayout, name: str, a2m: bool, keep_inserts: bool, consume: bool = False
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray | None, int]:
    """Encode the sequence bytes slice by slice into one preallocated array.

    With ``consume`` (the buffer is the caller's to overwrite), the codes are written over the file's own
    bytes: codes never outrun the bytes they come from (each slice yields at most its own length, written
    after it is read), so the code matrix costs no memory beyond the file.

    Returns the codes (records one after the other), sequence bytes per record, the insert flag of each
    code (A2M with kept inserts, else None) and the number of lower-case inserts dropped.
    """
    buf, first = layout.buf, int(layout.header_offsets[0])
    lengths = _sequence_lengths(layout)
    removed = np.zeros(lengths.size, dtype=np.int64)
    writable = consume and buf.flags.writeable
    out = buf if writable else np.empty(int(lengths.sum()), dtype=np.uint8)
    insert_flags: list[np.ndarray] = []
    position, dropped = 0, 0

    def count_removed(mask: np.ndarray, start: int) -> None:
        records = layout.record_of(np.flatnonzero(mask) + start)
        removed[:] += np.bincount(records, minlength=removed.size)

    for start, stop in layout.slices:
        block = buf[start:stop]
        sequence = ~_header_mask(layout, start, stop)
        sequence &= block != 10
        sequence &= block != 13
        if start < first:
            sequence[:first - start] = False
        # Blanks may end a line, never sit inside one; the allowed ones leave the sequence.
        blank = sequence & ((block == 32) | (block == 9))
        if blank.any():
            offsets = np.flatnonzero(sequence)
            is_blank = blank[offsets]
            line = np.searchsorted(layout.newlines, offsets + start, side="right")
            inner = is_blank[:-1] & ~is_blank[1:] & (line[:-1] == line[1:])
            if inner.any():
                raise _bad_at(layout, start + int(offsets[:-1][inner][0]), name,
                              "(a blank) inside a sequence line; alignments use '-' for gaps")
            count_removed(blank, start)
            sequence &= ~blank
        if a2m:
            lower = (block >= ord("a")) & (block <= ord("z"))
            insert = sequence & (lower | (block == ord(".")))
            if keep_inserts:
                insert_flags.append(insert[sequence])
            else:
                dropped += int((insert & lower).sum())
                _check_codes(block, insert, start, layout, name)  # bad letters count even where dropped
                count_removed(insert, start)
                sequence &= ~insert
        codes = _check_codes(block, sequence, start, layout, name)
        out[position:position + codes.size] = codes
        position += codes.size
    lengths -= removed
    codes = out[:position]
    if position < 0.75 * out.size:  # many inserts dropped: do not keep the unused tail alive
        codes = codes.copy()
    flags = np.concatenate(insert_flags + [np.zeros(0, dtype=bool)]) if a2m and keep_inserts else None
    return codes, lengths, flags, dropped


def _check_codes(block: np.ndarray, mask: np.ndarray, start: int, layout: _FastaLayout, name: str) -> np.ndarray:
    codes = BYTE_TO_CODE[block[mask]]
    invalid = codes >= SPACE  # INVALID or a blank that survived (inside a line)
    if invalid.any():
        offset = start + int(np.flatnonzero(mask)[int(np.argmax(invalid))])
        raise _bad_at(layout, offset, name, "is not an amino-acid letter or a gap ('-', '.', '~')")
    return codes


def parse_fasta_rows(data: bytes | bytearray, name: str, a2m: bool, keep_inserts: bool, width: int | None = None,
                      slice_bytes: int = SLICE_BYTES, consume: bool = False
                      ) -> tuple[list[str], list[str], np.ndarray, dict[str, object]]:
    """Ids, descriptions, code matrix (STOP codes still in it) and reader notes of FASTA or A2M bytes.

    ``width`` forces the row length (a later chunk of a streamed file must match the first); ``consume``
    lets the codes overwrite a writable ``data`` (see :func:`_fasta_codes`).
    """
    if not a2m:
        clean = clean_fasta_rows(data, name, width, consume)
        if clean is not None:
            return clean
    layout = _layout(data, name, slice_bytes)
    ids, descriptions = _parse_headers(layout, _headers(layout), name)
    codes, lengths, flags, dropped = _fasta_codes(layout, name, a2m, keep_inserts, consume)
    if keep_inserts and a2m:
        return ids, descriptions, _a2m_padded(codes, flags, lengths, ids, layout, name), {"inserts_kept": True}
    notes: dict[str, object] = {"inserts_dropped": dropped} if a2m else {}
    codes, lengths = _drop_final_stops(codes, lengths)
    return ids, descriptions, _to_matrix(codes, lengths, ids, layout, name, width), notes


def clean_fasta_rows(data: bytes | bytearray, name: str, width: int | None = None, consume: bool = False
                     ) -> tuple[list[str], list[str], np.ndarray, dict[str, object]] | None:
    """Ids, descriptions, code matrix and notes of a *clean* aligned FASTA buffer, or None if it is not clean.

    Clean: every record is one header line (``>`` and an id at once) and one sequence line, all sequence
    lines of one width (``width`` if given), LF line ends with one at the end, no blank or stop ending a
    line. Such a buffer gives exactly what the careful path gives; any other returns None before anything
    is written, so the careful path reads it. A bad character inside a clean layout is the same error the
    careful path raises (the first one in the file).
    """
    buf = np.frombuffer(data, dtype=np.uint8)
    if buf.size < 4 or buf[-1] != 10 or data.find(b"\r") >= 0:
        return None
    newlines = _positions(buf, 10)  # slice by slice: no mask the size of the file
    if newlines.size % 2:
        return None
    line_starts = np.concatenate(([0], newlines[:-1] + 1))
    header_starts, header_ends = line_starts[0::2], newlines[0::2]
    sequence_starts, sequence_ends = line_starts[1::2], newlines[1::2]
    row_width = int(sequence_ends[0] - sequence_starts[0])
    if (row_width == 0 or (width is not None and row_width != width)
            or not (sequence_ends - sequence_starts == row_width).all()
            or not (buf[header_starts] == ord(">")).all() or (buf[sequence_starts] == ord(">")).any()
            or np.isin(buf[header_starts + 1], _BLANK_OR_NEWLINE).any()
            or np.isin(buf[sequence_ends - 1], _FINAL_STOP_OR_BLANK).any()):
        return None
    ids, descriptions = _ids_and_descriptions(data, header_starts, header_ends)
    n_rows = sequence_starts.size
    out = buf if consume and buf.flags.writeable else np.empty(n_rows * row_width, dtype=np.uint8)
    step = step_rows(row_width)
    for first in range(0, n_rows, step):
        # Row k's codes go to [k W, (k + 1) W), before its own bytes: never over bytes still to be read.
        chunk = b"".join([data[start:start + row_width] for start in sequence_starts[first:first + step].tolist()])
        codes = BYTE_TO_CODE[np.frombuffer(chunk, dtype=np.uint8)]
        if codes.max() >= SPACE:
            _raise_first_bad(data, newlines, codes, sequence_starts[first:first + step], row_width, name)
        out[first * row_width:first * row_width + codes.size] = codes
    return ids, descriptions, out[:n_rows * row_width].reshape(n_rows, row_width), {}


def _ids_and_descriptions(data: bytes | bytearray, starts: np.ndarray, ends: np.ndarray) -> tuple[list[str], list[str]]:
    """Each header's id (its first word) and description (the rest, as the careful path splits them), read from
    one decoded text; a description equal to the previous one is the same string object (less memory on large
    files, whose descriptions often repeat)."""
    ids: list[str] = []
    descriptions: list[str] = []
    previous = ""
    for first in range(0, starts.size, _HEADER_STEP):  # in steps, so the temporary objects stay few
        pairs = zip(starts[first:first + _HEADER_STEP].tolist(), ends[first:first + _HEADER_STEP].tolist(),
                    strict=True)
        heads = b"\n".join([data[start + 1:stop] for start, stop in pairs])
        for line in heads.decode("utf-8", errors="replace").split("\n"):
            identifier, rest = split_header(line)
            if rest == previous:
                rest = previous
            ids.append(identifier)
            descriptions.append(rest)
            previous = rest
    return ids, descriptions


#: Headers read at a time by the fast path.
_HEADER_STEP = 1 << 16


_BLANK_OR_NEWLINE = np.array([9, 10, 32], dtype=np.uint8)
_FINAL_STOP_OR_BLANK = np.array([9, 32, ord("*")], dtype=np.uint8)


def _raise_first_bad(data: bytes | bytearray, newlines: np.ndarray, codes: np.ndarray, starts: np.ndarray,
                     row_width: int, name: str) -> None:
    """The careful path's error for the first blank or bad letter among these rows' codes."""
    where = int(np.argmax(codes >= SPACE))
    offset = int(starts[where // row_width]) + where % row_width
    what = ("(a blank) inside a sequence line; alignments use '-' for gaps" if codes[where] == SPACE
            else "is not an amino-acid letter or a gap ('-', '.', '~')")
    raise bad_character(data, newlines, offset, name, what)


def parse_fasta(data: bytes | bytearray, name: str, a2m: bool, keep_inserts: bool, consume: bool = False) -> Alignment:
    """An :class:`~globcons.core.alignment.Alignment` from aligned FASTA or A2M bytes (see :func:`parse_fasta_rows`)."""
    ids, descriptions, matrix, notes = parse_fasta_rows(data, name, a2m, keep_inserts, consume=consume)
    return finish_alignment(ids, descriptions, matrix, name, "a2m" if a2m else "fasta", notes=notes)


def _drop_final_stops(codes: np.ndarray, lengths: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Drop one '*' ending a record (a translated stop codon)."""
    ends = np.cumsum(lengths) - 1
    has = lengths > 0
    final_stop = np.zeros(lengths.size, dtype=bool)
    final_stop[has] = codes[ends[has]] == STOP
    if not final_stop.any():
        return codes, lengths
    return np.delete(codes, ends[final_stop]), lengths - final_stop


def _to_matrix(codes: np.ndarray, lengths: np.ndarray, ids: list[str], parts: _FastaLayout,
               name: str, width: int | None = None) -> np.ndarray:
    n_records = len(ids)
    if width is None and (lengths == 0).all():
        raise InputError("no sequence data under the headers", source=name)
    if width is None:
        width = int(np.bincount(lengths).argmax()) or int(lengths.max())
    odd = np.flatnonzero(lengths != width)
    if odd.size:
        row = int(odd[0])
        others = "the others" if odd.size == 1 else f"most others ({n_records - odd.size} of {n_records})"
        raise InputError(
            f"row {ids[row]!r} has {int(lengths[row])} columns, {others} {width}: rows of an alignment must be "
            "equal in length (for unaligned sequences, use `globcons align`)",
            source=name, line=parts.line_of(int(parts.header_offsets[row])),
        )
    return codes.reshape(n_records, width)


def _a2m_padded(codes: np.ndarray, is_insert: np.ndarray, lengths: np.ndarray, ids: list[str],
                parts: _FastaLayout, name: str) -> np.ndarray:
    """A2M rows with their insert states as columns; unpadded insert runs are padded to the longest.

    Not a hot path (``--keep-inserts`` is an explicit choice), so rows are placed one at a time.
    """
    codes, trimmed = _drop_final_stops(codes, lengths)
    if trimmed.size and (trimmed == trimmed[0]).all():  # inserts padded with '.' already: rows line up
        return _to_matrix(codes, trimmed, ids, parts, name)
    if trimmed.size != lengths.size or (trimmed != lengths).any():
        keep = np.ones(lengths.sum(), dtype=bool)
        ends = np.cumsum(lengths) - 1
        keep[ends[trimmed != lengths]] = False
        is_insert = is_insert[keep]
    bounds = np.concatenate(([0], np.cumsum(trimmed)))
    rows = []
    for index in range(len(ids)):
        row_codes = codes[bounds[index]:bounds[index + 1]]
        row_insert = is_insert[bounds[index]:bounds[index + 1]]
        real = ~row_insert | (row_codes != GAP)  # '.' padding carries nothing
        rows.append((row_codes[real], row_insert[real]))
    matches = [int((~insert).sum()) for _, insert in rows]
    odd = [i for i, m in enumerate(matches) if m != matches[0]]
    if odd:
        row = odd[0]
        raise InputError(f"row {ids[row]!r} has {matches[row]} match states, the first row {matches[0]}: A2M rows "
                         "must agree in match (upper-case and '-') columns",
                         source=name, line=parts.line_of(int(parts.header_offsets[row])))
    slots = matches[0] + 1  # slot k holds the inserts after k match states
    widths = np.zeros(slots, dtype=np.int64)
    placed = []
    for _, row_insert in rows:
        slot = np.cumsum(~row_insert)
        widths = np.maximum(widths, np.bincount(slot[row_insert], minlength=slots))
        placed.append(slot)
    slot_start = np.concatenate(([0], np.cumsum(widths[:-1] + 1)))  # column of slot k's first insert
    matrix = np.full((len(ids), int(widths.sum()) + slots - 1), GAP, dtype=np.uint8)
    for index, ((row_codes, row_insert), slot) in enumerate(zip(rows, placed, strict=True)):
        column = slot_start[slot] - 1  # match state k sits just before slot k's inserts
        if row_insert.any():
            runs = np.flatnonzero(row_insert)
            first = np.r_[True, slot[runs][1:] != slot[runs][:-1]]
            run_start = np.maximum.accumulate(np.where(first, np.arange(runs.size), 0))
            column[runs] = slot_start[slot[runs]] + np.arange(runs.size) - run_start
        matrix[index, column] = row_codes
    return matrix

