"""Writing alignments: FASTA, A2M and Stockholm text (frame labels in ``#=GC`` lines only in Stockholm)."""

from __future__ import annotations

from globcons.errors import OptionError

__all__ = ["format_alignment"]

#: Characters per sequence line in FASTA and A2M output.
LINE_WIDTH = 60






def format_alignment(ids: list[str] | tuple[str, ...], rows: list[str], fmt: str,
                     column_annotations: dict[str, str] | None = None,
                     descriptions: list[str] | tuple[str, ...] | None = None, width: int = LINE_WIDTH) -> str:
    """Text of an alignment in FASTA, A2M or Stockholm (``#=GC`` lines only in Stockholm).

    ``rows`` are the aligned strings (lower case and '.' mark insert states, as in A2M).
    """
    descriptions = list(descriptions or [""] * len(ids))
    if fmt in ("fasta", "a2m"):
        out = []
        for identifier, description, row in zip(ids, descriptions, rows, strict=True):
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
        for identifier, description in zip(ids, descriptions, strict=True):
            if description:
                out.append(f"#=GS {identifier} DE {description}")
        out.append("")
        for identifier, row in zip(ids, rows, strict=True):
            out.append(f"{identifier.ljust(pad)}{row}")
        for key, text in annotations.items():
            out.append(f"{('#=GC ' + key).ljust(pad)}{text}")
        out.append("//")
        return "\n".join(out) + "\n"
    raise OptionError(f"unknown alignment output format {fmt!r}")

