"""Unaligned FASTA records, read one at a time from a file, gzip or standard input.

One line reader serves both uses: :func:`stream_records` hands records over as given (a scan judges and
flags each record itself and goes on), :func:`read_sequences` cleans them and refuses characters that
are not amino-acid letters, naming the line. Lines end at ``\\n``, ``\\r\\n`` or a lone ``\\r`` alike;
memory stays that of one record whatever the number of records.
"""

from __future__ import annotations

import io
import re
from collections.abc import Callable, Iterator
from typing import BinaryIO, NamedTuple

from globcons.errors import InputError
from globcons.io.checks import check_id_length
from globcons.io.opening import BOM, InputSource, PathLike
from globcons.io.sniff import text_problem

__all__ = ["SequenceRecord", "stream_records", "read_sequences"]

#: Bytes looked at before reading to tell binary data or an HTML page from a FASTA text.
_HEAD_BYTES = 4096
_NOT_LETTER = re.compile(r"[^A-Za-z*\-.~]")
_GAPS = re.compile(r"[-.~]")


class SequenceRecord(NamedTuple):
    """One unaligned sequence.

    Attributes
    ----------
    id, description
        The header's first word and the rest of it.
    sequence
        The residues: as given but without blanks (:func:`stream_records`), or cleaned
        (:func:`read_sequences`: upper case, gaps and a final '*' removed).
    line
        1-based line of the header.
    """

    id: str
    description: str
    sequence: str
    line: int


def _lines(stream: BinaryIO, name: str) -> Iterator[tuple[int, str]]:
    """(line number, text without its line end) of a binary stream, universal newlines, UTF-8 with replacement."""
    head = stream.peek(_HEAD_BYTES)[:_HEAD_BYTES] if hasattr(stream, "peek") else b""  # type: ignore[union-attr]
    problem = text_problem(head[len(BOM):] if head.startswith(BOM) else head)
    if problem:
        raise InputError(problem, source=name, line=1)
    text = io.TextIOWrapper(stream, encoding="utf-8-sig", errors="replace", newline=None)  # type: ignore[arg-type]
    try:
        for number, line in enumerate(text, start=1):
            if "\x00" in line:
                raise InputError("binary data, not a FASTA text", source=name, line=number)
            yield number, line.rstrip("\n")
    finally:
        text.detach()  # the source closes the stream it opened


def _records(source: PathLike | BinaryIO, check: Callable[[str, int, str], None] | None) -> Iterator[SequenceRecord]:
    opened = InputSource(source)
    identifier: str | None = None
    description, header_line, pieces, seen_text = "", 0, [], False
    with opened.open() as stream:
        for number, raw in _lines(stream, opened.name):
            line = raw.strip()
            if not line:
                continue
            seen_text = True
            if line.startswith(">"):
                if identifier is not None:
                    yield SequenceRecord(identifier, description, "".join(pieces), header_line)
                fields = line[1:].strip().split(None, 1)
                if not fields:
                    raise InputError("header line has no sequence id", source=opened.name, line=number)
                identifier, description = fields[0], (fields[1] if len(fields) > 1 else "")
                check_id_length(identifier, opened.name, number)
                header_line, pieces = number, []
                continue
            if identifier is None:
                raise InputError("sequence data before the first '>' header", source=opened.name, line=number)
            if check is not None:
                check(line, number, opened.name)
            pieces.append("".join(line.split()))
    if not seen_text:
        raise InputError("file is empty", source=opened.name)
    if identifier is None:
        raise InputError("no FASTA header line ('>') found", source=opened.name, line=1)
    yield SequenceRecord(identifier, description, "".join(pieces), header_line)


def stream_records(source: PathLike | BinaryIO) -> Iterator[SequenceRecord]:
    """Yield FASTA records one at a time, their sequences as given (blanks removed, nothing checked).

    Structural problems (no header, binary data, a truncated gzip) raise
    :class:`~globcons.errors.InputError`; characters are left for the caller to judge.
    """
    return _records(source, None)


def _check_letters(line: str, number: int, name: str) -> None:
    bad = _NOT_LETTER.search(line)
    if bad:
        raise InputError(f"{bad.group()!r} is not an amino-acid letter", source=name, line=number)


def read_sequences(source: PathLike | BinaryIO) -> Iterator[SequenceRecord]:
    """Read unaligned FASTA records (gzip and stdin too), one at a time, cleaned.

    Gaps are removed; letters are upper-cased; a final '*' is dropped. Characters that are not letters
    raise :class:`~globcons.errors.InputError` naming the line.
    """
    for record in _records(source, _check_letters):
        sequence = _GAPS.sub("", record.sequence).upper()
        yield record._replace(sequence=sequence[:-1] if sequence.endswith("*") else sequence)
