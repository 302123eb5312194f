"""Figures: a weighted sequence logo, the conservation profile along the helix frame, and a departure heat map.

Every figure is a :class:`matplotlib.figure.Figure` built directly (no pyplot state, so no GUI backend is
ever needed and a notebook's backend is left alone) and coloured only from :mod:`globcons.plots.palette`. The
output format follows the file's extension (:data:`FIGURE_FORMATS`); files are written atomically.

Logo heights
------------
Per column, with ``p`` the weighted frequencies of the 20 standard residues (gaps, unknowns, U and O left
out) and ``n`` their summed weight,

    R = log2(20) - (H(p) + e(n)),   e(n) = (s - 1) / (2 ln 2 * n),  s = 20,

the information of the column in bits, with the small-sample correction ``e(n)`` of Schneider, Stormo,
Gold & Ehrenfeucht 1986 (J Mol Biol 188:415) in its usual large-n approximation. ``n`` is the column's
*weighted* residue count: with Henikoff weights (scaled to sum to the number of distinct rows) that is the
column's effective number of residues, so near-duplicate sequences do not buy a smaller correction. R is
clipped at 0, and letter ``a`` is drawn ``p[a] * R`` bits high.
"""

from __future__ import annotations

import functools
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Iterable, Sequence

import numpy as np
import pandas as pd
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, PathPatch
from matplotlib.transforms import Affine2D

from globcons.core.alignment import Alignment
from globcons.core.alphabet import GAP, N_STANDARD, STANDARD
from globcons.core.counts import column_counts
from globcons.errors import OptionError
from globcons.frame.reference import HELICES, is_label, segment_of
from globcons.plots.palette import (ABSENT_COLOUR, CLASS_COLOURS, DEVIATION_COLOURS, GAP_RICH_COLOUR, GROUP_COLOURS,
                      OKABE_ITO, RESIDUE_COLOURS, tint)
from globcons.io.tables import atomic_output
from globcons.core.weights import compute_weights

__all__ = [
    "FIGURE_FORMATS",
    "FIGURE_DPI",
    "PROFILE_SCORES",
    "DEVIATION_ORDER",
    "figure_format",
    "save_figure",
    "small_sample_correction",
    "information_matrix",
    "LogoData",
    "logo_matrix",
    "column_range",
    "draw_logo",
    "draw_profile",
    "DepartureMatrix",
    "departure_matrix",
    "draw_departure_heatmap",
]

#: Output extension -> matplotlib format.
FIGURE_FORMATS: dict[str, str] = {".png": "png", ".svg": "svg", ".pdf": "pdf"}
#: Resolution of raster (PNG) output; a figure of w x h inches gives w*FIGURE_DPI x h*FIGURE_DPI pixels.
FIGURE_DPI = 150

_LOG2_20 = math.log2(N_STANDARD)

#: Scores the profile can show: column -> (transform of the value, y-axis label). entropy_norm is shown
#: as 1 - entropy_norm so that, like jsd, higher means more conserved.
PROFILE_SCORES: dict[str, tuple[str, str]] = {
    "entropy_norm": ("one_minus", "conservation: 1 − entropy / log2 20\n(1 = invariant, 0 = uniform)"),
    "entropy_bits": ("identity", "Shannon entropy (bits)\nlower = more conserved"),
    "property_entropy": ("identity", "property-class entropy (bits)\nlower = more conserved"),
    "jsd": ("identity", "Jensen-Shannon divergence (bits)\nhigher = more conserved"),
    "gap_fraction": ("identity", "weighted gap fraction"),
    "n_eff": ("identity", "effective sequences\nwith a residue"),
}

#: Deviations of the heat map from least to most severe; a cell shows the most severe of its residues.
DEVIATION_ORDER: tuple[str, ...] = ("none", "insertion", "leaves-group", "breaks-invariant")


# ---------------------------------------------------------------------------------------------------
# Output


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
        fig.savefig(stream, format=fmt, dpi=FIGURE_DPI, metadata=metadata)
    return str(path)


def _finish(fig: Figure, path: str | os.PathLike | None, inputs: Iterable = ()) -> Figure:
    if path is not None:
        save_figure(fig, path, inputs)
    return fig


# ---------------------------------------------------------------------------------------------------
# Logo


def small_sample_correction(n: np.ndarray | float, s: int = N_STANDARD) -> np.ndarray:
    """e(n) = (s - 1) / (2 ln 2 n), in bits (Schneider et al. 1986); infinite where n is 0.

    Parameters
    ----------
    n
        Residues observed per column (weighted), any shape.
    s
        Alphabet size.
    """
    n = np.asarray(n, dtype=np.float64)
    with np.errstate(divide="ignore"):
        return np.where(n > 0, (s - 1) / (2.0 * math.log(2.0) * np.where(n > 0, n, 1.0)), np.inf)


def information_matrix(counts: np.ndarray, small_sample: bool = True) -> pd.DataFrame:
    """Letter heights of a logo, in bits.

    Parameters
    ----------
    counts
        Weighted counts, shape (L, 24) as from :func:`globcons.core.counts.column_counts` (or (L, >= 20):
        only the first 20 codes, the standard residues, are used).
    small_sample
        Subtract the small-sample correction e(n) (see the module notes; n = the column's weighted count of
        the 20 standard residues).

    Returns
    -------
    pandas.DataFrame
        Shape (L, 20): index 1..L (column numbers), columns the letters of ``STANDARD``; row sums are the
        columns' information R, clipped at 0; columns without a standard residue are all zero.

    Examples
    --------
    >>> import numpy as np
    >>> counts = np.zeros((1, 24)); counts[0, STANDARD.index("W")] = 1000.0
    >>> round(float(information_matrix(counts, small_sample=False).loc[1, "W"]), 4)
    4.3219
    """
    counts = np.asarray(counts, dtype=np.float64)
    if counts.ndim != 2 or counts.shape[1] < N_STANDARD:
        raise ValueError(f"counts must have shape (L, 24), got {counts.shape}")
    residues = counts[:, :N_STANDARD]
    n = residues.sum(axis=1)
    has = n > 0
    p = np.zeros_like(residues)
    p[has] = residues[has] / n[has, None]
    with np.errstate(divide="ignore", invalid="ignore"):
        entropy = -np.where(p > 0, p * np.log2(np.where(p > 0, p, 1.0)), 0.0).sum(axis=1)
    correction = small_sample_correction(n) if small_sample else np.zeros_like(n)
    information = np.where(has, np.clip(_LOG2_20 - entropy - np.where(has, correction, 0.0), 0.0, None), 0.0)
    heights = p * information[:, None]
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
    total = counts.sum(axis=1)
    gaps = np.where(total > 0, counts[:, GAP] / np.where(total > 0, total, 1.0), 0.0)
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
            present = [l for l in labels if l]
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
             zip(labels if labels is not None else [""] * k, data.matrix.index)]
    fig = Figure(figsize=(max(5.0, 1.9 + 0.3 * k), 3.2), layout="constrained")
    ax = fig.add_subplot()
    _stack_glyphs(ax, data.matrix.to_numpy(), list(data.matrix.columns))
    for position in np.flatnonzero(data.gap_rich):
        ax.axvspan(position - 0.45, position + 0.45, facecolor=GAP_RICH_COLOUR, edgecolor=CLASS_COLOURS["gap-rich"],
                   hatch="///", linewidth=0.0, zorder=0)
    ax.set_xlim(-0.6, k - 0.4)
    ax.set_ylim(0.0, _LOG2_20)
    ax.set_yticks([0, 1, 2, 3, 4])
    ax.set_ylabel("information (bits)")
    ax.set_xticks(range(k), ticks, rotation=90 if k > 12 or max(map(len, ticks)) > 3 else 0,
                  fontsize=8 if k <= 60 else 6)
    ax.set_xlabel("frame position" if labels is not None and any(labels) else "alignment column")
    ax.spines[["top", "right"]].set_visible(False)
    if title:
        ax.set_title(title, fontsize=10, loc="left")
    handles = [Patch(facecolor=colour, label=f"{name} ({letters})")
               for name, (letters, colour) in GROUP_COLOURS.items()]
    if data.gap_rich.any():
        handles.append(Patch(facecolor=GAP_RICH_COLOUR, edgecolor=CLASS_COLOURS["gap-rich"], hatch="///",
                             linewidth=0.0, label=f"gap-rich (> {max_gaps:.0%} gaps)"))
    fig.legend(handles=handles, loc="outside right upper", fontsize=7, frameon=False, handlelength=1.0)
    return _finish(fig, path, inputs)


#: Glyph box: the share of a column's width a letter fills, and of its height left blank (half below, half
#: above) so that stacked letters do not touch.
_GLYPH_WIDTH = 0.88
_GLYPH_VPAD = 0.04


@functools.lru_cache(maxsize=None)
def _unit_glyph(letter: str):
    """logomaker's glyph path of ``letter`` at x = 0 filling y 0..1 (built once per letter).

    logomaker scales a letter's outline into its box by an affine map in which x does not depend on the
    height, so one unit-height outline per letter, scaled and moved, gives exactly the glyph logomaker would
    build for any cell; building glyphs one by one costs about 2 ms each (two passes over the outline's
    Bezier extents), this costs a matrix product.
    """
    from logomaker import Glyph  # imported here: logomaker costs about a second to import

    scratch = Figure().add_subplot()
    glyph = Glyph(0.0, letter, floor=0.0, ceiling=1.0, ax=scratch, width=_GLYPH_WIDTH, vpad=_GLYPH_VPAD,
                  font_name="sans", color=RESIDUE_COLOURS[letter])
    return glyph.patch.get_path()


def _stack_glyphs(ax, heights: np.ndarray, letters: Sequence[str]) -> list[PathPatch]:
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


# ---------------------------------------------------------------------------------------------------
# Profile


def _helix_runs(labels: Sequence[str]) -> list[tuple[str, int, int]]:
    """(helix, first index, last index) of each maximal run of positions in one helix."""
    runs: list[tuple[str, int, int]] = []
    for index, label in enumerate(labels):
        segment = segment_of(label) if label else ""
        if segment in HELICES and runs and runs[-1][0] == segment and runs[-1][2] == index - 1:
            runs[-1] = (segment, runs[-1][1], index)
        elif segment in HELICES:
            runs.append((segment, index, index))
    return runs


def _frame_ticks(labels: Sequence[str], min_gap: float = 2.5) -> list[int]:
    """Positions to label on a long frame axis, no two closer than ``min_gap`` positions.

    Candidates, by priority: the first place of each helix, the first place of any other segment, every
    fifth place; a candidate too close to one already kept is dropped (so "AB1" gives way to "B1").
    """
    first_helix, first_other, fifth = [], [], []
    for index, label in enumerate(labels):
        if not label:
            continue
        segment = segment_of(label)
        place = int(label[len(segment):])
        if place == 1:
            (first_helix if segment in HELICES else first_other).append(index)
        elif place % 5 == 0:
            fifth.append(index)
    kept: list[int] = []
    for index in first_helix + first_other + fifth:
        if all(abs(index - other) >= min_gap for other in kept):
            kept.append(index)
    return sorted(kept)


def _spread(positions: Sequence[float], min_gap: float) -> np.ndarray:
    """Move sorted positions apart to at least ``min_gap``, each crowded run centred on where it was."""
    spread = np.asarray(positions, dtype=np.float64).copy()
    for _ in range(len(spread)):  # merging runs converges in at most n passes
        moved = False
        start = 0
        while start < len(spread):
            end = start
            while end + 1 < len(spread) and spread[end + 1] - spread[end] < min_gap - 1e-9:
                end += 1
            if end > start:
                centre = float(np.mean(positions[start:end + 1]))
                width = min_gap * (end - start)
                target = centre - width / 2 + min_gap * np.arange(end - start + 1)
                if not np.allclose(target, spread[start:end + 1]):
                    spread[start:end + 1] = target
                    moved = True
            start = end + 1
        if not moved:
            break
    return spread


def _position_axis(ax, shown: pd.DataFrame, labels: Sequence[str], labelled: bool) -> None:
    """X ticks along the drawn columns: frame labels (thinned) when the columns carry them, else numbers."""
    if labelled:
        ticks = _frame_ticks(labels) if len(labels) > 40 else list(range(len(labels)))
        ax.set_xticks(ticks, [labels[i] for i in ticks], rotation=90, fontsize=7)
        ax.set_xlabel("frame position (columns with a frame label)", fontsize=9)
    else:
        numbers = shown["column"].astype(int).to_numpy()
        step = max(1, int(math.ceil(len(numbers) / 40)))
        ticks = list(range(0, len(numbers), step))
        ax.set_xticks(ticks, [str(numbers[i]) for i in ticks], rotation=90, fontsize=7)
        ax.set_xlabel("alignment column", fontsize=9)


def _draw_helix_track(ax, labels: Sequence[str]) -> None:
    band = tint(OKABE_ITO["sky blue"], 0.55)
    for helix, first, last in _helix_runs(labels):
        ax.axvspan(first - 0.5, last + 0.5, ymin=0.1, ymax=0.9, facecolor=band, edgecolor=OKABE_ITO["blue"],
                   linewidth=0.6)
        ax.text((first + last) / 2, 0.5, helix, ha="center", va="center", fontsize=8, fontweight="bold",
                color=OKABE_ITO["black"])
    ax.set_ylim(0, 1)
    ax.set_yticks([])
    ax.tick_params(axis="x", which="both", bottom=False, labelbottom=False)
    for side in ("top", "right", "left", "bottom"):
        ax.spines[side].set_visible(False)


def draw_profile(table: pd.DataFrame, path: str | os.PathLike | None = None, score: str = "entropy_norm",
                 title: str | None = None, inputs: Iterable = ()) -> Figure:
    """Draw a conservation score along the frame, with the helices, column classes and functional sites.

    Parameters
    ----------
    table
        A column table (:func:`globcons.analysis.columns.score_columns`).
    path
        Write the figure here (format by extension); None: only return it.
    score
        A key of :data:`PROFILE_SCORES`. ``entropy_norm`` is plotted as ``1 - entropy_norm``
        ("conservation", 1 = invariant) so that up always means more conserved for it; the others are
        plotted as they are, with the direction stated on the axis.
    title
        Figure title (default: the table's input file).
    inputs
        Paths the output must not overwrite.

    Returns
    -------
    matplotlib.figure.Figure
        Three stacked axes sharing x: site labels, helix bands, the score. x runs over the columns that
        have frame labels (all columns when none has one), one step per column.
    """
    if score not in PROFILE_SCORES:
        raise OptionError(f"unknown score {score!r} for the profile; choose one of {', '.join(PROFILE_SCORES)}")
    if path is not None:
        figure_format(path)
    labelled = table["frame_label"].astype(str) != ""
    shown = table[labelled] if labelled.any() else table
    if shown.empty:
        raise OptionError("the column table is empty: nothing to draw")
    labels = list(shown["frame_label"].astype(str)) if labelled.any() else [""] * len(shown)
    transform, axis_label = PROFILE_SCORES[score]
    values = shown[score].to_numpy(dtype=np.float64)
    if transform == "one_minus":
        values = 1.0 - values
    x = np.arange(len(shown))
    width = float(np.clip(2.5 + 0.075 * len(shown), 7.0, 24.0))
    fig = Figure(figsize=(width, 4.6), layout="constrained")
    grid = fig.add_gridspec(3, 1, height_ratios=[1.15, 0.35, 3.0], hspace=0.0)
    ax = fig.add_subplot(grid[2])
    sites_ax = fig.add_subplot(grid[0], sharex=ax)
    helix_ax = fig.add_subplot(grid[1], sharex=ax)

    for _, first, last in _helix_runs(labels):
        ax.axvspan(first - 0.5, last + 0.5, facecolor=tint(OKABE_ITO["sky blue"], 0.88), linewidth=0, zorder=0)
    _draw_helix_track(helix_ax, labels)
    ax.plot(x, values, color=tint(OKABE_ITO["black"], 0.55), linewidth=0.8, zorder=1)
    classes = shown["class"].astype(str).to_numpy()
    for name, colour in CLASS_COLOURS.items():
        mask = classes == name
        if mask.any():
            ax.scatter(x[mask], values[mask], s=16, color=colour, edgecolors="none", zorder=3,
                       label=f"{name} ({int(mask.sum())})")

    sites = shown["sites"].astype(str).to_numpy() if "sites" in shown else np.array([""] * len(shown))
    site_positions = np.flatnonzero(sites != "")
    # Neighbouring sites (E7, E8) would print over each other: their labels are spread apart and tied
    # to their positions by short leader lines.
    label_gap = 0.11 / (max(width - 2.4, 1.0) / max(len(shown), 1))  # ~ one 6.5 pt line, in positions
    text_x = _spread(site_positions.astype(float), label_gap) if site_positions.size else site_positions
    for index, where in zip(site_positions, text_x):
        ax.axvline(index, color=OKABE_ITO["black"], linewidth=0.5, linestyle=(0, (2, 2)), zorder=2)
        sites_ax.plot([index, index, where], [0.0, 0.04, 0.12], color=OKABE_ITO["black"], linewidth=0.5)
        name = labels[index] or f"col {int(shown['column'].iloc[index])}"
        sites_ax.text(where, 0.14, f"{name} {sites[index].replace(',', ', ')}", rotation=90, ha="center",
                      va="bottom", fontsize=6.5)
    if site_positions.size:
        ax.scatter(x[site_positions], values[site_positions], s=44, facecolors="none",
                   edgecolors=OKABE_ITO["black"], linewidths=0.8, zorder=4)
    sites_ax.set_ylim(0, 1)
    sites_ax.axis("off")

    finite = values[np.isfinite(values)]
    top = 1.0 if score in ("entropy_norm", "gap_fraction") else (float(finite.max()) if finite.size else 1.0)
    ax.set_ylim(min(0.0, float(finite.min()) if finite.size else 0.0) - 0.03 * top, top * 1.05 or 1.0)
    ax.set_xlim(-0.7, len(shown) - 0.3)
    ax.set_ylabel(axis_label, fontsize=9)
    _position_axis(ax, shown, labels, bool(labelled.any()))
    ax.spines[["top", "right"]].set_visible(False)
    handles, names = ax.get_legend_handles_labels()
    if site_positions.size:
        handles.append(Line2D([], [], marker="o", linestyle="none", markerfacecolor="none",
                              markeredgecolor=OKABE_ITO["black"], markersize=7))
        names.append("functional site")
    ax.legend(handles, names, loc="upper center", bbox_to_anchor=(0.5, -0.22), ncol=len(handles), fontsize=8,
              frameon=False, handletextpad=0.3, columnspacing=1.2)
    source = table.attrs.get("input")
    heading = title if title is not None else (f"{os.path.basename(str(source))}: {score}" if source else score)
    sites_ax.set_title(heading, fontsize=10, loc="left")
    return _finish(fig, path, inputs)


# ---------------------------------------------------------------------------------------------------
# Departure heat map


@dataclass(frozen=True)
class DepartureMatrix:
    """The data behind the departure heat map.

    Attributes
    ----------
    ids
        (Q,) query ids, in first-appearance order.
    positions
        (P,) column headings: frame labels, or family column numbers where a column has no label.
    columns
        (P,) family column numbers, ascending.
    levels
        (Q, P) int: -1 where the query has no residue at the position, else the index in
        :data:`DEVIATION_ORDER` of the most severe deviation of its residues there.
    """

    ids: tuple[str, ...]
    positions: tuple[str, ...]
    columns: np.ndarray
    levels: np.ndarray


def departure_matrix(residues: pd.DataFrame) -> DepartureMatrix:
    """Queries x family positions, each cell the most severe deviation there.

    Parameters
    ----------
    residues
        The per-residue table of :func:`globcons.analysis.scan.scan` (``id``, ``position``, ``frame_label``,
        ``column``, ``deviation``).

    Notes
    -----
    A residue inserted *between* two placed residues of its query is shown in the cell of the position
    before it (the insertion follows that position); residues before the first or after the last placed
    residue (e.g. an initiator Met or a tag) are overhangs, not drawn.
    """
    needed = {"id", "frame_label", "column", "deviation"}
    missing = needed - set(residues.columns)
    if missing:
        raise OptionError(f"the residue table lacks {', '.join(sorted(missing))} "
                          "(it comes from `globcons scan --residues`)")
    unknown = set(residues["deviation"].astype(str)) - set(DEVIATION_ORDER)
    if unknown:
        raise OptionError(f"unknown deviation {sorted(unknown)[0]!r}; "
                          f"expected one of {', '.join(DEVIATION_ORDER)}")
    ids = tuple(dict.fromkeys(residues["id"].astype(str)))
    placed = residues[residues["column"].notna()]
    columns = np.array(sorted(set(placed["column"].astype(int))), dtype=np.int64)
    named = placed[placed["frame_label"].astype(str) != ""].drop_duplicates("column")
    heading = dict(zip(named["column"].astype(int), named["frame_label"].astype(str)))
    positions = tuple(heading.get(int(c), str(int(c))) for c in columns)
    row_of = pd.Series(np.arange(len(ids)), index=list(ids))
    frame = pd.DataFrame({
        "row": row_of.loc[residues["id"].astype(str)].to_numpy(),
        "position": (residues["position"].to_numpy() if "position" in residues.columns
                     else np.arange(len(residues))),
        "cell": pd.Series(np.searchsorted(columns, residues["column"].fillna(-1).astype(int).to_numpy()),
                          dtype="float64").where(residues["column"].notna().to_numpy()),
        "rank": residues["deviation"].astype(str).map({name: i for i, name in enumerate(DEVIATION_ORDER)})
                .to_numpy(),
    }).sort_values(["row", "position"], kind="stable")
    # An unplaced residue belongs to the cell of the last placed residue before it, if one follows it too.
    by_query = frame.groupby("row", sort=False)["cell"]
    before, after = by_query.ffill(), by_query.bfill()
    inside = (before.notna() & after.notna()).to_numpy()
    levels = np.full((len(ids), len(columns)), -1, dtype=np.int64)
    np.maximum.at(levels, (frame["row"].to_numpy()[inside], before.to_numpy()[inside].astype(np.int64)),
                  frame["rank"].to_numpy()[inside].astype(np.int64))
    return DepartureMatrix(ids, positions, columns, levels)


def draw_departure_heatmap(residues: pd.DataFrame, path: str | os.PathLike | None = None,
                           title: str | None = None, inputs: Iterable = ()) -> Figure:
    """Draw queries (rows) x frame positions (columns), each cell coloured by the query's deviation there.

    Parameters
    ----------
    residues
        The per-residue table of a scan (see :func:`departure_matrix` for how cells are filled).
    path
        Write the figure here (format by extension); None: only return it.
    title
        Figure title.
    inputs
        Paths the output must not overwrite.

    Returns
    -------
    matplotlib.figure.Figure
        The heat map under a helix track; every query id is a tick label up to 200 queries, beyond that
        every k-th (the figure stops growing at 200 rows' height).
    """
    from matplotlib.colors import BoundaryNorm, ListedColormap

    if path is not None:
        figure_format(path)
    data = departure_matrix(residues)
    n_rows, n_cols = data.levels.shape
    if n_rows == 0 or n_cols == 0:
        raise OptionError("no placed residues to draw: the scan placed no query on the family's columns")
    colours = [ABSENT_COLOUR] + [DEVIATION_COLOURS[name] for name in DEVIATION_ORDER]
    shown_rows = min(n_rows, 200)
    width = float(np.clip(3.0 + 0.07 * n_cols, 7.0, 24.0))
    fig = Figure(figsize=(width, 2.2 + 0.11 * shown_rows), layout="constrained")
    grid = fig.add_gridspec(2, 1, height_ratios=[0.3, 1.9 + 0.11 * shown_rows])
    ax = fig.add_subplot(grid[1])
    helix_ax = fig.add_subplot(grid[0], sharex=ax)
    ax.imshow(data.levels + 1, aspect="auto", interpolation="nearest", cmap=ListedColormap(colours),
              norm=BoundaryNorm(np.arange(-0.5, len(colours) + 0.5), len(colours)))
    labelled = [p if is_label(p) else "" for p in data.positions]
    _draw_helix_track(helix_ax, labelled)
    step = 1 if n_rows <= 200 else int(math.ceil(n_rows / 200))
    rows = list(range(0, n_rows, step))
    font = 7.0 if n_rows <= 60 else 6.5  # rows are 0.11 in (about 8 pt) apart, labelled or not
    ax.set_yticks(rows, [data.ids[i] for i in rows], fontsize=font)
    if any(labelled):
        ticks = _frame_ticks(labelled) if n_cols > 40 else list(range(n_cols))
        ax.set_xlabel("frame position", fontsize=9)
    else:
        ticks = list(range(0, n_cols, max(1, int(math.ceil(n_cols / 40)))))
        ax.set_xlabel("family column", fontsize=9)
    ax.set_xticks(ticks, [data.positions[i] for i in ticks], rotation=90, fontsize=7)
    ax.set_ylabel(f"query ({n_rows})" if step == 1 else f"query ({n_rows}; 1 id in {step} shown)", fontsize=9)
    names = {"none": "no departure", "insertion": "insertion after", "leaves-group": "leaves group",
             "breaks-invariant": "breaks invariant"}
    edge = CLASS_COLOURS["gap-rich"]  # a grey outline so that the white "no residue" swatch shows
    handles = [Patch(facecolor=DEVIATION_COLOURS[name], edgecolor=edge, linewidth=0.4, label=names[name])
               for name in reversed(DEVIATION_ORDER)]
    handles.append(Patch(facecolor=ABSENT_COLOUR, edgecolor=edge, linewidth=0.4, label="no residue"))
    fig.legend(handles=handles, loc="outside right upper", fontsize=8, frameon=False)
    if title:
        helix_ax.set_title(title, fontsize=10, loc="left")
    return _finish(fig, path, inputs)
