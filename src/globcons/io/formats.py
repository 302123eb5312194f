"""The file formats the package reads and writes, and choosing one from a name or an extension."""

from __future__ import annotations

import os
from pathlib import Path

from globcons.errors import OptionError

__all__ = ["FORMATS", "ALIGNMENT_OUTPUTS", "TABLE_FORMATS", "format_from_name", "alignment_format_for",
           "table_format_for"]

#: Alignment formats that are read (all open interchange formats).
FORMATS = ("fasta", "a2m", "stockholm", "phylip", "nexus")
#: Alignment formats that are written.
ALIGNMENT_OUTPUTS = ("fasta", "stockholm", "a2m")
#: Table formats that are written.
TABLE_FORMATS = ("tsv", "csv", "json", "md", "tex")


def format_from_name(name: str) -> str | None:
    """``"a2m"`` for a name ending in .a2m (or .a2m.gz), else None: A2M looks like FASTA inside."""
    lowered = name.lower()
    if lowered.endswith(".gz"):
        lowered = lowered[:-3]
    if lowered.endswith(".a2m"):
        return "a2m"
    return None


def alignment_format_for(path: str | os.PathLike | None, requested: str | None = None) -> str:
    """Output format of an alignment: as requested, else by extension (.sto/.stk Stockholm, .a2m), else FASTA."""
    if requested:
        if requested not in ALIGNMENT_OUTPUTS:
            raise OptionError(f"unknown alignment output format {requested!r}; choose one of "
                              f"{', '.join(ALIGNMENT_OUTPUTS)}")
        return requested
    name = str(path or "").lower().removesuffix(".gz")
    if name.endswith((".sto", ".stk", ".stockholm")):
        return "stockholm"
    if name.endswith(".a2m"):
        return "a2m"
    return "fasta"


def table_format_for(path: str | os.PathLike | None, requested: str | None) -> str:
    """The table format: as requested, else from the output's extension, else tsv."""
    if requested:
        if requested not in TABLE_FORMATS:
            raise OptionError(f"unknown table format {requested!r}; choose one of {', '.join(TABLE_FORMATS)}")
        return requested
    if path is not None and str(path) != "-":
        suffix = Path(path).suffix.lower().lstrip(".")
        if suffix in TABLE_FORMATS:
            return suffix
    return "tsv"
