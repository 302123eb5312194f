"""Frame labels carried inside an alignment file, one character per column.

Stockholm ``#=GC`` lines hold one character per column, and labels such as ``FG3`` or ``H21`` need more,
so a file written by ``globcons align`` carries three lines (our own convention):

``#=GC frame_segment``
    the segment: helices as ``A``..``H``; corners and termini as lower case: ``n`` NA, ``a`` AB, ``c`` CD,
    ``x`` CE, ``e`` EF, ``f`` FG, ``g`` GH, ``h`` HC; ``.`` for a column without a frame position;
``#=GC frame_tens`` and ``#=GC frame_units``
    the two digits of the place in the segment (``.`` for a missing tens digit).

FASTA output carries the same information in a sidecar table instead (see :mod:`globcons.io.readers`).
"""

from __future__ import annotations

import re

__all__ = ["GC_SEGMENT", "GC_TENS", "GC_UNITS", "encode_labels", "decode_labels"]

GC_SEGMENT, GC_TENS, GC_UNITS = "frame_segment", "frame_tens", "frame_units"

_SEGMENT_TO_CHAR = {"NA": "n", "AB": "a", "CD": "c", "CE": "x", "EF": "e", "FG": "f", "GH": "g", "HC": "h",
                    **{h: h for h in "ABCDEFGH"}}
_CHAR_TO_SEGMENT = {v: k for k, v in _SEGMENT_TO_CHAR.items()}
_LABEL = re.compile(r"^(NA|HC|AB|CD|CE|EF|FG|GH|[A-H])([1-9][0-9]?)$")


def encode_labels(labels: list[str] | tuple[str, ...]) -> dict[str, str]:
    """Three per-column annotation strings for ``labels`` ('' for a column without a label).

    Raises
    ------
    ValueError
        A label that is not in the trade's notation, or a place above 99.
    """
    segment, tens, units = [], [], []
    for label in labels:
        if not label:
            segment.append(".")
            tens.append(".")
            units.append(".")
            continue
        match = _LABEL.match(label)
        if match is None:
            raise ValueError(f"cannot encode frame label {label!r}")
        place = int(match.group(2))
        segment.append(_SEGMENT_TO_CHAR[match.group(1)])
        tens.append(str(place // 10) if place >= 10 else ".")
        units.append(str(place % 10))
    return {GC_SEGMENT: "".join(segment), GC_TENS: "".join(tens), GC_UNITS: "".join(units)}


def decode_labels(annotations: dict[str, str] | None) -> list[str] | None:
    """The labels carried by ``#=GC`` annotations, or None if the file carries none (or they are damaged)."""
    if not annotations or not all(key in annotations for key in (GC_SEGMENT, GC_TENS, GC_UNITS)):
        return None
    labels = []
    for seg, ten, unit in zip(annotations[GC_SEGMENT], annotations[GC_TENS], annotations[GC_UNITS]):
        if seg in ".-" and unit in ".-":
            labels.append("")
            continue
        if seg not in _CHAR_TO_SEGMENT or not unit.isdigit() or not (ten.isdigit() or ten in ".-"):
            return None
        place = (int(ten) * 10 if ten.isdigit() else 0) + int(unit)
        if place == 0:
            return None
        labels.append(f"{_CHAR_TO_SEGMENT[seg]}{place}")
    return labels
