"""The weighted sequence logo of a region of an alignment, and choosing that region by labels or columns.

Heights are information in bits with the small-sample correction of Schneider et al. 1986
(:func:`globcons.core.scores.information_bits`), from counts weighted over the whole alignment, so a
region's logo agrees with the full column table. Gap-rich columns are drawn as hatched bands.
"""

from __future__ import annotations

import os
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from matplotlib.figure import Figure
from matplotlib.patches import Patch

from globcons.core.alignment import Alignment
from globcons.core.alphabet import N_STANDARD, STANDARD
from globcons.core.counts import column_counts
from globcons.core.labels import is_label
from globcons.core.scores import LOG2_20, gap_fraction, information_bits
from globcons.core.weights import compute_weights
from globcons.errors import OptionError
from globcons.plots.glyphs import stack_glyphs
from globcons.plots.output import figure_format, finish_figure, plain_text
from globcons.plots.palette import CLASS_COLOURS, GAP_RICH_COLOUR, GROUP_COLOURS

__all__ = ["information_matrix", "LogoData", "logo_matrix", "column_range", "draw_logo", "LOGO_GEOMETRY"]

#: Layout of every logo, in inches: a fixed plot height and width per column, fixed margins (ticks, title,
#: legend), so that any two logos share one y-scale (inches per bit), whatever their number of columns.
LOGO_GEOMETRY: dict[str, float] = {"axes_height": 2.0, "column_width": 0.3, "min_axes_width": 2.4, "left": 0.7,
                                   "right": 1.8, "bottom": 0.85, "top": 0.35}


def information_matrix(counts: np.ndarray, small_sample: bool = True) -> pd.DataFrame:
    """Logo heights in bits (:func:`globcons.core.scores.information_bits`) as a table.

    Returns
    -------
    pandas.DataFrame
        Shape (L, 20): index 1..L (column numbers), columns the letters of ``STANDARD``.

    Examples
    --------
    >>> counts = np.zeros((1, 24)); counts[0, STANDARD.index("W")] = 1000.0
    >>> round(float(information_matrix(counts, small_sample=False).loc[1, "W"]), 4)
    4.3219
    """
    heights = information_bits(counts, small_sample)
    return pd.DataFrame(heights, index=pd.RangeIndex(1, len(heights) + 1, name="column"), columns=list(STANDARD))


@dataclass(frozen=True)
class LogoData:
    """What a logo draws.

    Attributes
    ----------
    matrix
        (k, 20) heights in bits, index the 1-based alignment columns; gap-rich columns are all zero.
    gap_fraction
        (k,) weighted gap fraction of each column.
    gap_rich
        (k,) bool: gap fraction above ``max_gaps`` (drawn as a band, no letters).
    n
        (k,) weighted count of standard residues (the ``n`` of the correction).
    """

    matrix: pd.DataFrame
    gap_fraction: np.ndarray
    gap_rich: np.ndarray
    n: np.ndarray


def logo_matrix(alignment: Alignment, columns: Sequence[int], weights: str = "henikoff", identity: float = 0.8,
                max_gaps: float = 0.5, small_sample: bool = True) -> LogoData:
    """Heights of a weighted logo of some columns of an alignment.

    Parameters
    ----------
    alignment
        The alignment (its rows weighted as a whole, so a region's logo agrees with the full table).
    columns
        1-based column numbers, in drawing order.
    weights, identity
        Weighting scheme (see :func:`globcons.core.weights.compute_weights`).
    max_gaps
        A column whose weighted gap fraction exceeds this is gap-rich.
    small_sample
        Apply the small-sample correction.
    """
    chosen = _check_columns(columns, alignment.n_columns)
    row_weights = compute_weights(alignment.codes, weights, identity).values
    counts = column_counts(np.ascontiguousarray(alignment.codes[:, chosen - 1]), row_weights)
    gaps = gap_fraction(counts)
    gap_rich = gaps > max_gaps
    matrix = information_matrix(counts, small_sample)
    matrix.index = pd.Index(chosen, name="column")
    matrix.loc[gap_rich, :] = 0.0
    return LogoData(matrix, gaps, gap_rich, counts[:, :N_STANDARD].sum(axis=1))


def _check_columns(columns: Sequence[int], n_columns: int) -> np.ndarray:
    chosen = np.asarray(list(columns), dtype=np.int64)
    if chosen.size == 0:
        raise OptionError("no columns chosen for the figure")
    bad = chosen[(chosen < 1) | (chosen > n_columns)]
    if bad.size:
        raise OptionError(f"column {int(bad[0])} is outside the alignment (columns 1-{n_columns})")
    return chosen


_COLUMN_SPEC = re.compile(r"^\s*(\d+)\s*(?:-\s*(\d+)\s*)?$")


def column_range(table: pd.DataFrame, spec: str, by: str = "auto") -> list[int]:
    """The 1-based columns named by a range.

    Parameters
    ----------
    table
        A column table (:func:`globcons.analysis.columns.score_columns`): ``column`` and ``frame_label``.
    spec
        ``"F1-FG5"`` (frame labels, both ends included, every column between them in table order,
        insert columns too), ``"F8"`` (one label), ``"80-100"`` or ``"96"`` (column numbers, inclusive).
    by
        ``"label"``, ``"column"`` or ``"auto"`` (numbers are columns, anything else labels).

    Returns
    -------
    list of int
        Column numbers in table order.

    Raises
    ------
    OptionError
        On a malformed spec, a label the table does not have, a column outside it, or a reversed range.
    """
    if by not in ("auto", "label", "column"):
        raise ValueError(f"by must be 'auto', 'label' or 'column', got {by!r}")
    text = str(spec).strip()
    numbers = list(table["column"].astype(int))
    if by == "column" or (by == "auto" and _COLUMN_SPEC.match(text)):
        match = _COLUMN_SPEC.match(text)
        if not match:
            raise OptionError(f"--columns {spec!r} is not a column range; give FIRST-LAST, e.g. 80-100")
        first = int(match.group(1))
        last = int(match.group(2)) if match.group(2) else first
        top = max(numbers) if numbers else 0
        for value in (first, last):
            if not 1 <= value <= top:
                raise OptionError(f"--columns {spec}: column {value} is outside the alignment (columns 1-{top})")
        if last < first:
            raise OptionError(f"--columns {spec}: the range is reversed (first {first} > last {last})")
        return [c for c in numbers if first <= c <= last]
    parts = [part.strip() for part in text.split("-")]
    if len(parts) not in (1, 2) or not all(is_label(part) for part in parts):
        raise OptionError(f"--range {spec!r} is not a frame-label range; give FIRST-LAST, e.g. F1-FG5 or E7")
    labels = list(table["frame_label"])
    where = {}
    for index, label in enumerate(labels):
        where.setdefault(label, index)
    for part in parts:
        if part not in where:
            present = [label for label in labels if label]
            hint = f"labels run {present[0]}..{present[-1]}" if present else "the table has no frame labels"
            raise OptionError(f"--range {spec}: no column has the frame label {part} ({hint})")
    start, end = where[parts[0]], where[parts[-1]]
    if end < start:
        raise OptionError(f"--range {spec}: {parts[-1]} comes before {parts[0]} in the alignment")
    return numbers[start:end + 1]


def draw_logo(alignment: Alignment, columns: Sequence[int], path: str | os.PathLike | None = None,
              weights: str = "henikoff", labels: Sequence[str] | None = None, max_gaps: float = 0.5,
              title: str | None = None, identity: float = 0.8, inputs: Iterable = ()) -> Figure:
    """Draw a weighted sequence logo of some columns (heights in bits, see the module notes).

    Parameters
    ----------
    alignment
        The alignment.
    columns
        1-based column numbers to draw, in order (e.g. from :func:`column_range`).
    path
        Write the figure here (format by extension); None: only return it.
    weights, identity
        Sequence weighting (``henikoff``, ``none``, ``cluster``).
    labels
        X tick label of each drawn column (same length as ``columns``; frame labels): an empty label
        falls back to the column number. None: column numbers.
    max_gaps
        Columns with a larger weighted gap fraction are drawn as a hatched band, without letters.
    title
        Figure title.
    inputs
        Paths the output must not overwrite.

    Returns
    -------
    matplotlib.figure.Figure
        One axes; one logomaker glyph (a ``PathPatch`` in the letter's palette colour) per non-zero
        letter, stacked tallest on top; gap-rich columns are hatched bands.
    """
    if path is not None:
        figure_format(path)  # refuse a bad extension before the work
    data = logo_matrix(alignment, columns, weights, identity, max_gaps)
    k = len(data.matrix)
    if labels is not None and len(labels) != k:
        raise ValueError(f"{len(labels)} labels for {k} columns")
    ticks = [str(label) if label else str(column) for label, column in
             zip(labels if labels is not None else [""] * k, data.matrix.index, strict=True)]
    fig, ax = _logo_axes(k)
    stack_glyphs(ax, data.matrix.to_numpy(), list(data.matrix.columns))
    for position in np.flatnonzero(data.gap_rich):
        ax.axvspan(position - 0.45, position + 0.45, facecolor=GAP_RICH_COLOUR, edgecolor=CLASS_COLOURS["gap-rich"],
                   hatch="///", linewidth=0.0, zorder=0)
    ax.set_xlim(-0.6, k - 0.4)
    ax.set_ylim(0.0, LOG2_20)
    ax.set_yticks([0, 1, 2, 3, 4])
    ax.set_ylabel("information (bits)")
    ax.set_xticks(range(k), ticks, rotation=90 if k > 12 or max(map(len, ticks)) > 3 else 0,
                  fontsize=8 if k <= 60 else 6)
    ax.set_xlabel("frame position" if labels is not None and any(labels) else "alignment column")
    ax.spines[["top", "right"]].set_visible(False)
    if title:
        ax.set_title(plain_text(title), fontsize=10, loc="left")
    handles = [Patch(facecolor=colour, label=f"{name} ({letters})")
               for name, (letters, colour) in GROUP_COLOURS.items()]
    if data.gap_rich.any():
        handles.append(Patch(facecolor=GAP_RICH_COLOUR, edgecolor=CLASS_COLOURS["gap-rich"], hatch="///",
                             linewidth=0.0, label=f"gap-rich (> {max_gaps:.0%} gaps)"))
    box = ax.get_position()
    fig.legend(handles=handles, loc="upper left", bbox_to_anchor=(box.x1 + 0.1 / fig.get_figwidth(), box.y1),
               fontsize=7, frameon=False, handlelength=1.0)
    return finish_figure(fig, path, inputs)


def _logo_axes(k: int):
    """A figure and its one axes laid out by :data:`LOGO_GEOMETRY` for ``k`` columns."""
    g = LOGO_GEOMETRY
    axes_width = max(g["min_axes_width"], g["column_width"] * k)
    width = g["left"] + axes_width + g["right"]
    height = g["bottom"] + g["axes_height"] + g["top"]
    fig = Figure(figsize=(width, height))
    ax = fig.add_axes((g["left"] / width, g["bottom"] / height, axes_width / width, g["axes_height"] / height))
    return fig, ax

