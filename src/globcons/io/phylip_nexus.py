"""PHYLIP and NEXUS, read through Biopython's ``Bio.AlignIO`` and held to the same rules as the other formats."""

from __future__ import annotations

import io

import numpy as np

from globcons.core.alignment import Alignment
from globcons.core.alphabet import BYTE_TO_CODE, INVALID, SPACE, STOP, UNKNOWN
from globcons.errors import InputError
from globcons.io.checks import finish_alignment

__all__ = ["parse_phylip_nexus"]

#: Biopython's PHYLIP readers, tried in this order (relaxed names first, the commonest today).
PHYLIP_VARIANTS = ("phylip-relaxed", "phylip-sequential", "phylip")


def _check_phylip_header(text: str, size: int, name: str) -> None:
    """Refuse a header whose counts the file cannot hold (Biopython would allocate for them first): every
    row needs at least its columns' bytes, so rows x columns can never exceed the file's size."""
    fields = text.lstrip().split(None, 2)
    if len(fields) < 2 or not (fields[0].isdigit() and fields[1].isdigit()):
        return
    rows, columns = int(fields[0]), int(fields[1])
    if rows == 0 or columns == 0:
        raise InputError(f"PHYLIP header says {rows} sequences of {columns} columns: nothing to read",
                         source=name, line=1)
    if rows * columns > size:
        raise InputError(f"PHYLIP header says {rows} sequences of {columns} columns, more than a file of {size} "
                         "bytes can hold", source=name, line=1)


def parse_phylip_nexus(data: bytes, name: str, fmt: str) -> Alignment:
    """An alignment from PHYLIP (``fmt="phylip"``, any of :data:`PHYLIP_VARIANTS`) or NEXUS bytes."""
    from Bio import AlignIO

    text = data.decode("utf-8", errors="replace").replace("\r\n", "\n")
    if fmt == "phylip":
        _check_phylip_header(text, len(data), name)
    attempts = PHYLIP_VARIANTS if fmt == "phylip" else ("nexus",)
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
    return finish_alignment(ids, descriptions, matrix, name, fmt)

