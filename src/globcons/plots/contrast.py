"""The group-contrast figure: contrast along the frame, and the top positions as one logo per group."""

from __future__ import annotations

import math
import os
from collections.abc import Mapping, Sequence

import numpy as np
import pandas as pd
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from globcons.analysis.contrast import GroupedRows, group_counts, group_labels, top_contrast
from globcons.core.alignment import Alignment
from globcons.core.alphabet import STANDARD
from globcons.core.scores import LOG2_20, information_bits
from globcons.core.vocabulary import CONTRAST_CLASSES
from globcons.core.weights import compute_weights
from globcons.plots.axes import draw_helix_track, position_axis, shade_helices
from globcons.plots.glyphs import stack_glyphs
from globcons.plots.output import figure_format, finish_figure, plain_text
from globcons.plots.palette import CONTRAST_COLOURS, OKABE_ITO, tinted

__all__ = ["draw_contrast"]


def _draw_group_logos(fig: Figure, grid, alignment: Alignment, groups, meta: dict, chosen: pd.DataFrame,
                      columns: np.ndarray) -> None:
    """One logo per kept group of the chosen columns, weighted as in the table (on the whole alignment)."""
    kept = list(meta["groups"])
    row_weights = compute_weights(alignment.codes, meta["weights"], meta.get("identity") or 0.8).values
    grouped = GroupedRows.select(alignment, group_labels(alignment, groups), row_weights, kept)
    counts = group_counts(np.ascontiguousarray(grouped.codes[:, columns - 1]), grouped.labels, len(kept),
                          grouped.weights)
    ticks = [str(label) if label else str(column)
             for label, column in zip(chosen["frame_label"], columns, strict=True)]
    for k, group in enumerate(kept):
        logo_ax = fig.add_subplot(grid[2 + k])
        stack_glyphs(logo_ax, information_bits(counts[k]), list(STANDARD))
        logo_ax.set_xlim(-0.6, len(columns) - 0.4)
        logo_ax.set_ylim(0.0, LOG2_20)
        logo_ax.set_yticks([0, 2, 4])
        logo_ax.set_ylabel(f"{plain_text(group)}\n(bits)", fontsize=8)
        logo_ax.set_xticks(range(len(columns)), ticks if k == len(kept) - 1 else [""] * len(columns), fontsize=8)
        logo_ax.spines[["top", "right"]].set_visible(False)
    logo_ax.set_xlabel("top positions by contrast, in column order", fontsize=9)


def draw_contrast(table: pd.DataFrame, alignment: Alignment, groups: Sequence[str | None] | Mapping[str, str],
                  top: int = 12, path: str | os.PathLike | None = None, title: str | None = None,
                  inputs: Sequence = ()):
    """Draw the contrast along the frame (helices as bands) and the top positions as per-group logos.

    Parameters
    ----------
    table
        From :func:`contrast_columns` on ``alignment`` and ``groups``.
    alignment, groups
        What the table was computed from (the logos are drawn from the rows of each group, weighted as
        in the table: on the whole alignment).
    top
        Number of positions in the logos (the highest contrast, not gap-rich; drawn in column order).
    path
        Write the figure here (format by extension); None: only return it.
    title
        Figure title (default: the table's input file).

    Returns
    -------
    matplotlib.figure.Figure
        Axes from top to bottom: helix bands, contrast along the frame (points coloured by class, the top
        positions ringed), then one logo per kept group (information in bits, Schneider et al. 1986
        small-sample correction).
    """
    if path is not None:
        figure_format(path)
    meta = table.attrs
    kept = list(meta["groups"])
    chosen = top_contrast(table, top).sort_values("column")
    columns = chosen["column"].to_numpy(dtype=np.int64)
    labelled = table["frame_label"].astype(str) != ""
    shown = table[labelled] if labelled.any() else table
    labels = list(shown["frame_label"].astype(str)) if labelled.any() else [""] * len(shown)
    x = np.arange(len(shown))
    values = shown["contrast"].to_numpy(dtype=np.float64)

    width = float(np.clip(2.5 + 0.07 * len(shown), 8.0, 22.0))
    heights = [0.35, 2.4] + [1.25] * len(kept)
    fig = Figure(figsize=(width, 1.2 + sum(heights)), layout="constrained")
    grid = fig.add_gridspec(2 + len(kept), 1, height_ratios=heights)
    helix_ax = fig.add_subplot(grid[0])
    ax = fig.add_subplot(grid[1], sharex=helix_ax)
    draw_helix_track(helix_ax, labels)
    shade_helices(ax, labels)
    ax.plot(x, np.nan_to_num(values), color=tinted("score line"), linewidth=0.8, zorder=1)
    classes = shown["class"].astype(str).to_numpy()
    for name in CONTRAST_CLASSES:
        mask = classes == name
        if mask.any():
            ax.scatter(x[mask], np.nan_to_num(values[mask]), s=14, color=CONTRAST_COLOURS[name], edgecolors="none",
                       zorder=3, label=f"{name} ({int(mask.sum())})")
    where = np.flatnonzero(np.isin(shown["column"].to_numpy(), columns))
    ax.scatter(x[where], values[where], s=60, facecolors="none", edgecolors=OKABE_ITO["black"], linewidths=0.8,
               zorder=4)
    ax.set_xlim(-0.7, len(shown) - 0.3)
    ax.set_ylim(0.0, max(math.log2(max(len(kept), 2)), float(np.nanmax(values)) if np.isfinite(values).any() else 0.0)
                * 1.05)
    ax.set_ylabel("contrast (bits)\nJensen-Shannon divergence", fontsize=9)
    position_axis(ax, shown, labels, bool(labelled.any()))
    ax.spines[["top", "right"]].set_visible(False)
    handles, names = ax.get_legend_handles_labels()
    handles.append(Line2D([], [], marker="o", linestyle="none", markerfacecolor="none",
                          markeredgecolor=OKABE_ITO["black"], markersize=7))
    names.append(f"in the logos (top {len(columns)})")
    ax.legend(handles, names, loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=7, frameon=False)

    if columns.size:
        _draw_group_logos(fig, grid, alignment, groups, meta, chosen, columns)
    source = meta.get("input")
    heading = title if title is not None else (f"{os.path.basename(str(source))}: group contrast" if source
                                               else "group contrast")
    helix_ax.set_title(plain_text(heading), fontsize=10, loc="left")
    return finish_figure(fig, path, inputs)

