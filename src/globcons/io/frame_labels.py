"""Frame labels carried with an alignment file: Stockholm ``#=GC`` lines, or a sidecar table beside FASTA.

Stockholm ``#=GC`` lines hold one character per column, and labels such as ``FG3`` or ``H21`` need more,
so a file written by ``globcons align`` carries three lines (our own convention):

``#=GC frame_segment``
    the segment: helices as ``A``..``H``; corners and termini as lower case: ``n`` NA, ``a`` AB, ``c`` CD,
    ``x`` CE, ``e`` EF, ``f`` FG, ``g`` GH, ``h`` HC; ``.`` for a column without a frame position;
``#=GC frame_tens`` and ``#=GC frame_units``
    the two last digits of the place in its segment (``.`` for a missing tens digit);
``#=GC frame_hundreds``
    only when some place is 100 or more (no globin segment is that long, but the notation allows it).

FASTA and A2M output carry the same information in a sidecar table ``<alignment>.frame.tsv``
(:func:`sidecar_path`): columns ``column`` (as written), ``frame_label`` and ``match_column`` (the column's
number once insert columns are dropped, as an A2M reader does by default; empty for insert columns).
"""

from __future__ import annotations

import os
from pathlib import Path

from globcons.core.labels import is_label, split_label
from globcons.errors import InputError
from globcons.io.opening import read_text

__all__ = ["GC_SEGMENT", "GC_TENS", "GC_UNITS", "GC_HUNDREDS", "encode_labels", "decode_labels", "sidecar_path",
           "label_sidecar_table", "read_label_sidecar", "carried_labels"]

GC_SEGMENT, GC_TENS, GC_UNITS, GC_HUNDREDS = "frame_segment", "frame_tens", "frame_units", "frame_hundreds"
SIDECAR_HEADER = ("column", "frame_label", "match_column")

_SEGMENT_TO_CHAR = {"NA": "n", "AB": "a", "CD": "c", "CE": "x", "EF": "e", "FG": "f", "GH": "g", "HC": "h",
                    **{h: h for h in "ABCDEFGH"}}
_CHAR_TO_SEGMENT = {v: k for k, v in _SEGMENT_TO_CHAR.items()}
_EMPTY = ".-"


def encode_labels(labels: list[str] | tuple[str, ...]) -> dict[str, str]:
    """Per-column annotation strings for ``labels`` ('' for a column without a label).

    Raises
    ------
    ValueError
        A label that is not in the trade's notation.
    """
    lines: dict[str, list[str]] = {GC_SEGMENT: [], GC_HUNDREDS: [], GC_TENS: [], GC_UNITS: []}
    for label in labels:
        if not label:
            for line in lines.values():
                line.append(".")
            continue
        if not is_label(label):
            raise ValueError(f"cannot encode frame label {label!r}")
        segment, place = split_label(label)
        lines[GC_SEGMENT].append(_SEGMENT_TO_CHAR[segment])
        lines[GC_HUNDREDS].append(str(place // 100) if place >= 100 else ".")
        lines[GC_TENS].append(str(place // 10 % 10) if place >= 10 else ".")
        lines[GC_UNITS].append(str(place % 10))
    encoded = {key: "".join(chars) for key, chars in lines.items()}
    if set(encoded[GC_HUNDREDS]) <= {"."}:
        del encoded[GC_HUNDREDS]
    return encoded


def decode_labels(annotations: dict[str, str] | None) -> list[str] | None:
    """The labels carried by ``#=GC`` annotations, or None if the file carries none (or they are damaged)."""
    if not annotations or not all(key in annotations for key in (GC_SEGMENT, GC_TENS, GC_UNITS)):
        return None
    segments, tens, units = annotations[GC_SEGMENT], annotations[GC_TENS], annotations[GC_UNITS]
    hundreds = annotations.get(GC_HUNDREDS, "." * len(units))
    if not len(segments) == len(tens) == len(units) == len(hundreds):
        return None
    labels = []
    for seg, hundred, ten, unit in zip(segments, hundreds, tens, units, strict=True):
        if seg in _EMPTY and unit in _EMPTY:
            labels.append("")
            continue
        digits_ok = all(d.isdigit() or d in _EMPTY for d in (hundred, ten))
        if seg not in _CHAR_TO_SEGMENT or not unit.isdigit() or not digits_ok:
            return None
        place = sum(int(d) * scale for d, scale in ((hundred, 100), (ten, 10), (unit, 1)) if d.isdigit())
        if place == 0:
            return None
        labels.append(f"{_CHAR_TO_SEGMENT[seg]}{place}")
    return labels


def sidecar_path(alignment_path: str | os.PathLike) -> Path:
    """Where the frame labels of a FASTA or A2M alignment written by ``globcons align`` are kept."""
    path = str(alignment_path)
    if path.endswith(".gz"):
        path = path[:-3]
    return Path(path + ".frame.tsv")


def label_sidecar_table(labels: tuple[str, ...] | list[str], inserts: list[bool] | None = None):
    """The sidecar table (see the module notes) as a pandas DataFrame, for :func:`globcons.io.tables.write_table`."""
    import pandas as pd

    inserts = inserts or [False] * len(labels)
    match, count = [], 0
    for is_insert in inserts:
        count += not is_insert
        match.append("" if is_insert else str(count))
    return pd.DataFrame(dict(zip(SIDECAR_HEADER, (range(1, len(labels) + 1), list(labels), match), strict=True)))


def read_label_sidecar(path: str | os.PathLike, n_columns: int) -> tuple[str, ...] | None:
    """Labels from a sidecar table, or None if it does not fit an alignment of ``n_columns`` columns.

    It fits an alignment with as many columns as it has rows, or as many as it has match columns (an A2M
    file read without its insert columns).

    Raises
    ------
    InputError
        The table cannot be read, lacks its header, or holds a row that is not a column number and a label.
    """
    source = str(path)
    lines = read_text(path, "frame label table").splitlines()
    if not lines or lines[0].rstrip("\r").split("\t")[:2] != list(SIDECAR_HEADER[:2]):
        raise InputError("frame label table must start with the header 'column<TAB>frame_label'", source=source,
                         line=1)
    rows = []
    for number, line in enumerate(lines[1:], start=2):
        if not line.strip():
            continue
        fields = line.rstrip("\r").split("\t") + ["", ""]
        if not fields[0].isdigit() or (fields[2] and not fields[2].isdigit()):
            raise InputError(f"column {fields[0]!r} is not a column number", source=source, line=number)
        label = fields[1].strip()
        if label and not is_label(label):
            raise InputError(f"{label!r} is not a frame label (segment then place, e.g. F8, FG3, NA1)",
                             source=source, line=number)
        rows.append((int(fields[0]), label, int(fields[2]) if fields[2] else None))
    if len(rows) == n_columns:
        key = 0
    elif sum(1 for row in rows if row[2] is not None) == n_columns:
        key = 2
    else:
        return None
    labels = [""] * n_columns
    for row in rows:
        if row[key] is not None and 1 <= row[key] <= n_columns:
            labels[row[key] - 1] = row[1]
    return tuple(labels)


def carried_labels(annotations: dict[str, str] | None, path: str | os.PathLike | None,
                   n_columns: int) -> tuple[tuple[str, ...] | None, str]:
    """The frame labels an alignment file carries, and where they were found.

    First the file's own ``#=GC`` lines, then the sidecar table beside ``path`` (a path on disk only;
    standard input has no sidecar), if it fits the alignment.

    Returns
    -------
    labels, source
        One label per column and ``"file"`` or the sidecar's path; or ``(None, "")``.
    """
    decoded = decode_labels(annotations)
    if decoded is not None:
        return tuple(decoded), "file"
    if path is None or str(path) == "-":
        return None, ""
    sidecar = sidecar_path(path)
    if not sidecar.is_file():
        return None, ""
    labels = read_label_sidecar(sidecar, n_columns)
    return (labels, str(sidecar)) if labels is not None else (None, "")
