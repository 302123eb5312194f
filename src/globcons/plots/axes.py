"""Axes shared by the figures along the frame: helix bands, thinned frame-label ticks, spread-out labels."""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import pandas as pd

from globcons.core.labels import HELICES, place_of, segment_of
from globcons.plots.palette import OKABE_ITO, tinted

__all__ = ["helix_runs", "frame_ticks", "spread_labels", "position_axis", "draw_helix_track", "shade_helices",
           "MAX_LABELLED_TICKS"]

#: Above this many positions, an axis labels only some of them (helix starts, every fifth place).
MAX_LABELLED_TICKS = 40


def helix_runs(labels: Sequence[str]) -> list[tuple[str, int, int]]:
    """(helix, first index, last index) of each maximal run of positions in one helix."""
    runs: list[tuple[str, int, int]] = []
    for index, label in enumerate(labels):
        segment = segment_of(label) if label else ""
        if segment in HELICES and runs and runs[-1][0] == segment and runs[-1][2] == index - 1:
            runs[-1] = (segment, runs[-1][1], index)
        elif segment in HELICES:
            runs.append((segment, index, index))
    return runs


def frame_ticks(labels: Sequence[str], min_gap: float = 2.5) -> list[int]:
    """Positions to label on a long frame axis, no two closer than ``min_gap`` positions.

    Candidates, by priority: the first place of each helix, the first place of any other segment, every
    fifth place; a candidate too close to one already kept is dropped (so "AB1" gives way to "B1").
    """
    first_helix, first_other, fifth = [], [], []
    for index, label in enumerate(labels):
        if not label:
            continue
        segment, place = segment_of(label), place_of(label)
        if place == 1:
            (first_helix if segment in HELICES else first_other).append(index)
        elif place % 5 == 0:
            fifth.append(index)
    kept: list[int] = []
    for index in first_helix + first_other + fifth:
        if all(abs(index - other) >= min_gap for other in kept):
            kept.append(index)
    return sorted(kept)


def spread_labels(positions: Sequence[float], min_gap: float) -> np.ndarray:
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


def position_axis(ax, shown: pd.DataFrame, labels: Sequence[str], labelled: bool) -> None:
    """X ticks along the drawn columns: frame labels (thinned) when the columns carry them, else numbers.

    ``shown`` is the part of a column table drawn (its ``column`` numbers label an axis without frame labels).
    """
    if labelled:
        ticks = frame_ticks(labels) if len(labels) > MAX_LABELLED_TICKS else list(range(len(labels)))
        ax.set_xticks(ticks, [labels[i] for i in ticks], rotation=90, fontsize=7)
        ax.set_xlabel("frame position (columns with a frame label)", fontsize=9)
    else:
        numbers = shown["column"].astype(int).to_numpy()
        step = max(1, int(math.ceil(len(numbers) / MAX_LABELLED_TICKS)))
        ticks = list(range(0, len(numbers), step))
        ax.set_xticks(ticks, [str(numbers[i]) for i in ticks], rotation=90, fontsize=7)
        ax.set_xlabel("alignment column", fontsize=9)


def draw_helix_track(ax, labels: Sequence[str]) -> None:
    """Draw each helix as a labelled band on an axes of its own (no ticks, no frame)."""
    band = tinted("helix band")
    for helix, first, last in helix_runs(labels):
        ax.axvspan(first - 0.5, last + 0.5, ymin=0.1, ymax=0.9, facecolor=band, edgecolor=OKABE_ITO["blue"],
                   linewidth=0.6)
        ax.text((first + last) / 2, 0.5, helix, ha="center", va="center", fontsize=8, fontweight="bold",
                color=OKABE_ITO["black"])
    ax.set_ylim(0, 1)
    ax.set_yticks([])
    ax.tick_params(axis="x", which="both", bottom=False, labelbottom=False)
    for side in ("top", "right", "left", "bottom"):
        ax.spines[side].set_visible(False)



def shade_helices(ax, labels: Sequence[str]) -> None:
    """Shade the helices lightly behind a plot along the frame."""
    for _, first, last in helix_runs(labels):
        ax.axvspan(first - 0.5, last + 0.5, facecolor=tinted("helix shade"), linewidth=0, zorder=0)
