"""Reading alignments and sequences: format sniffing, gzip, stdin, and the checks a user deserves.

Aligned FASTA and A2M go through a bulk byte path (numpy over the whole file, no per-record Python
work); Stockholm has its own line parser (it carries ``#=GC`` column annotations); PHYLIP and NEXUS
are read with Biopython's ``Bio.AlignIO``. Every path ends in :func:`_finish`, which applies the same
rules to all formats (stops, unknowns, nucleotides, duplicate ids).
"""

from __future__ import annotations

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

from .alignment import Alignment
from .alphabet import BYTE_TO_CODE, GAP, INVALID, SPACE, STANDARD, STOP, UNKNOWN
from .errors import InputError, InputWarning, OptionError

__all__ = [
    "FORMATS",
    "read_alignment",
    "read_input_bytes",
    "sniff_format",
    "parse_alignment",
    "SequenceRecord",
    "read_sequences",
]

PathLike = Union[str, os.PathLike]

#: Formats :func:`read_alignment` accepts (all open interchange formats).
FORMATS = ("fasta", "a2m", "stockholm", "phylip", "nexus")

_GZIP_MAGIC = b"\x1f\x8b"
_BOM = b"\xef\xbb\xbf"
_NUCLEOTIDE_CODES = np.array([STANDARD.index(c) for c in "ACGTN"] + [20], dtype=np.intp)  # 20 = U


# --------------------------------------------------------------------------------------------------
# bytes in


def read_input_bytes(source: PathLike | BinaryIO) -> tuple[bytes, str]:
    """Read a whole input into memory, un-gzipped and without a UTF-8 byte-order mark.

    Parameters
    ----------
    source
        A path, ``"-"`` for standard input, or an open binary file.

    Returns
    -------
    data, name
        The bytes, and the name to use in messages.

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
        path = Path(source)
        try:
            raw = path.read_bytes()
        except FileNotFoundError:
            raise InputError("no such file", source=name) from None
        except IsADirectoryError:
            raise InputError("is a folder, not a file", source=name) from None
        except PermissionError:
            raise InputError("cannot be read (permission denied)", source=name) from None
        except OSError as exc:
            raise InputError(f"cannot be read ({exc.strerror or exc})", source=name) from None
    if isinstance(raw, str):
        raw = raw.encode("utf-8")
    if raw[:2] == _GZIP_MAGIC:
        try:
            raw = gzip.decompress(raw)
        except (EOFError, OSError, zlib.error) as exc:
            detail = "truncated" if isinstance(exc, EOFError) else "corrupt"
            raise InputError(f"gzip data is {detail}; the file may be an incomplete download", source=name) from None
    if raw.startswith(_BOM):
        raw = raw[len(_BOM):]
    return raw, name


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
    if not data.strip():
        raise InputError("file is empty", source=name)
    problem = _text_problem(data)
    if problem:
        raise InputError(problem, source=name)
    for number, line in enumerate(data.splitlines()[:50], start=1):
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
    counts = np.bincount(codes.ravel(), minlength=GAP + 1)
    letters = int(counts[: UNKNOWN + 1].sum())
    if letters >= 20 and counts[_NUCLEOTIDE_CODES].sum() >= 0.95 * letters:
        raise InputError(
            "looks like nucleotide sequences (almost only A, C, G, T/U, N); globcons reads protein "
            "alignments: translate first",
            source=name,
        )


def _finish(ids: list[str], descriptions: list[str], codes: np.ndarray, name: str, fmt: str,
            annotations: dict[str, str] | None = None, notes: dict | None = None) -> Alignment:
    """Rules shared by every format; ``codes`` must hold only alphabet codes and STOP."""
    if codes.shape[0] == 0:
        raise InputError("no sequences found", source=name)
    if codes.shape[1] == 0:
        raise InputError("the sequences are empty (no columns)", source=name)
    notes = dict(notes or {})
    stops = codes == STOP
    if stops.any():
        count = int(stops.sum())
        codes[stops] = UNKNOWN
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


class _FastaBytes(NamedTuple):
    """Sequence bytes of a FASTA file, split off from the headers with array operations."""

    headers: list[bytes]
    header_offsets: np.ndarray  # byte offset of each '>'
    seq_offsets: np.ndarray  # byte offset of every sequence byte (not newline or CR)
    record_of: np.ndarray  # record index of every sequence byte
    newlines: np.ndarray  # byte offsets of '\n'


def _split_fasta(data: bytes, name: str) -> _FastaBytes:
    buf = np.frombuffer(data, dtype=np.uint8)
    size = buf.size
    newlines = np.flatnonzero(buf == 10)
    line_starts = np.concatenate(([0], newlines + 1))
    line_ends = np.concatenate((newlines, [size]))
    valid = line_starts < size
    line_starts, line_ends = line_starts[valid], line_ends[valid]
    is_header = buf[line_starts] == ord(">")
    header_starts = line_starts[is_header]
    header_ends = line_ends[is_header]
    if header_starts.size == 0:
        raise InputError("no FASTA header line ('>') found", source=name, line=1)
    # +1 from a header's '>' to its newline: bytes inside headers.
    marks = np.zeros(size + 1, dtype=np.int8)
    np.add.at(marks, header_starts, 1)
    np.add.at(marks, header_ends, -1)
    in_header = np.cumsum(marks[:size], dtype=np.int8).astype(bool)
    sequence_byte = ~in_header & (buf != 10) & (buf != 13)
    seq_offsets = np.flatnonzero(sequence_byte)
    record_of = np.searchsorted(header_starts, seq_offsets, side="right") - 1
    if record_of.size and record_of[0] < 0:
        stray = seq_offsets[record_of < 0]
        blank = (buf[stray] == 32) | (buf[stray] == 9)
        if not blank.all():
            first = int(stray[~blank][0])
            raise InputError("sequence data before the first '>' header", source=name,
                             line=_line_number(newlines, first))
        keep = record_of >= 0
        seq_offsets, record_of = seq_offsets[keep], record_of[keep]
    # Headers without '>' and without CR, one bulk split.
    header_mask = in_header.copy()
    header_mask[header_starts] = False
    header_mask &= buf != 13
    header_mask[header_ends[header_ends < size]] = True  # keep each header's newline as separator
    joined = buf[header_mask].tobytes()
    if header_ends[-1] >= size:
        joined += b"\n"
    headers = joined.split(b"\n")[:-1]
    return _FastaBytes(headers, header_starts, seq_offsets, record_of, newlines)


def _parse_headers(headers: list[bytes], header_offsets: np.ndarray, newlines: np.ndarray,
                   name: str) -> tuple[list[str], list[str]]:
    ids, descriptions = [], []
    for index, raw in enumerate(headers):
        text = raw.decode("utf-8", errors="replace").strip()
        if not text:
            raise InputError("header line has no sequence id", source=name,
                             line=_line_number(newlines, int(header_offsets[index])))
        parts = text.split(None, 1)
        ids.append(parts[0])
        descriptions.append(parts[1] if len(parts) > 1 else "")
    return ids, descriptions


def _drop_trailing_spaces(codes: np.ndarray, offsets: np.ndarray, record_of: np.ndarray,
                          newlines: np.ndarray, data: bytes, name: str) -> np.ndarray:
    """Mask of bytes to keep: blanks may end a line, never sit inside one."""
    spaces = codes == SPACE
    if not spaces.any():
        return np.ones(codes.size, dtype=bool)
    line_of = np.searchsorted(newlines, offsets, side="right")
    inner = spaces[:-1] & ~spaces[1:] & (line_of[:-1] == line_of[1:])
    if inner.any():
        raise _bad_character(data, newlines, int(offsets[:-1][inner][0]), name,
                             "(a blank) inside a sequence line; alignments use '-' for gaps")
    return ~spaces


def _parse_fasta(data: bytes, name: str, a2m: bool, keep_inserts: bool) -> Alignment:
    parts = _split_fasta(data, name)
    ids, descriptions = _parse_headers(parts.headers, parts.header_offsets, parts.newlines, name)
    raw = np.frombuffer(data, dtype=np.uint8)[parts.seq_offsets]
    codes = BYTE_TO_CODE[raw]
    keep = _drop_trailing_spaces(codes, parts.seq_offsets, parts.record_of, parts.newlines, data, name)
    invalid = codes == INVALID
    if invalid.any():
        first = int(parts.seq_offsets[invalid][0])
        raise _bad_character(data, parts.newlines, first, name, "is not an amino-acid letter or a gap ('-', '.', '~')")
    record_of = parts.record_of
    offsets = parts.seq_offsets
    notes: dict[str, object] = {}
    if a2m:
        inserts = ((raw >= ord("a")) & (raw <= ord("z"))) | (raw == ord("."))
        if keep_inserts:
            return _a2m_keep_inserts(raw[keep], codes[keep], record_of[keep], offsets[keep], ids, descriptions,
                                     parts, name)
        dropped = inserts & keep & (raw != ord("."))
        notes["inserts_dropped"] = int(dropped.sum())
        keep &= ~inserts
    codes, record_of, offsets = codes[keep], record_of[keep], offsets[keep]
    codes, record_of, offsets = _drop_final_stops(codes, record_of, offsets, len(ids))
    matrix = _to_matrix(codes, record_of, offsets, ids, parts, name)
    return _finish(ids, descriptions, matrix, name, "a2m" if a2m else "fasta", notes=notes)


def _drop_final_stops(codes: np.ndarray, record_of: np.ndarray, offsets: np.ndarray,
                      n_records: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    if codes.size == 0:
        return codes, record_of, offsets
    last = np.flatnonzero(np.r_[record_of[1:] != record_of[:-1], True])
    final_stop = last[codes[last] == STOP]
    if final_stop.size == 0:
        return codes, record_of, offsets
    keep = np.ones(codes.size, dtype=bool)
    keep[final_stop] = False
    return codes[keep], record_of[keep], offsets[keep]


def _to_matrix(codes: np.ndarray, record_of: np.ndarray, offsets: np.ndarray, ids: list[str],
               parts: _FastaBytes, name: str) -> np.ndarray:
    n_records = len(ids)
    lengths = np.bincount(record_of, minlength=n_records)
    if lengths.size and (lengths == 0).all():
        raise InputError("no sequence data under the headers", source=name)
    width = int(np.bincount(lengths).argmax()) if lengths.size else 0
    if width == 0:
        width = int(lengths.max())
    odd = np.flatnonzero(lengths != width)
    if odd.size:
        row = int(odd[0])
        line = _line_number(parts.newlines, int(parts.header_offsets[row]))
        got = int(lengths[row])
        others = "the others" if odd.size == 1 else f"most others ({n_records - odd.size} of {n_records})"
        raise InputError(
            f"row {ids[row]!r} has {got} columns, {others} {width}: rows of an alignment must be equal in "
            "length (for unaligned sequences, use `globcons align`)",
            source=name, line=line,
        )
    matrix = codes.reshape(n_records, width)
    return matrix if matrix.flags.owndata else matrix.copy()


def _a2m_keep_inserts(raw: np.ndarray, codes: np.ndarray, record_of: np.ndarray, offsets: np.ndarray,
                      ids: list[str], descriptions: list[str], parts: _FastaBytes, name: str) -> Alignment:
    """A2M with its insert states kept as columns; insert runs are padded to the longest run.

    Not a hot path (``--keep-inserts`` is an explicit choice), so rows are handled one at a time.
    """
    codes = codes.copy()
    codes[raw == ord(".")] = GAP
    is_insert = ((raw >= ord("a")) & (raw <= ord("z"))) | (raw == ord("."))
    n_records = len(ids)
    trimmed = _drop_final_stops(codes, record_of, offsets, n_records)
    lengths = np.bincount(trimmed[1], minlength=n_records)
    if (lengths == lengths[0]).all():  # inserts already padded with '.': the rows line up as they are
        matrix = _to_matrix(*trimmed, ids, parts, name)
        return _finish(ids, descriptions, matrix, name, "a2m", notes={"inserts_kept": True})
    lengths = np.bincount(record_of, minlength=n_records)
    bounds = np.concatenate(([0], np.cumsum(lengths)))
    rows = []
    for index in range(n_records):
        row_codes = codes[bounds[index]:bounds[index + 1]]
        row_insert = is_insert[bounds[index]:bounds[index + 1]]
        if row_codes.size and row_codes[-1] == STOP:
            row_codes, row_insert = row_codes[:-1], row_insert[:-1]
        match_index = np.cumsum(~row_insert)  # slot of each insert: after this many match states
        rows.append((row_codes, row_insert, match_index))
    n_match = {int((~r[1]).sum()) for r in rows}
    if len(n_match) != 1:
        counts = [int((~r[1]).sum()) for r in rows]
        row = next(i for i, c in enumerate(counts) if c != counts[0])
        line = _line_number(parts.newlines, int(parts.header_offsets[row]))
        raise InputError(f"row {ids[row]!r} has {counts[row]} match states, the first row {counts[0]}: "
                         "A2M rows must agree in match (upper-case and '-') columns", source=name, line=line)
    slots = n_match.pop() + 1
    widths = np.zeros(slots, dtype=np.int64)
    for row_codes, row_insert, match_index in rows:
        widths = np.maximum(widths, np.bincount(match_index[row_insert & (row_codes != GAP)], minlength=slots))
    width = int(widths.sum()) + slots - 1
    matrix = np.full((n_records, width), GAP, dtype=np.uint8)
    slot_start = np.concatenate(([0], np.cumsum(widths[:-1] + 1)))
    for index, (row_codes, row_insert, match_index) in enumerate(rows):
        real = ~row_insert | (row_codes != GAP)
        row_codes, row_insert, match_index = row_codes[real], row_insert[real], match_index[real]
        within = np.zeros(row_codes.size, dtype=np.int64)
        if row_insert.any():
            ins = np.flatnonzero(row_insert)
            run_start = np.r_[True, (match_index[ins][1:] != match_index[ins][:-1])]
            first_of_run = np.maximum.accumulate(np.where(run_start, np.arange(ins.size), 0))
            within[ins] = np.arange(ins.size) - first_of_run
        column = np.where(row_insert, slot_start[match_index] + within, slot_start[match_index] - 1)
        matrix[index, column] = row_codes
    return _finish(ids, descriptions, matrix, name, "a2m", notes={"inserts_kept": True})


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
    ids = [record.id for record in records]
    sequences = [str(record.seq) for record in records]
    widths = {len(s) for s in sequences}
    if len(widths) != 1:
        raise InputError("rows of unequal length (for unaligned sequences, use `globcons align`)", source=name)
    joined = "".join(sequences).encode("ascii", errors="replace")
    raw = np.frombuffer(joined, dtype=np.uint8)
    # NEXUS and PHYLIP may write '?' for missing data: unknown.
    codes = BYTE_TO_CODE[raw].copy()
    codes[raw == ord("?")] = UNKNOWN
    bad = (codes == INVALID) | (codes == SPACE)
    if bad.any():
        first = int(np.flatnonzero(bad)[0])
        width = widths.pop()
        raise InputError(f"{chr(raw[first])!r} in row {ids[first // width]!r} is not an amino-acid letter or a gap",
                         source=name)
    width = len(sequences[0])
    matrix = codes.reshape(len(ids), width)
    if (matrix[:, -1] == STOP).all():
        matrix = matrix[:, :-1].copy()
    descriptions = [record.description if record.description != record.id else "" for record in records]
    return _finish(ids, descriptions, matrix, name, fmt)


# --------------------------------------------------------------------------------------------------
# public entry points


def parse_alignment(data: bytes, name: str = "<memory>", format: str | None = None,
                    keep_inserts: bool = False) -> Alignment:
    """Parse alignment bytes (already un-gzipped) into an :class:`~globcons.alignment.Alignment`.

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
    """
    if format is not None and format not in FORMATS:
        raise OptionError(f"unknown format {format!r}; choose one of {', '.join(FORMATS)}")
    if not data.strip():
        raise InputError("file is empty", source=name)
    problem = _text_problem(data)
    if problem:
        raise InputError(problem, source=name)
    fmt = format or _format_from_name(name) or sniff_format(data, name)
    if fmt in ("fasta", "a2m"):
        return _parse_fasta(data, name, a2m=fmt == "a2m", keep_inserts=keep_inserts)
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
    return parse_alignment(data, name, format=format, keep_inserts=keep_inserts)


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

