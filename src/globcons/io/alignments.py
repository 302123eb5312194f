"""Reading a protein multiple alignment: one entry point for every format, gzip and standard input.

Aligned FASTA and A2M go through the bulk byte path (:mod:`globcons.io.fasta`); Stockholm has its own
line parser (:mod:`globcons.io.stockholm`, it carries ``#=GC`` column annotations); PHYLIP and NEXUS are
read with Biopython (:mod:`globcons.io.phylip_nexus`). Every path ends in the same rules
(:func:`globcons.io.checks.finish_alignment`). The frame labels a file carries (its ``#=GC frame_*``
lines, or the sidecar table ``<file>.frame.tsv`` that ``globcons align`` writes beside FASTA) are read with
it into :attr:`~globcons.core.alignment.Alignment.frame_labels`.
"""

from __future__ import annotations

from typing import BinaryIO

from globcons.core.alignment import Alignment
from globcons.errors import InputError, OptionError
from globcons.io.checks import check_columns
from globcons.io.fasta import lone_returns_to_newlines, parse_fasta
from globcons.io.formats import FORMATS, format_from_name
from globcons.io.frame_labels import carried_labels
from globcons.io.opening import BOM, InputSource, PathLike, is_blank
from globcons.io.phylip_nexus import parse_phylip_nexus
from globcons.io.sniff import sniff_format, text_problem
from globcons.io.stockholm import parse_stockholm

__all__ = ["parse_alignment", "read_alignment"]


def parse_alignment(data: bytes | bytearray, name: str = "<memory>", format: str | None = None,
                    keep_inserts: bool = False, *, consume: bool = False) -> Alignment:
    """Parse alignment bytes (already un-gzipped) into an :class:`~globcons.core.alignment.Alignment`.

    Parameters
    ----------
    data
        The file's content.
    name
        Name used in messages; its extension may choose A2M.
    format
        One of :data:`~globcons.io.sniff.FORMATS`, or None to sniff from the content.
    keep_inserts
        A2M only: keep insert states (lower case, '.') as columns instead of dropping them.
    consume
        ``data`` is a ``bytearray`` the caller gives up: FASTA and A2M codes are written over it, so the
        code matrix needs no memory beyond the file's (its content is garbage afterwards).

    Returns
    -------
    Alignment
        With the frame labels of its ``#=GC`` lines, if it has them (a sidecar table is read only by
        :func:`read_alignment`, which knows the path).
    """
    if format is not None and format not in FORMATS:
        raise OptionError(f"unknown format {format!r}; choose one of {', '.join(FORMATS)}")
    if data.startswith(BOM):
        data = data[len(BOM):]
    if is_blank(data):
        raise InputError("file is empty", source=name)
    data = lone_returns_to_newlines(data)  # every format reads lines alike: LF, CRLF or a lone CR
    problem = text_problem(data)
    if problem:
        raise InputError(problem, source=name)
    fmt = format or format_from_name(name) or sniff_format(data, name)
    if fmt in ("fasta", "a2m"):
        return parse_fasta(data, name, a2m=fmt == "a2m", keep_inserts=keep_inserts, consume=consume)
    if fmt == "stockholm":
        alignment = parse_stockholm(data, name)
        labels, found_in = carried_labels(dict(alignment.column_annotations), None, alignment.n_columns)
        return alignment.with_frame_labels(labels, found_in) if labels is not None else alignment
    return parse_phylip_nexus(data, name, fmt)


def read_alignment(path: PathLike | BinaryIO, format: str | None = None, keep_inserts: bool = False,
                   max_columns: int | None = None) -> Alignment:
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
    max_columns
        Refuse an alignment of more columns (None: no limit; the commands use
        :data:`~globcons.io.checks.MAX_COLUMNS` unless ``--max-columns`` says otherwise).

    Returns
    -------
    Alignment
        With the frame labels the file carries, if any: its ``#=GC frame_*`` lines, or the sidecar table
        ``<path>.frame.tsv`` that ``globcons align`` writes beside FASTA and A2M (used when it fits).

    Raises
    ------
    InputError
        The input cannot be read as a protein alignment; the message names the file and line.

    Examples
    --------
    >>> from globcons import read_alignment
    >>> from globcons.demo import demo_alignment_path
    >>> alignment = read_alignment(demo_alignment_path())
    >>> alignment.n_rows > 10, alignment.frame_labels is None
    (True, True)
    """
    source = InputSource(path)
    data = source.read_bytes()
    alignment = parse_alignment(data, source.name, format=format, keep_inserts=keep_inserts,
                                consume=isinstance(data, bytearray))
    check_columns(alignment, max_columns)
    if alignment.frame_labels is not None or source.path is None:
        return alignment
    labels, found_in = carried_labels(None, source.path, alignment.n_columns)
    return alignment.with_frame_labels(labels, found_in) if labels is not None else alignment
