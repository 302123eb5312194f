"""Stockholm: a line parser of its own, because Stockholm carries per-column annotations (``#=GC`` lines).

The ``#=GC`` lines are kept as the alignment's column annotations; the frame labels that ``globcons align``
writes there are decoded into :attr:`~globcons.core.alignment.Alignment.frame_labels`
(:mod:`globcons.io.frame_labels`).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE, INVALID, SPACE, STOP
from globcons.errors import InputError, InputWarning
from globcons.io.checks import finish_alignment

__all__ = ["parse_stockholm"]


@dataclass
class _Blocks:
    """What the line scan of a Stockholm file gathers: each row's pieces, where they came from, the #=GC text."""

    rows: dict[str, list[str]] = field(default_factory=dict)
    row_lines: dict[str, list[tuple[int, int]]] = field(default_factory=dict)  # (first column of a piece, line)
    lengths: dict[str, int] = field(default_factory=dict)
    annotations: dict[str, list[str]] = field(default_factory=dict)

    def add_row(self, identifier: str, piece: str, number: int) -> None:
        self.rows.setdefault(identifier, []).append(piece)
        self.row_lines.setdefault(identifier, []).append((self.lengths.get(identifier, 0), number))
        self.lengths[identifier] = self.lengths.get(identifier, 0) + len(piece)


def _scan(text: str, name: str) -> _Blocks:
    """Read the first alignment's sequence and ``#=GC`` lines, with the checks that need line numbers."""
    found = _Blocks()
    block_ids: set[str] = set()
    terminated, extra_alignments = False, 0
    lines = text.splitlines()
    for number, line in enumerate(lines, start=1):
        stripped = line.strip()
        if terminated:
            extra_alignments += stripped.upper().startswith("# STOCKHOLM")
            continue
        if not stripped:
            block_ids = set()
        elif stripped == "//":
            terminated = True
        elif stripped.startswith("#=GC"):
            fields = stripped.split(None, 2)
            if len(fields) < 3:
                raise InputError("#=GC line without a feature and its text", source=name, line=number)
            found.annotations.setdefault(fields[1], []).append(fields[2].replace(" ", ""))
        elif not stripped.startswith("#"):  # #=GF, #=GS, #=GR and comments carry no columns of sequence
            fields = stripped.split()
            if len(fields) < 2:
                raise InputError(f"sequence line {fields[0][:30]!r} has an id but no sequence", source=name,
                                 line=number)
            if fields[0] in block_ids:
                raise InputError(f"id {fields[0]!r} appears twice in one block", source=name, line=number)
            block_ids.add(fields[0])
            found.add_row(fields[0], "".join(fields[1:]), number)
    if not terminated:
        raise InputError("Stockholm alignment ends without its '//' terminator (truncated file?)",
                         source=name, line=len(lines))
    if extra_alignments:
        warnings.warn(f"{name}: holds {extra_alignments + 1} alignments; only the first is read",
                      InputWarning, stacklevel=4)
    if not found.rows:
        raise InputError("Stockholm file holds no sequences", source=name)
    return found


def _width(found: _Blocks, name: str) -> int:
    """The row length most rows share (ties: the shorter); a row of another length is an error naming its line."""
    ids = list(found.rows)
    width_counts: dict[int, int] = {}
    for identifier in ids:
        width_counts[found.lengths[identifier]] = width_counts.get(found.lengths[identifier], 0) + 1
    width = max(width_counts, key=lambda w: (width_counts[w], -w))
    for identifier in ids:
        if found.lengths[identifier] != width:
            raise InputError(
                f"row {identifier!r} has {found.lengths[identifier]} columns, the others {width}: the blocks do not "
                "line up (rows of an alignment must be equal in length)", source=name,
                line=found.row_lines[identifier][0][1])
    return width


def parse_stockholm(data: bytes, name: str) -> Alignment:
    """An alignment from Stockholm bytes: the file's first alignment, its ``#=GC`` lines as column annotations."""
    found = _scan(data.decode("utf-8", errors="replace"), name)
    ids = list(found.rows)
    width = _width(found, name)
    joined = "".join("".join(found.rows[i]) for i in ids).encode("ascii", errors="replace")
    raw = np.frombuffer(joined, dtype=np.uint8)
    codes = BYTE_TO_CODE[raw].reshape(len(ids), width).copy()
    bad = (codes == INVALID) | (codes == SPACE)
    if bad.any():
        row, column = (int(v[0]) for v in np.nonzero(bad))
        identifier = ids[row]
        line = max((ln for start, ln in found.row_lines[identifier] if start <= column), default=None)
        char = chr(raw[row * width + column]) if raw[row * width + column] < 128 else "?"
        raise InputError(f"{char!r} in row {identifier!r} is not an amino-acid letter or a gap", source=name,
                         line=line)
    column_annotations: dict[str, str] = {}
    for feature, pieces in found.annotations.items():
        joined_text = "".join(pieces)
        if len(joined_text) != width:
            raise InputError(f"#=GC {feature} annotation has {len(joined_text)} characters for {width} columns",
                             source=name)
        column_annotations[feature] = joined_text
    # A final '*' is dropped only if every row has one (the rows must stay aligned).
    if (codes[:, -1] == STOP).all():
        codes = codes[:, :-1].copy()
        column_annotations = {k: v[:-1] for k, v in column_annotations.items()}
    return finish_alignment(ids, [""] * len(ids), codes, name, "stockholm", annotations=column_annotations)
