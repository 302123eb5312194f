"""Residue letters drawn as glyphs, stacked into the columns of a sequence logo.

Letters are logomaker's glyph outlines, built once per letter at unit height and then scaled and moved
for each cell (see :func:`_unit_glyph`); zero cells are never drawn. Colours are the project's own
(:data:`globcons.plots.palette.RESIDUE_COLOURS`).
"""

from __future__ import annotations

import functools
from collections.abc import Sequence

import numpy as np
from matplotlib.figure import Figure
from matplotlib.patches import PathPatch
from matplotlib.transforms import Affine2D

from globcons.plots.palette import RESIDUE_COLOURS

__all__ = ["GLYPH_WIDTH", "GLYPH_VPAD", "stack_glyphs"]

#: Glyph box: the share of a column's width a letter fills, and of its height left blank (half below, half
#: above) so that stacked letters do not touch.
GLYPH_WIDTH = 0.88
GLYPH_VPAD = 0.04


@functools.cache
def _unit_glyph(letter: str):
    """logomaker's glyph path of ``letter`` at x = 0 filling y 0..1 (built once per letter).

    logomaker scales a letter's outline into its box by an affine map in which x does not depend on the
    height, so one unit-height outline per letter, scaled and moved, gives exactly the glyph logomaker would
    build for any cell; building glyphs one by one costs about 2 ms each (two passes over the outline's
    Bezier extents), this costs a matrix product.
    """
    from logomaker import Glyph  # imported here: logomaker costs about a second to import

    scratch = Figure().add_subplot()
    glyph = Glyph(0.0, letter, floor=0.0, ceiling=1.0, ax=scratch, width=GLYPH_WIDTH, vpad=GLYPH_VPAD,
                  font_name="sans", color=RESIDUE_COLOURS[letter])
    return glyph.patch.get_path()


def stack_glyphs(ax, heights: np.ndarray, letters: Sequence[str]) -> list[PathPatch]:
    """Draw the non-zero cells of ``heights`` (k, 20) as letters at x = 0..k-1, tallest on top.

    Returns
    -------
    list of matplotlib.patches.PathPatch
        One per non-zero cell, in drawing order, each with its letter in ``gid``.
    """
    patches = []
    for position, row in enumerate(heights):
        floor = 0.0
        for index in np.argsort(row, kind="stable"):
            height = float(row[index])
            if height <= 0.0:  # zero glyphs are never built
                continue
            letter = letters[index]
            path = Affine2D().scale(1.0, height).translate(position, floor).transform_path(_unit_glyph(letter))
            patch = PathPatch(path, facecolor=RESIDUE_COLOURS[letter], edgecolor="none", linewidth=0.0, zorder=2)
            patch.set_gid(f"glyph-{position}-{letter}")
            ax.add_artist(patch)  # not add_patch: the axes limits are set by hand, and data-limit updates cost
            patches.append(patch)
            floor += height
    return patches

