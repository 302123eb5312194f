"""Stockholm: a line parser of its own, because Stockholm carries per-column annotations (``#=GC`` lines).

The ``#=GC`` lines are kept as the alignment's column annotations; the frame labels that ``globcons align``
writes there are decoded into :attr:`~globcons.core.alignment.Alignment.frame_labels`
(:mod:`globcons.io.frame_labels`).
"""

from __future__ import annotations

import warnings

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE, INVALID, SPACE, STOP
from globcons.errors import InputError, InputWarning
from globcons.io.checks import finish_alignment

__all__ = ["parse_stockholm"]


def parse_stockholm(data: bytes, name: str) -> Alignment:
    """An alignment from Stockholm bytes: the first alignment of the file, its `#=GC` lines as column annotations."""
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
    return finish_alignment(ids, [""] * len(ids), codes, name, "stockholm", annotations=column_annotations)

