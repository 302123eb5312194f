"""Writing figures: the format follows the file's extension, and files are written atomically.

Every figure is a :class:`matplotlib.figure.Figure` built directly (no pyplot state, so no GUI backend is
ever needed and a notebook's backend is left alone) and coloured only from :mod:`globcons.plots.palette`.
"""

from __future__ import annotations

import hashlib
import io
import os
import re
from collections.abc import Iterable
from pathlib import Path

import matplotlib
from matplotlib.figure import Figure

from globcons.errors import OptionError
from globcons.io.atomic import atomic_output

__all__ = ["FIGURE_FORMATS", "FIGURE_DPI", "SAVE_SETTINGS", "figure_format", "save_figure", "stable_svg_ids",
           "finish_figure", "plain_text"]


#: Output extension -> matplotlib format.
FIGURE_FORMATS: dict[str, str] = {".png": "png", ".svg": "svg", ".pdf": "pdf"}


#: matplotlib settings while a figure is written: SVG text stays text (editable in a drawing program, and
#: searchable), and SVG element ids are hashed with a fixed salt instead of a random one, so that the same
#: figure gives the same bytes on every run.
SAVE_SETTINGS: dict[str, object] = {"svg.fonttype": "none", "svg.hashsalt": "globcons"}


#: Resolution of raster (PNG) output; a figure of w x h inches gives w*FIGURE_DPI x h*FIGURE_DPI pixels.
FIGURE_DPI = 150


def plain_text(text: str) -> str:
    r"""User text (a title, a file name, an id, a group) shown as it is: a ``$`` would start matplotlib's math
    text (and a bad formula would fail the figure), so it is escaped.

    Examples
    --------
    >>> plain_text("cost $5")
    'cost \\$5'
    """
    return str(text).replace("$", r"\$")


def figure_format(path: str | os.PathLike) -> str:
    """The matplotlib format for an output path, from its extension.

    Raises
    ------
    OptionError
        If the extension is not one of :data:`FIGURE_FORMATS`.
    """
    suffix = Path(str(path)).suffix.lower()
    if suffix not in FIGURE_FORMATS:
        raise OptionError(f"cannot tell the figure format of {path}: give a file name ending in "
                          f"{', '.join(FIGURE_FORMATS)}")
    return FIGURE_FORMATS[suffix]


def save_figure(fig: Figure, path: str | os.PathLike, inputs: Iterable = ()) -> str:
    """Write ``fig`` to ``path`` in the format of its extension, atomically, never over an input.

    Returns
    -------
    str
        The path written.
    """
    fmt = figure_format(path)
    with atomic_output(path, inputs, binary=True) as stream:
        # A fixed date keeps the bytes of PDF/SVG output the same from run to run.
        metadata = {"Creator": "globcons"}
        if fmt == "pdf":
            metadata["CreationDate"] = None
        elif fmt == "svg":
            metadata["Date"] = None
        with matplotlib.rc_context(SAVE_SETTINGS):
            if fmt == "svg":
                buffer = io.BytesIO()
                fig.savefig(buffer, format=fmt, dpi=FIGURE_DPI, metadata=metadata)
                stream.write(stable_svg_ids(buffer.getvalue()))
            else:
                fig.savefig(stream, format=fmt, dpi=FIGURE_DPI, metadata=metadata)
    return str(path)


#: The element ids matplotlib's SVG writer makes: a letter (clip path, hatch, marker) and 10 hex digits of a hash.
_SVG_ID = re.compile(rb'id="([a-z][0-9a-f]{10})"')


def stable_svg_ids(svg: bytes) -> bytes:
    """Rename matplotlib's SVG element ids after what the drawing shows, so that reruns give the same bytes.

    matplotlib hashes a clip rectangle's coordinates at full float precision, and a constrained layout can
    move them in the last bits from one run to the next while every coordinate written (6 decimals) stays
    the same. Each id becomes its letter, a digest of the SVG with the ids left out, and its place in order
    of appearance: stable between runs, distinct between figures.
    """
    ids = list(dict.fromkeys(_SVG_ID.findall(svg)))
    if not ids:
        return svg
    pattern = re.compile(b"|".join(re.escape(i) for i in ids))
    digest = hashlib.sha256(pattern.sub(b"", svg)).hexdigest()[:6].encode("ascii")
    names = {old: old[:1] + digest + b"%04d" % index for index, old in enumerate(ids)}
    return pattern.sub(lambda match: names[match.group(0)], svg)


def finish_figure(fig: Figure, path: str | os.PathLike | None, inputs: Iterable = ()) -> Figure:
    """Save ``fig`` to ``path`` when one is given (see :func:`save_figure`), and return it."""
    if path is not None:
        save_figure(fig, path, inputs)
    return fig

