"""The grammar of the trade's helix labels: segments of the globin fold and a residue's place in one.

A label is a segment followed by a place counted from 1 without leading zeros: helices ``A``-``H``,
corners named by their two helices (``AB``, ``CD``, ``EF``, ``FG``, ``GH``; alpha's ``CE``) and the
termini ``NA`` (before A) and ``HC`` (after H). Beta His92 is ``F8``, the proximal His of every globin.

This module only knows the notation; which labels a chain has, and where, is :mod:`globcons.frame`.

>>> split_label("FG3"), segment_of("CD1"), is_helix("F"), is_label("f8")
(('FG', 3), 'CD', True, False)
"""

from __future__ import annotations

import re

from globcons.errors import OptionError

__all__ = [
    "FRAME_ORDER",
    "HELICES",
    "SEGMENT_PATTERN",
    "is_label",
    "split_label",
    "segment_of",
    "place_of",
    "is_helix",
    "label_key",
]

#: Segments of the globin fold in their order along the chain (alpha's ``CE`` stands where the others
#: have ``CD`` and ``D``).
FRAME_ORDER: tuple[str, ...] = (
    "NA", "A", "AB", "B", "C", "CD", "CE", "D", "E", "EF", "F", "FG", "G", "GH", "H", "HC",
)
#: The eight helices; every other segment is a corner or a terminus.
HELICES: tuple[str, ...] = ("A", "B", "C", "D", "E", "F", "G", "H")

#: Regular expression of a segment name, two-letter segments first so that "CD1" is never read as helix C.
SEGMENT_PATTERN = "(?:" + "|".join(sorted(FRAME_ORDER, key=len, reverse=True)) + ")"
_LABEL_RE = re.compile(rf"^({SEGMENT_PATTERN})([1-9][0-9]*)$")


def is_label(text: object) -> bool:
    """Whether ``text`` is a label in the trade's notation (segment then place, e.g. ``"FG3"``).

    Case matters (``"f8"`` is not a label). Whether a given chain has the label is a separate question
    (see :func:`globcons.frame.position_of`).
    """
    return isinstance(text, str) and _LABEL_RE.match(text) is not None


def split_label(label: str) -> tuple[str, int]:
    """``"FG3"`` -> ``("FG", 3)``.

    Raises
    ------
    OptionError
        If ``label`` is not in the trade's notation; the message says what a label looks like.
    """
    match = _LABEL_RE.match(label) if isinstance(label, str) else None
    if match is None:
        raise OptionError(
            f"{label!r} is not a frame label; labels are a segment "
            f"({', '.join(FRAME_ORDER)}) then a place from 1, e.g. F8, FG3, NA1"
        )
    return match.group(1), int(match.group(2))


def segment_of(label: str) -> str:
    """Segment of a label: ``"F8"`` -> ``"F"``, ``"FG3"`` -> ``"FG"`` (raises :class:`OptionError` on a non-label)."""
    return split_label(label)[0]


def place_of(label: str) -> int:
    """Place of a label in its segment: ``"F8"`` -> 8."""
    return split_label(label)[1]


def is_helix(segment: str) -> bool:
    """Whether ``segment`` is one of the helices A-H (corners and termini are not)."""
    return segment in HELICES


def label_key(label: str) -> tuple[int, int]:
    """Sort key of a label along the fold: (segment's place in :data:`FRAME_ORDER`, place)."""
    segment, place = split_label(label)
    return FRAME_ORDER.index(segment), place
