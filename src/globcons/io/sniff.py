"""Telling what an input is before parsing it: alignment format from the content or the name, and text checks."""

from __future__ import annotations

import re

from globcons.errors import InputError
from globcons.io.opening import is_blank

__all__ = ["sniff_format", "text_problem"]




def text_problem(data: bytes) -> str | None:
    """Why ``data`` cannot be a text alignment, or None."""
    head = data[:4096]
    if b"\x00" in head:
        return "binary data, not a text alignment"
    stripped = head.lstrip().lower()
    if stripped.startswith((b"<!doctype html", b"<html", b"<?xml", b"<head", b"<body")):
        return "looks like an HTML or XML page, not an alignment (a failed download?)"
    return None


def sniff_format(data: bytes, name: str = "<input>") -> str:
    """Guess the alignment format from the content.

    Returns one of ``"fasta"``, ``"stockholm"``, ``"phylip"``, ``"nexus"`` (A2M looks like FASTA; it is
    chosen by ``format="a2m"`` or a ``.a2m`` extension).

    Raises
    ------
    InputError
        Empty, binary or HTML input, or no recognisable format.
    """
    if is_blank(data):
        raise InputError("file is empty", source=name)
    problem = text_problem(data)
    if problem:
        raise InputError(problem, source=name)
    # Only the first lines decide; splitting the whole file would copy it line by line.
    head = data[:1 << 20]
    lines = head.splitlines()[:50] if not head.isspace() else data.splitlines()[:50]
    for number, line in enumerate(lines, start=1):
        text = line.strip()
        if not text:
            continue
        if text.startswith(b">"):
            return "fasta"
        if text.upper().startswith(b"# STOCKHOLM"):
            return "stockholm"
        if text.upper().startswith(b"#NEXUS"):
            return "nexus"
        if re.fullmatch(rb"\d+\s+\d+(\s+.*)?", text):
            return "phylip"
        shown = text[:40].decode("utf-8", "replace")
        raise InputError(
            f"not a recognised alignment format (starts with {shown!r}); expected FASTA ('>'), "
            "A2M, Stockholm ('# STOCKHOLM 1.0'), PHYLIP or NEXUS",
            source=name, line=number,
        )
    raise InputError("file holds only blank lines", source=name)



