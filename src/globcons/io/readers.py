"""Reading alignments and sequences: format sniffing, gzip, stdin, and the checks a user deserves.

Aligned FASTA and A2M go through a bulk byte path (numpy over the whole file, no per-record Python
work); Stockholm has its own line parser (it carries ``#=GC`` column annotations); PHYLIP and NEXUS
are read with Biopython's ``Bio.AlignIO``. Every path ends in :func:`_finish`, which applies the same
rules to all formats (stops, unknowns, nucleotides, duplicate ids).
"""

from __future__ import annotations

import contextlib
import gzip
import io
import os
import re
import sys
import warnings
import zlib
from pathlib import Path
from typing import BinaryIO, Iterator, NamedTuple, Union

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE, GAP, INVALID, SPACE, STANDARD, STOP, UNKNOWN
from globcons.errors import InputError, InputWarning, OptionError

__all__ = [
    "ALIGNMENT_OUTPUTS",
    "alignment_format_for",
    "format_alignment",
    "FORMATS",
    "read_alignment",
    "read_input_bytes",
    "sniff_format",
    "parse_alignment",
    "SequenceRecord",
    "read_sequences",
    "RawRecord",
    "stream_records",
]

PathLike = Union[str, os.PathLike]

#: Formats :func:`read_alignment` accepts (all open interchange formats).
FORMATS = ("fasta", "a2m", "stockholm", "phylip", "nexus")

_GZIP_MAGIC = b"\x1f\x8b"
_BOM = b"\xef\xbb\xbf"
_NUCLEOTIDE_CODES = np.array([STANDARD.index(c) for c in "ACGTN"] + [20], dtype=np.intp)  # 20 = U


# --------------------------------------------------------------------------------------------------
# bytes in


@contextlib.contextmanager
def _opening(name: str) -> Iterator[None]:
    """Turn the operating system's refusals to open ``name`` into one-line input errors."""
    try:
        yield
    except FileNotFoundError:
        raise InputError("no such file", source=name) from None
    except IsADirectoryError:
        raise InputError("is a folder, not a file", source=name) from None
    except PermissionError:
        raise InputError("cannot be read (permission denied)", source=name) from None
    except OSError as exc:
        raise InputError(f"cannot be read ({exc.strerror or exc})", source=name) from None


def read_input_bytes(source: PathLike | BinaryIO) -> tuple[bytes, str]:
    """Read a whole input into memory, un-gzipped and without a UTF-8 byte-order mark.

    Parameters
    ----------
    source
        A path, ``"-"`` for standard input, or an open binary file.

    Returns
    -------
    data, name
        The bytes (a ``bytearray`` owned by the caller when read from a plain file), and the name to use
        in messages.

    Raises
    ------
    InputError
        Missing file, a folder, unreadable file, truncated or corrupt gzip.
    """
    if hasattr(source, "read"):
        name = getattr(source, "name", "<stream>")
        raw = source.read()  # type: ignore[union-attr]
        name = str(name)
    elif str(source) == "-":
        name = "<stdin>"
        raw = sys.stdin.buffer.read()
    else:
        name = str(source)
        with _opening(name):
            raw = _read_owned(Path(source))
    if isinstance(raw, str):
        raw = raw.encode("utf-8")
    if raw[:2] == _GZIP_MAGIC:
        try:
            raw = gzip.decompress(raw)
        except (EOFError, OSError, zlib.error) as exc:
            detail = "truncated" if isinstance(exc, EOFError) else "corrupt"
            raise InputError(f"gzip data is {detail}; the file may be an incomplete download", source=name) from None
    if raw.startswith(_BOM):
        if isinstance(raw, bytearray):
            del raw[:len(_BOM)]  # in place: no second copy of a large file
        else:
            raw = raw[len(_BOM):]
    return raw, name


def _read_owned(path: Path) -> bytes | bytearray:
    """A file's bytes in a buffer of its own (a ``bytearray``), so a reader may encode it in place.

    Gzip data is returned as read (it is decompressed into a new buffer anyway).
    """
    with open(path, "rb") as stream:
        size = os.fstat(stream.fileno()).st_size
        buffer = bytearray(size)
        filled = stream.readinto(buffer)
        rest = stream.read()  # a file that grew while being read (or a size the system does not report)
    if filled < size:
        del buffer[filled:]
    if rest:
        buffer += rest
    return buffer


def _text_problem(data: bytes) -> str | None:
    """Why ``data`` cannot be a text alignment, or None."""
    head = data[:4096]
    if b"\x00" in head:
        return "binary data, not a text alignment"
    stripped = head.lstrip().lower()
    if stripped.startswith((b"<!doctype html", b"<html", b"<?xml", b"<head", b"<body")):
        return "looks like an HTML or XML page, not an alignment (a failed download?)"
    return None


def sniff_format(data: bytes, name: str = "<input>") -> str:
    """Guess the alignment format from the content.

    Returns one of ``"fasta"``, ``"stockholm"``, ``"phylip"``, ``"nexus"`` (A2M looks like FASTA; it is
    chosen by ``format="a2m"`` or a ``.a2m`` extension).

    Raises
    ------
    InputError
        Empty, binary or HTML input, or no recognisable format.
    """
    if _is_blank(data):
        raise InputError("file is empty", source=name)
    problem = _text_problem(data)
    if problem:
        raise InputError(problem, source=name)
    # Only the first lines decide; splitting the whole file would copy it line by line.
    head = data[:1 << 20]
    lines = head.splitlines()[:50] if not head.isspace() else data.splitlines()[:50]
    for number, line in enumerate(lines, start=1):
        text = line.strip()
        if not text:
            continue
        if text.startswith(b">"):
            return "fasta"
        if text.upper().startswith(b"# STOCKHOLM"):
            return "stockholm"
        if text.upper().startswith(b"#NEXUS"):
            return "nexus"
        if re.fullmatch(rb"\d+\s+\d+(\s+.*)?", text):
            return "phylip"
        shown = text[:40].decode("utf-8", "replace")
        raise InputError(
            f"not a recognised alignment format (starts with {shown!r}); expected FASTA ('>'), "
            "A2M, Stockholm ('# STOCKHOLM 1.0'), PHYLIP or NEXUS",
            source=name, line=number,
        )
    raise InputError("file holds only blank lines", source=name)


def _format_from_name(name: str) -> str | None:
    lowered = name.lower()
    if lowered.endswith(".gz"):
        lowered = lowered[:-3]
    if lowered.endswith(".a2m"):
        return "a2m"
    return None


# --------------------------------------------------------------------------------------------------
# the common finish


def _unique_ids(ids: list[str], name: str) -> list[str]:
    seen: dict[str, int] = {}
    taken = set(ids)
    result = []
    renamed: list[tuple[str, str]] = []
    for identifier in ids:
        if identifier not in seen:
            seen[identifier] = 1
            result.append(identifier)
            continue
        count = seen[identifier]
        while True:
            count += 1
            candidate = f"{identifier}_{count}"
            if candidate not in taken:
                break
        seen[identifier] = count
        taken.add(candidate)
        result.append(candidate)
        renamed.append((identifier, candidate))
    if renamed:
        first_old, first_new = renamed[0]
        warnings.warn(
            f"{name}: {len(renamed)} duplicate id(s) made unique (first: {first_old!r} -> {first_new!r})",
            InputWarning, stacklevel=3,
        )
    return result


def _check_protein(codes: np.ndarray, name: str) -> None:
    # The first few million codes decide it: a nucleotide file is nucleotides throughout.
    counts = np.bincount(codes.reshape(-1)[:4_000_000], minlength=256)
    letters = int(counts[: UNKNOWN + 1].sum())
    if letters >= 20 and counts[_NUCLEOTIDE_CODES].sum() >= 0.95 * letters:
        raise InputError(
            "looks like nucleotide sequences (almost only A, C, G, T/U, N); globcons reads protein "
            "alignments: translate first",
            source=name,
        )


def _stops_to_unknown(codes: np.ndarray, chunk_rows: int = 16384) -> int:
    """Turn internal stops into unknowns in place, in row blocks (no whole-matrix mask); return their count."""
    count = 0
    for start in range(0, codes.shape[0], chunk_rows):
        block = codes[start:start + chunk_rows]
        stops = block == STOP
        if stops.any():
            count += int(stops.sum())
            block[stops] = UNKNOWN
    return count


def _is_blank(data: bytes) -> bool:
    """True if ``data`` holds only whitespace (without the whole-file copy ``data.strip()`` makes)."""
    return not data or data.isspace()


def _finish(ids: list[str], descriptions: list[str], codes: np.ndarray, name: str, fmt: str,
            annotations: dict[str, str] | None = None, notes: dict | None = None) -> Alignment:
    """Rules shared by every format; ``codes`` must hold only alphabet codes and STOP."""
    if codes.shape[0] == 0:
        raise InputError("no sequences found", source=name)
    if codes.shape[1] == 0:
        raise InputError("the sequences are empty (no columns)", source=name)
    notes = dict(notes or {})
    count = _stops_to_unknown(codes)
    if count:
        notes["internal_stops"] = count
        warnings.warn(f"{name}: {count} internal stop(s) '*' counted as unknown residues", InputWarning, stacklevel=3)
    _check_protein(codes, name)
    ids = _unique_ids(ids, name)
    codes.flags.writeable = False
    return Alignment(ids=tuple(ids), codes=codes, descriptions=tuple(descriptions),
                     column_annotations=annotations or {}, source=name, format=fmt, notes=notes)


def _line_number(newlines: np.ndarray, offset: int) -> int:
    return int(np.searchsorted(newlines, offset, side="right")) + 1


def _bad_character(data: bytes, newlines: np.ndarray, offset: int, name: str, what: str) -> InputError:
    char = data[offset:offset + 1].decode("latin-1")
    shown = repr(char) if char.isprintable() else f"byte 0x{data[offset]:02x}"
    return InputError(f"{shown} {what}", source=name, line=_line_number(newlines, offset))


# --------------------------------------------------------------------------------------------------
# FASTA and A2M: the bulk byte path

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
        return _line_number(self.newlines, offset)

    def record_of(self, offsets: np.ndarray) -> np.ndarray:
        """Record index of each byte offset (offsets after the first header)."""
        return np.searchsorted(self.header_offsets, offsets, side="right") - 1


def _positions(buf: np.ndarray, value: int, slice_bytes: int = SLICE_BYTES) -> np.ndarray:
    """Offsets of every byte equal to ``value``, found slice by slice (no whole-file mask)."""
    found = [np.flatnonzero(buf[start:start + slice_bytes] == value) + start
             for start in range(0, buf.size, slice_bytes)]
    return np.concatenate(found) if found else np.empty(0, dtype=np.int64)


def _slice_bounds(newlines: np.ndarray, size: int, slice_bytes: int) -> list[tuple[int, int]]:
    """Slices of about ``slice_bytes`` that end just after a newline, so that no line straddles two."""
    if newlines.size == 0 or size <= slice_bytes:
        return [(0, size)]
    index = np.searchsorted(newlines, np.arange(slice_bytes, size, slice_bytes))
    ends = np.where(index < newlines.size, newlines[np.minimum(index, newlines.size - 1)] + 1, size)
    ends = np.unique(np.append(ends, size))
    starts = np.concatenate(([0], ends[:-1]))
    return list(zip(starts.tolist(), ends.tolist()))


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
                             line=_line_number(newlines, int(stray[0])))
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
        fields = text.split(None, 1)
        ids.append(fields[0])
        descriptions.append(fields[1] if len(fields) > 1 else "")
    return ids, descriptions


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
    return _bad_character(layout.data, layout.newlines, offset, name, what)


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


def _parse_fasta_rows(data: bytes | bytearray, name: str, a2m: bool, keep_inserts: bool, width: int | None = None,
                      slice_bytes: int = SLICE_BYTES, consume: bool = False
                      ) -> tuple[list[str], list[str], np.ndarray, dict[str, object]]:
    """Ids, descriptions, code matrix (STOP codes still in it) and reader notes of FASTA or A2M bytes.

    ``width`` forces the row length (a later chunk of a streamed file must match the first); ``consume``
    lets the codes overwrite a writable ``data`` (see :func:`_fasta_codes`).
    """
    layout = _layout(data, name, slice_bytes)
    ids, descriptions = _parse_headers(layout, _headers(layout), name)
    codes, lengths, flags, dropped = _fasta_codes(layout, name, a2m, keep_inserts, consume)
    if keep_inserts and a2m:
        return ids, descriptions, _a2m_padded(codes, flags, lengths, ids, layout, name), {"inserts_kept": True}
    notes: dict[str, object] = {"inserts_dropped": dropped} if a2m else {}
    codes, lengths = _drop_final_stops(codes, lengths)
    return ids, descriptions, _to_matrix(codes, lengths, ids, layout, name, width), notes


def _parse_fasta(data: bytes | bytearray, name: str, a2m: bool, keep_inserts: bool, consume: bool = False) -> Alignment:
    ids, descriptions, matrix, notes = _parse_fasta_rows(data, name, a2m, keep_inserts, consume=consume)
    return _finish(ids, descriptions, matrix, name, "a2m" if a2m else "fasta", notes=notes)


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
    for row_codes, row_insert in rows:
        slot = np.cumsum(~row_insert)
        widths = np.maximum(widths, np.bincount(slot[row_insert], minlength=slots))
        placed.append(slot)
    slot_start = np.concatenate(([0], np.cumsum(widths[:-1] + 1)))  # column of slot k's first insert
    matrix = np.full((len(ids), int(widths.sum()) + slots - 1), GAP, dtype=np.uint8)
    for index, ((row_codes, row_insert), slot) in enumerate(zip(rows, placed)):
        column = slot_start[slot] - 1  # match state k sits just before slot k's inserts
        if row_insert.any():
            runs = np.flatnonzero(row_insert)
            first = np.r_[True, slot[runs][1:] != slot[runs][:-1]]
            run_start = np.maximum.accumulate(np.where(first, np.arange(runs.size), 0))
            column[runs] = slot_start[slot[runs]] + np.arange(runs.size) - run_start
        matrix[index, column] = row_codes
    return matrix


# --------------------------------------------------------------------------------------------------
# Stockholm


def _parse_stockholm(data: bytes, name: str) -> Alignment:
    text = data.decode("utf-8", errors="replace")
    rows: dict[str, list[str]] = {}
    row_lines: dict[str, list[tuple[int, int]]] = {}  # (first column of the piece, line number)
    lengths: dict[str, int] = {}
    annotations: dict[str, list[str]] = {}
    block_ids: set[str] = set()
    terminated = False
    extra_alignments = 0
    lines = text.splitlines()
    for number, line in enumerate(lines, start=1):
        stripped = line.strip()
        if terminated:
            if stripped.upper().startswith("# STOCKHOLM"):
                extra_alignments += 1
            continue
        if not stripped:
            block_ids = set()
            continue
        if stripped == "//":
            terminated = True
            continue
        if stripped.startswith("#"):
            if stripped.startswith("#=GC"):
                fields = stripped.split(None, 2)
                if len(fields) < 3:
                    raise InputError("#=GC line without a feature and its text", source=name, line=number)
                annotations.setdefault(fields[1], []).append(fields[2].replace(" ", ""))
            # #=GF, #=GS, #=GR and plain comments carry no columns of sequence.
            continue
        fields = stripped.split()
        if len(fields) < 2:
            raise InputError(f"sequence line {fields[0][:30]!r} has an id but no sequence", source=name, line=number)
        identifier, piece = fields[0], "".join(fields[1:])
        if identifier in block_ids:
            raise InputError(f"id {identifier!r} appears twice in one block", source=name, line=number)
        block_ids.add(identifier)
        rows.setdefault(identifier, []).append(piece)
        row_lines.setdefault(identifier, []).append((lengths.get(identifier, 0), number))
        lengths[identifier] = lengths.get(identifier, 0) + len(piece)
    if not terminated:
        raise InputError("Stockholm alignment ends without its '//' terminator (truncated file?)",
                         source=name, line=len(lines))
    if extra_alignments:
        warnings.warn(f"{name}: holds {extra_alignments + 1} alignments; only the first is read",
                      InputWarning, stacklevel=3)
    if not rows:
        raise InputError("Stockholm file holds no sequences", source=name)
    ids = list(rows)
    width_counts: dict[int, int] = {}
    for identifier in ids:
        width_counts[lengths[identifier]] = width_counts.get(lengths[identifier], 0) + 1
    width = max(width_counts, key=lambda w: (width_counts[w], -w))
    for identifier in ids:
        if lengths[identifier] != width:
            line = row_lines[identifier][0][1]
            raise InputError(
                f"row {identifier!r} has {lengths[identifier]} columns, the others {width}: the blocks do not "
                "line up (rows of an alignment must be equal in length)", source=name, line=line)
    joined = "".join("".join(rows[i]) for i in ids).encode("ascii", errors="replace")
    raw = np.frombuffer(joined, dtype=np.uint8)
    codes = BYTE_TO_CODE[raw].reshape(len(ids), width).copy()
    bad = (codes == INVALID) | (codes == SPACE)
    if bad.any():
        row, column = (int(v[0]) for v in np.nonzero(bad))
        identifier = ids[row]
        line = max((ln for start, ln in row_lines[identifier] if start <= column), default=None)
        char = chr(raw[row * width + column]) if raw[row * width + column] < 128 else "?"
        raise InputError(f"{char!r} in row {identifier!r} is not an amino-acid letter or a gap", source=name, line=line)
    column_annotations: dict[str, str] = {}
    for feature, pieces in annotations.items():
        joined_text = "".join(pieces)
        if len(joined_text) != width:
            raise InputError(f"#=GC {feature} annotation has {len(joined_text)} characters for {width} columns",
                             source=name)
        column_annotations[feature] = joined_text
    # A final '*' is dropped only if every row has one (the rows must stay aligned).
    if (codes[:, -1] == STOP).all():
        codes = codes[:, :-1].copy()
        column_annotations = {k: v[:-1] for k, v in column_annotations.items()}
    return _finish(ids, [""] * len(ids), codes, name, "stockholm", annotations=column_annotations)


# --------------------------------------------------------------------------------------------------
# PHYLIP and NEXUS, through Biopython


def _parse_with_biopython(data: bytes, name: str, fmt: str) -> Alignment:
    from Bio import AlignIO

    text = data.decode("utf-8", errors="replace").replace("\r\n", "\n")
    attempts = ["phylip-relaxed", "phylip-sequential", "phylip"] if fmt == "phylip" else ["nexus"]
    failure = ""
    for attempt in attempts:
        try:
            records = list(AlignIO.read(io.StringIO(text), attempt))
            break
        except Exception as exc:  # Biopython raises many types for malformed input
            failure = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    else:
        raise InputError(f"cannot be read as {fmt.upper()}: {failure}", source=name)
    if not records:
        raise InputError(f"{fmt.upper()} file holds no sequences", source=name)
    ids = [record.id for record in records]
    sequences = [str(record.seq) for record in records]
    lengths = [len(s) for s in sequences]
    width = max(set(lengths), key=lengths.count)
    odd = [i for i, length in enumerate(lengths) if length != width]
    if odd:
        raise InputError(f"row {ids[odd[0]]!r} has {len(sequences[odd[0]])} columns, the others {width}: rows of an "
                         "alignment must be equal in length (for unaligned sequences, use `globcons align`)",
                         source=name)
    joined = "".join(sequences).encode("ascii", errors="replace")
    raw = np.frombuffer(joined, dtype=np.uint8)
    # NEXUS and PHYLIP may write '?' for missing data: unknown.
    codes = BYTE_TO_CODE[raw].copy()
    codes[raw == ord("?")] = UNKNOWN
    bad = (codes == INVALID) | (codes == SPACE)
    if bad.any():
        first = int(np.flatnonzero(bad)[0])
        raise InputError(f"{chr(raw[first])!r} in row {ids[first // width]!r} is not an amino-acid letter or a gap",
                         source=name)
    matrix = codes.reshape(len(ids), width)
    if width and (matrix[:, -1] == STOP).all():
        matrix = matrix[:, :-1].copy()
    descriptions = [record.description if record.description != record.id else "" for record in records]
    return _finish(ids, descriptions, matrix, name, fmt)


# --------------------------------------------------------------------------------------------------
# public entry points


def parse_alignment(data: bytes, name: str = "<memory>", format: str | None = None,
                    keep_inserts: bool = False, *, consume: bool = False) -> Alignment:
    """Parse alignment bytes (already un-gzipped) into an :class:`~globcons.core.alignment.Alignment`.

    Parameters
    ----------
    data
        The file's content.
    name
        Name used in messages; its extension may choose A2M.
    format
        One of :data:`FORMATS`, or None to sniff from the content.
    keep_inserts
        A2M only: keep insert states (lower case, '.') as columns instead of dropping them.
    consume
        ``data`` is a ``bytearray`` the caller gives up: FASTA and A2M codes are written over it, so the
        code matrix needs no memory beyond the file's (its content is garbage afterwards).
    """
    if format is not None and format not in FORMATS:
        raise OptionError(f"unknown format {format!r}; choose one of {', '.join(FORMATS)}")
    if data.startswith(_BOM):
        data = data[len(_BOM):]
    if _is_blank(data):
        raise InputError("file is empty", source=name)
    problem = _text_problem(data)
    if problem:
        raise InputError(problem, source=name)
    fmt = format or _format_from_name(name) or sniff_format(data, name)
    if fmt in ("fasta", "a2m"):
        return _parse_fasta(data, name, a2m=fmt == "a2m", keep_inserts=keep_inserts, consume=consume)
    if fmt == "stockholm":
        return _parse_stockholm(data, name)
    return _parse_with_biopython(data, name, fmt)


def read_alignment(path: PathLike | BinaryIO, format: str | None = None, keep_inserts: bool = False) -> Alignment:
    """Read a protein multiple alignment.

    Parameters
    ----------
    path
        File path (gzip detected by its magic bytes), ``"-"`` for standard input, or a binary file object.
    format
        ``"fasta"``, ``"a2m"``, ``"stockholm"``, ``"phylip"`` or ``"nexus"``; None sniffs the content
        (a ``.a2m`` extension selects A2M).
    keep_inserts
        A2M only: keep the insert states as columns (lower case read as residues, '.' as gaps).

    Returns
    -------
    Alignment

    Raises
    ------
    InputError
        The input cannot be read as a protein alignment; the message names the file and line.

    Examples
    --------
    >>> from globcons import read_alignment
    >>> from globcons.demo import demo_alignment_path
    >>> alignment = read_alignment(demo_alignment_path())
    >>> alignment.n_rows > 10
    True
    """
    data, name = read_input_bytes(path)
    return parse_alignment(data, name, format=format, keep_inserts=keep_inserts,
                           consume=isinstance(data, bytearray))


class SequenceRecord(NamedTuple):
    """One unaligned sequence: ``id``, ``description``, ``sequence`` (upper case, as given)."""

    id: str
    description: str
    sequence: str
    line: int


def read_sequences(path: PathLike | BinaryIO) -> Iterator[SequenceRecord]:
    """Read unaligned FASTA records (gzip and stdin too), one at a time.

    Gaps are removed; letters are upper-cased; a final '*' is dropped. Characters that are not letters
    raise :class:`~globcons.errors.InputError` naming the line.
    """
    data, name = read_input_bytes(path)
    if not data.strip():
        raise InputError("file is empty", source=name)
    problem = _text_problem(data)
    if problem:
        raise InputError(problem, source=name)
    identifier: str | None = None
    description = ""
    header_line = 0
    pieces: list[str] = []
    for number, raw_line in enumerate(data.decode("utf-8", errors="replace").splitlines(), start=1):
        line = raw_line.strip()
        if line.startswith(">"):
            if identifier is not None:
                yield _sequence_record(identifier, description, pieces, header_line)
            fields = line[1:].strip().split(None, 1)
            if not fields:
                raise InputError("header line has no sequence id", source=name, line=number)
            identifier, description = fields[0], (fields[1] if len(fields) > 1 else "")
            header_line, pieces = number, []
            continue
        if not line:
            continue
        if identifier is None:
            raise InputError("sequence data before the first '>' header", source=name, line=number)
        bad = re.search(r"[^A-Za-z*\-.~]", line)
        if bad:
            raise InputError(f"{bad.group()!r} is not an amino-acid letter", source=name, line=number)
        pieces.append(line)
    if identifier is None:
        raise InputError("no FASTA header line ('>') found", source=name, line=1)
    yield _sequence_record(identifier, description, pieces, header_line)


def _sequence_record(identifier: str, description: str, pieces: list[str], line: int) -> SequenceRecord:
    sequence = re.sub(r"[-.~]", "", "".join(pieces)).upper()
    if sequence.endswith("*"):
        sequence = sequence[:-1]
    return SequenceRecord(identifier, description, sequence, line)



# --------------------------------------------------------------------------------------------------
# writing


ALIGNMENT_OUTPUTS = ("fasta", "stockholm", "a2m")


def alignment_format_for(path: str | os.PathLike | None, requested: str | None = None) -> str:
    """Output format of an alignment: as requested, else by extension (.sto/.stk Stockholm, .a2m), else FASTA."""
    if requested:
        if requested not in ALIGNMENT_OUTPUTS:
            raise OptionError(f"unknown alignment output format {requested!r}; choose one of "
                              f"{', '.join(ALIGNMENT_OUTPUTS)}")
        return requested
    name = str(path or "").lower().removesuffix(".gz")
    if name.endswith((".sto", ".stk", ".stockholm")):
        return "stockholm"
    if name.endswith(".a2m"):
        return "a2m"
    return "fasta"


def format_alignment(ids: list[str] | tuple[str, ...], rows: list[str], fmt: str,
                     column_annotations: dict[str, str] | None = None,
                     descriptions: list[str] | tuple[str, ...] | None = None, width: int = 60) -> str:
    """Text of an alignment in FASTA, A2M or Stockholm (``#=GC`` lines only in Stockholm).

    ``rows`` are the aligned strings (lower case and '.' mark insert states, as in A2M).
    """
    descriptions = list(descriptions or [""] * len(ids))
    if fmt in ("fasta", "a2m"):
        out = []
        for identifier, description, row in zip(ids, descriptions, rows):
            if fmt == "fasta":
                row = row.replace(".", "-").upper()
            header = f">{identifier} {description}".rstrip()
            out.append(header)
            out.extend(row[i:i + width] for i in range(0, len(row), width) or [0])
        return "\n".join(out) + "\n"
    if fmt == "stockholm":
        annotations = column_annotations or {}
        pad = max([len(i) for i in ids] + [len(f"#=GC {k}") for k in annotations] + [1]) + 1
        out = ["# STOCKHOLM 1.0", "#=GF CC written by globcons"]
        for identifier, description in zip(ids, descriptions):
            if description:
                out.append(f"#=GS {identifier} DE {description}")
        out.append("")
        for identifier, row in zip(ids, rows):
            out.append(f"{identifier.ljust(pad)}{row}")
        for key, text in annotations.items():
            out.append(f"{('#=GC ' + key).ljust(pad)}{text}")
        out.append("//")
        return "\n".join(out) + "\n"
    raise OptionError(f"unknown alignment output format {fmt!r}")


# --------------------------------------------------------------------------------------------------
# streaming unaligned sequences


class RawRecord(NamedTuple):
    """One FASTA record as given: ``sequence`` keeps every character of its lines except blanks."""

    id: str
    description: str
    sequence: str
    line: int


def _open_stream(source: PathLike | BinaryIO) -> tuple[BinaryIO, str]:
    if hasattr(source, "read"):
        stream, name = source, str(getattr(source, "name", "<stream>"))
    elif str(source) == "-":
        stream, name = sys.stdin.buffer, "<stdin>"
    else:
        name = str(source)
        with _opening(name):
            stream = open(source, "rb")
    buffered = io.BufferedReader(stream) if not hasattr(stream, "peek") else stream
    if buffered.peek(2)[:2] == _GZIP_MAGIC:
        buffered = gzip.GzipFile(fileobj=buffered)
    return buffered, name


def stream_records(source: PathLike | BinaryIO) -> Iterator[RawRecord]:
    """Yield FASTA records one at a time, reading the input line by line (gzip and stdin too).

    Memory stays that of one record whatever the number of records. Characters are not checked here
    (a scan reports a bad record and goes on); structural problems (no header, binary data, a truncated
    gzip) raise :class:`~globcons.errors.InputError`.
    """
    stream, name = _open_stream(source)
    identifier: str | None = None
    description, header_line, pieces = "", 0, []
    try:
        for number, raw in enumerate(stream, start=1):
            if number == 1:
                if raw.startswith(_BOM):
                    raw = raw[len(_BOM):]
                problem = _text_problem(raw)
                if problem:
                    raise InputError(problem, source=name, line=1)
            if b"\x00" in raw:
                raise InputError("binary data, not a FASTA text", source=name, line=number)
            line = raw.decode("utf-8", errors="replace").strip()
            if line.startswith(">"):
                if identifier is not None:
                    yield RawRecord(identifier, description, "".join(pieces), header_line)
                fields = line[1:].strip().split(None, 1)
                if not fields:
                    raise InputError("header line has no sequence id", source=name, line=number)
                identifier, description = fields[0], (fields[1] if len(fields) > 1 else "")
                header_line, pieces = number, []
            elif line:
                if identifier is None:
                    raise InputError("sequence data before the first '>' header", source=name, line=number)
                pieces.append("".join(line.split()))
    except (EOFError, zlib.error, gzip.BadGzipFile):
        raise InputError("gzip data is truncated or corrupt; the file may be an incomplete download",
                         source=name) from None
    finally:
        if stream is not sys.stdin.buffer:
            stream.close()
    if identifier is None:
        raise InputError("no FASTA header line ('>') found", source=name, line=1)
    yield RawRecord(identifier, description, "".join(pieces), header_line)
