"""The conservation profile: a score along the frame positions, helices as bands, classes and sites marked."""

from __future__ import annotations

import os
from collections.abc import Iterable

import numpy as np
import pandas as pd
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from globcons.analysis.columns import SCORE_COLUMNS, SHOWN_SCORES, class_counts
from globcons.errors import OptionError
from globcons.plots.axes import draw_helix_track, position_axis, shade_helices, spread_labels
from globcons.plots.output import figure_format, finish_figure, plain_text
from globcons.plots.palette import CLASS_COLOURS, OKABE_ITO, tinted

__all__ = ["PROFILE_SCORES", "draw_profile"]


#: Scores the profile can show: the table's shown scores (higher = more conserved, gap-aware), each with the
#: y-axis label that names exactly what is plotted.
PROFILE_SCORES: dict[str, str] = {name: text.replace(": ", ":\n", 1) if ": " in text else text
                                  for name, text in SHOWN_SCORES.items()}


def _mark_sites(ax, sites_ax, shown: pd.DataFrame, labels: list[str], values: np.ndarray, width: float) -> np.ndarray:
    """Mark the functional sites: a dashed line and ring on the plot, the name and kinds on the axes above.

    Neighbouring sites (E7, E8) would print over each other, so their names are spread apart and tied to
    their positions by short leader lines. Returns the positions (indices into ``shown``) of the sites.
    """
    sites = shown["sites"].astype(str).to_numpy() if "sites" in shown else np.array([""] * len(shown))
    site_positions = np.flatnonzero(sites != "")
    label_gap = 0.11 / (max(width - 2.4, 1.0) / max(len(shown), 1))  # ~ one 6.5 pt line, in positions
    text_x = spread_labels(site_positions.astype(float), label_gap) if site_positions.size else site_positions
    for index, where in zip(site_positions, text_x, strict=True):
        ax.axvline(index, color=OKABE_ITO["black"], linewidth=0.5, linestyle=(0, (2, 2)), zorder=2)
        sites_ax.plot([index, index, where], [0.0, 0.04, 0.12], color=OKABE_ITO["black"], linewidth=0.5)
        name = labels[index] or f"col {int(shown['column'].iloc[index])}"
        sites_ax.text(where, 0.14, f"{name} {sites[index].replace(',', ', ')}", rotation=90, ha="center",
                      va="bottom", fontsize=6.5)
    if site_positions.size:
        ax.scatter(site_positions, values[site_positions], s=44, facecolors="none",
                   edgecolors=OKABE_ITO["black"], linewidths=0.8, zorder=4)
    sites_ax.set_ylim(0, 1)
    sites_ax.axis("off")
    return site_positions


def draw_profile(table: pd.DataFrame, path: str | os.PathLike | None = None, score: str = "conservation",
                 title: str | None = None, inputs: Iterable = ()) -> Figure:
    """Draw a conservation score along the frame, with the helices, column classes and functional sites.

    Parameters
    ----------
    table
        A column table (:func:`globcons.analysis.columns.score_columns`).
    path
        Write the figure here (format by extension); None: only return it.
    score
        A key of :data:`PROFILE_SCORES` (default ``conservation``), plotted as it is in the table: every
        one but ``rates`` is higher where a column is more conserved, and gaps lower it; ``rates`` (the
        table's ``rate``) is lower where a column evolves more slowly.
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
    axis_label = PROFILE_SCORES[score]
    column = SCORE_COLUMNS.get(score, score)
    if column not in shown:
        raise OptionError(f"the column table has no {column!r} column (the {score} score); add it first")
    values = shown[column].to_numpy(dtype=np.float64)
    x = np.arange(len(shown))
    width = float(np.clip(2.5 + 0.075 * len(shown), 7.0, 24.0))
    fig = Figure(figsize=(width, 4.6), layout="constrained")
    grid = fig.add_gridspec(3, 1, height_ratios=[1.15, 0.35, 3.0], hspace=0.0)
    ax = fig.add_subplot(grid[2])
    sites_ax = fig.add_subplot(grid[0], sharex=ax)
    helix_ax = fig.add_subplot(grid[1], sharex=ax)

    shade_helices(ax, labels)
    draw_helix_track(helix_ax, labels)
    ax.plot(x, values, color=tinted("score line"), linewidth=0.8, zorder=1)
    classes = shown["class"].astype(str).to_numpy()
    counts = class_counts(table)  # the summary line's counts: every column, drawn or not
    handles, names = [], []
    for name, colour in CLASS_COLOURS.items():
        mask = classes == name
        if mask.any():
            ax.scatter(x[mask], values[mask], s=16, color=colour, edgecolors="none", zorder=3)
        if counts.get(name, 0):
            handles.append(Line2D([], [], marker="o", linestyle="none", markerfacecolor=colour,
                                  markeredgecolor="none", markersize=5))
            names.append(f"{name} ({counts[name]})")

    site_positions = _mark_sites(ax, sites_ax, shown, labels, values, width)

    finite = values[np.isfinite(values)]
    top = 1.0 if score in ("conservation", "property_conservation") else (float(finite.max()) if finite.size else 1.0)
    ax.set_ylim(min(0.0, float(finite.min()) if finite.size else 0.0) - 0.03 * top, top * 1.05 or 1.0)
    ax.set_xlim(-0.7, len(shown) - 0.3)
    ax.set_ylabel(axis_label, fontsize=9)
    position_axis(ax, shown, labels, bool(labelled.any()))
    ax.spines[["top", "right"]].set_visible(False)
    if site_positions.size:
        handles.append(Line2D([], [], marker="o", linestyle="none", markerfacecolor="none",
                              markeredgecolor=OKABE_ITO["black"], markersize=7))
        names.append("functional site")
    ax.legend(handles, names, loc="upper center", bbox_to_anchor=(0.5, -0.22), ncol=len(handles), fontsize=8,
              frameon=False, handletextpad=0.3, columnspacing=1.2)
    hidden = len(table) - len(shown)
    if hidden:  # the legend counts every column; say which ones the x axis leaves out
        ax.text(1.0, -0.34, f"{hidden} column{'s' if hidden > 1 else ''} without a frame label (insertions) not "
                "drawn", transform=ax.transAxes, ha="right", va="top", fontsize=7, color=OKABE_ITO["black"])
    source = table.attrs.get("input")
    heading = title if title is not None else (f"{os.path.basename(str(source))}: {score}" if source else score)
    sites_ax.set_title(plain_text(heading), fontsize=10, loc="left")
    return finish_figure(fig, path, inputs)

