"""The departure heat map of a scan: queries x frame positions, each cell the query's most severe deviation."""

from __future__ import annotations

import math
import os
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
import pandas as pd
from matplotlib.figure import Figure
from matplotlib.patches import Patch

from globcons.core.labels import is_label
from globcons.core.vocabulary import DEVIATIONS
from globcons.errors import OptionError
from globcons.plots.axes import MAX_LABELLED_TICKS, draw_helix_track, frame_ticks
from globcons.plots.output import figure_format, finish_figure, plain_text
from globcons.plots.palette import ABSENT_COLOUR, CLASS_COLOURS, DEVIATION_COLOURS

__all__ = ["DEVIATION_ORDER", "DepartureMatrix", "departure_matrix", "draw_departure_heatmap"]

#: Deviations of the heat map from least to most severe; a cell shows the most severe of its residues.
DEVIATION_ORDER: tuple[str, ...] = DEVIATIONS
#: At most this many query rows are drawn at full height and each named.
MAX_NAMED_ROWS = 200


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
        The per-residue table of :func:`globcons.analysis.scanning.scan` (``id``, ``position``, ``frame_label``,
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
    heading = dict(zip(named["column"].astype(int), named["frame_label"].astype(str), strict=True))
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
    shown_rows = min(n_rows, MAX_NAMED_ROWS)
    width = float(np.clip(3.0 + 0.07 * n_cols, 7.0, 24.0))
    fig = Figure(figsize=(width, 2.2 + 0.11 * shown_rows), layout="constrained")
    grid = fig.add_gridspec(2, 1, height_ratios=[0.3, 1.9 + 0.11 * shown_rows])
    ax = fig.add_subplot(grid[1])
    helix_ax = fig.add_subplot(grid[0], sharex=ax)
    ax.imshow(data.levels + 1, aspect="auto", interpolation="nearest", cmap=ListedColormap(colours),
              norm=BoundaryNorm(np.arange(-0.5, len(colours) + 0.5), len(colours)))
    labelled = [p if is_label(p) else "" for p in data.positions]
    draw_helix_track(helix_ax, labelled)
    step = 1 if n_rows <= MAX_NAMED_ROWS else int(math.ceil(n_rows / MAX_NAMED_ROWS))
    rows = list(range(0, n_rows, step))
    font = 7.0 if n_rows <= 60 else 6.5  # rows are 0.11 in (about 8 pt) apart, labelled or not
    ax.set_yticks(rows, [plain_text(data.ids[i]) for i in rows], fontsize=font)
    if any(labelled):
        ticks = frame_ticks(labelled) if n_cols > MAX_LABELLED_TICKS else list(range(n_cols))
        ax.set_xlabel("frame position", fontsize=9)
    else:
        ticks = list(range(0, n_cols, max(1, int(math.ceil(n_cols / MAX_LABELLED_TICKS)))))
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
        helix_ax.set_title(plain_text(title), fontsize=10, loc="left")
    return finish_figure(fig, path, inputs)

