"""Writing figures: the format follows the file's extension, and files are written atomically.

Every figure is a :class:`matplotlib.figure.Figure` built directly (no pyplot state, so no GUI backend is
ever needed and a notebook's backend is left alone) and coloured only from :mod:`globcons.plots.palette`.
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from pathlib import Path

import matplotlib
from matplotlib.figure import Figure

from globcons.errors import OptionError
from globcons.io.atomic import atomic_output

__all__ = ["FIGURE_FORMATS", "FIGURE_DPI", "SAVE_SETTINGS", "figure_format", "save_figure", "finish_figure"]


#: Output extension -> matplotlib format.
FIGURE_FORMATS: dict[str, str] = {".png": "png", ".svg": "svg", ".pdf": "pdf"}


#: matplotlib settings while a figure is written: SVG text stays text (editable in a drawing program, and
#: searchable), and SVG element ids are hashed with a fixed salt instead of a random one, so that the same
#: figure gives the same bytes on every run.
SAVE_SETTINGS: dict[str, object] = {"svg.fonttype": "none", "svg.hashsalt": "globcons"}


#: Resolution of raster (PNG) output; a figure of w x h inches gives w*FIGURE_DPI x h*FIGURE_DPI pixels.
FIGURE_DPI = 150


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
            fig.savefig(stream, format=fmt, dpi=FIGURE_DPI, metadata=metadata)
    return str(path)


def finish_figure(fig: Figure, path: str | os.PathLike | None, inputs: Iterable = ()) -> Figure:
    """Save ``fig`` to ``path`` when one is given (see :func:`save_figure`), and return it."""
    if path is not None:
        save_figure(fig, path, inputs)
    return fig

