"""The column table: weights, scores and classes of every column joined into one pandas DataFrame.

:func:`score_columns` reads an alignment in memory; :func:`globcons.analysis.streaming.stream_columns`
reads a file in chunks; both build a :class:`~globcons.analysis.summary.ColumnSummary` and hand it to
:func:`table_from_summary`, so everything after the counts is shared. The frame labels come from the
alignment itself (:attr:`~globcons.core.alignment.Alignment.frame_labels`, read with the file) or from an
anchor row placed on the frame (:func:`globcons.align.anchor.map_columns`); nothing here reads a file
except the user's site table named in the options.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from globcons._version import __version__
from globcons.align.anchor import ColumnMapping, map_columns
from globcons.analysis.options import ScoreOptions, options_from_keywords
from globcons.analysis.summary import ColumnSummary, summarise_alignment
from globcons.core.alignment import Alignment
from globcons.core.classes import CLASSES, column_statistics
from globcons.core.scores import (
    PROPERTY_CLASSES,
    consensus,
    conservation,
    jsd_scores,
    property_conservation,
    property_entropy,
    residue_strings,
    smooth_window,
    unknown_fraction,
)
from globcons.errors import OptionError
from globcons.frame.functional_sites import Site, check_user_sites, column_sites, sites

__all__ = ["COLUMN_ORDER", "SCORE_COLUMNS", "SHOWN_SCORES", "score_columns", "table_from_summary", "read_user_sites",
           "summarise", "is_thin", "class_counts"]


#: Order of the table's columns (``ref_position`` and ``ref_residue`` follow ``column`` with a reference).
COLUMN_ORDER = ("column", "frame_label", "sites", "class", "support", "low_data", "consensus", "residues",
                "conservation", "property_conservation", "jsd", "entropy_bits", "entropy_norm", "property_entropy",
                "gap_fraction", "unknown_fraction", "n_eff")

#: The scores figures and structures show (``profile --score``, ``paint --score``), each higher where a
#: column is more conserved, and each lower for a gappy column than for a filled invariant one; ``rates``
#: is the exception (see :data:`SCORE_COLUMNS`).
SHOWN_SCORES: dict[str, str] = {
    "conservation": "conservation: (1 - entropy / log2 20) x (1 - gap fraction)",
    "property_conservation": "property conservation: (1 - property-class entropy / log2 6) x (1 - gap fraction)",
    "jsd": "Jensen-Shannon divergence from the BLOSUM62 background x (1 - gap fraction), bits",
    "n_eff": "effective sequences with a residue (clusters at the identity threshold)",
    "rates": "evolutionary rate: posterior mean, lower = more conserved",
}

#: The table column behind each shown score, where its name differs (the rates live in ``rate``, added
#: by :func:`globcons.analysis.rate_columns.add_rate_columns`). Unlike the others, lower ``rates`` means
#: more conserved; a gappy column's rate stays near the prior mean 1, never low.
SCORE_COLUMNS: dict[str, str] = {"rates": "rate"}


def score_columns(alignment: Alignment, options: ScoreOptions | None = None, **kwargs) -> pd.DataFrame:
    """Score and class every column of an alignment.

    Parameters
    ----------
    alignment
        From :func:`globcons.io.read_alignment`.
    options
        A :class:`~globcons.analysis.options.ScoreOptions`; or give its fields (and those of
        :class:`~globcons.core.classes.ClassRules`, e.g. ``max_gaps=0.3``) as keyword arguments.

    Returns
    -------
    pandas.DataFrame
        One row per column, columns in :data:`COLUMN_ORDER` (see the README for their meaning); ``.attrs``
        holds the metadata (options, version, input, effective number of sequences).

    Examples
    --------
    >>> from globcons import read_alignment, score_columns
    >>> from globcons.demo import demo_alignment_path
    >>> table = score_columns(read_alignment(demo_alignment_path()), max_gaps=0.4)
    >>> sorted(set(table["class"])) == ['conservative', 'gap-rich', 'invariant', 'variable']
    True
    """
    options = options_from_keywords(options, kwargs)
    user_sites = read_user_sites(options)
    return table_from_summary(summarise_alignment(alignment, options), options, user_sites)


def read_user_sites(options: ScoreOptions) -> tuple[Site, ...] | None:
    """The user's site table named in the options (None without one).

    Raises
    ------
    OptionError
        ``replace_sites`` without a site table.
    """
    user_sites = sites(path=options.sites_path) if options.sites_path else None
    if options.replace_sites and user_sites is None:
        raise OptionError("replacing the sites needs a site table (--sites FILE)")
    return user_sites


def _mapping(summary: ColumnSummary, options: ScoreOptions) -> ColumnMapping:
    if not options.frame:
        return ColumnMapping(("",) * summary.n_columns, "none", note="frame mapping switched off")
    return map_columns(summary.rows, anchor=options.reference)


def _check_fit(summary: ColumnSummary, options: ScoreOptions) -> None:
    """Refuse options the alignment cannot honour: a smoothing window wider than it, a --reference row
    that is missing or holds only gaps."""
    if options.window and options.window >= summary.n_columns:
        raise OptionError(f"--window {options.window} is wider than the alignment ({summary.n_columns} columns); "
                          f"give at most {max(summary.n_columns - 1, 0)}")
    reference = options.reference
    if reference is None:
        return
    rows = summary.rows
    if reference not in rows.ids:
        raise OptionError(f"--reference {reference!r} is not an id of {rows.source}")
    if not (rows.ungapped_positions(rows.ids.index(reference)) > 0).any():
        raise OptionError(f"--reference {reference!r} holds only gaps; choose a row with residues")


def _reference_columns(table: pd.DataFrame, summary: ColumnSummary, reference: str) -> None:
    """Insert ``ref_position`` and ``ref_residue``: the residue numbering of the reference row."""
    rows = summary.rows
    if reference not in rows.ids:
        raise OptionError(f"--reference {reference!r} is not an id of {rows.source}")
    row = rows.ids.index(reference)
    positions = rows.ungapped_positions(row)
    letters = np.array(list(rows.row(row)))
    table.insert(1, "ref_position", pd.array(np.where(positions > 0, positions, 0), dtype="Int64"))
    table.loc[positions <= 0, "ref_position"] = pd.NA
    table.insert(2, "ref_residue", np.where(positions > 0, letters, ""))


def table_from_summary(summary: ColumnSummary, options: ScoreOptions,
                       user_sites: tuple[Site, ...] | None = None) -> pd.DataFrame:
    """The column table from a :class:`~globcons.analysis.summary.ColumnSummary`.

    Parameters
    ----------
    summary
        From :func:`~globcons.analysis.summary.summarise_alignment` or
        :func:`globcons.analysis.streaming.summarise_file`.
    options
        The options the summary was made with.
    user_sites
        Sites read from ``options.sites_path`` (read here if None and a path is given).
    """
    if user_sites is None:
        user_sites = read_user_sites(options)
    counts = summary.counts
    stats = column_statistics(counts, summary.neff_counts, options.rules)
    _check_fit(summary, options)
    mapping = _mapping(summary, options)
    check_user_sites(user_sites, mapping.labels, options.sites_path)
    table = pd.DataFrame({
        "column": np.arange(1, summary.n_columns + 1),
        "frame_label": list(mapping.labels),
        "sites": column_sites(mapping.labels, mapping.nearest_reference, user_sites, options.replace_sites),
        "class": stats.classes.astype(str),
        "support": stats.support,
        "low_data": stats.low_data,
        "consensus": consensus(counts).astype(str),
        "residues": residue_strings(stats.frequencies),
        "conservation": conservation(counts),
        "property_conservation": property_conservation(counts),
        "jsd": smooth_window(jsd_scores(counts), options.window),
        "entropy_bits": stats.entropy_bits,
        "entropy_norm": stats.entropy_norm,
        "property_entropy": property_entropy(counts),
        "gap_fraction": stats.gap_fraction,
        "unknown_fraction": unknown_fraction(counts),
        "n_eff": stats.n_eff,
    })
    if options.reference is not None:
        _reference_columns(table, summary, options.reference)
    table.attrs.update(_metadata(summary, options, stats.classes, stats.low_data))
    table.attrs["frame"] = {"source": mapping.source, "anchor": mapping.anchor,
                            "nearest_reference": mapping.nearest_reference, "note": mapping.note,
                            "evalue": mapping.placement.evalue if mapping.placement else None}
    return table


def _metadata(summary: ColumnSummary, options: ScoreOptions, classes: np.ndarray,
              low_data: np.ndarray) -> dict[str, object]:
    counts = {name: int((classes == name).sum()) for name in CLASSES}
    return {
        "tool": "globcons",
        "version": __version__,
        "input": summary.rows.source,
        "format": summary.rows.format,
        "sequences": summary.n_rows,
        "columns": summary.n_columns,
        "effective_sequences": round(summary.n_eff, 6),
        "effective_sequences_method": summary.neighbours.describe(),
        "effective_sequences_error": _finite_or_none(summary.neighbours.standard_error),
        "thin_family": bool(summary.n_eff < options.rules.min_neff),
        "weights": options.weights,
        "identity": options.identity,
        "neff_exact_rows": options.neff_exact_rows,
        "neff_sample": options.neff_sample,
        "window": options.window,
        "reference": options.reference,
        "property_classes": PROPERTY_CLASSES,
        "rules": options.rules.as_dict(),
        "grouping": options.rules.grouping,
        "class_counts": counts,
        "low_data_columns": int(low_data.sum()),
        "reader_notes": dict(summary.notes),
    }


def _finite_or_none(value: float) -> float | None:
    return round(value, 6) if np.isfinite(value) else None


def class_counts(table: pd.DataFrame) -> dict[str, int]:
    """Columns of each class in the whole table: the one count the summary line and the figures show.

    The table's metadata holds the counts of every column scored (``attrs["class_counts"]``), which stay
    those of the whole alignment when rows are later left out (a table kept to some classes, or a figure
    drawing only the columns with frame labels); a table without that metadata is counted as it is.
    """
    counts = table.attrs.get("class_counts")
    if counts is None:
        classes = table["class"].astype(str)
        counts = {name: int((classes == name).sum()) for name in CLASSES}
    return {name: int(counts.get(name, 0)) for name in CLASSES}


def summarise(table: pd.DataFrame) -> str:
    """One line: sequences, effective sequences, columns and the count of each class."""
    meta = table.attrs
    counts = class_counts(table)
    parts = ", ".join(f"{counts[name]} {name}" for name in CLASSES)
    error = meta.get("effective_sequences_error")
    spread = f" ± {error:.1f}" if error else ""
    line = (f"{meta['sequences']} sequences ({meta['effective_sequences']:.1f}{spread} effective at "
            f"{meta['identity']:.0%} identity; {meta['weights']} weights for the frequencies), {meta['columns']} "
            f"columns: {parts}")
    frame = meta.get("frame")
    if frame and frame.get("note"):
        line += f"; {frame['note']}"
    if meta["low_data_columns"]:
        line += f"; {meta['low_data_columns']} low-data columns (n_eff < {meta['rules']['min_neff']:g})"
    return line



def is_thin(table: pd.DataFrame) -> bool:
    """Whether the family behind a column table has fewer effective sequences than ``min_neff``."""
    return bool(table.attrs.get("thin_family"))
