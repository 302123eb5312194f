"""The column table: weights, scores and classes of every column joined into one pandas DataFrame."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ._version import __version__
from .alignment import Alignment
from .alphabet import N_RESIDUES, UNKNOWN
from .classes import CLASSES, ClassRules, classify
from .counts import column_counts
from .errors import OptionError
from .frame import sites as site_table
from .mapping import ColumnMapping, column_sites, map_columns
from .scores import (PROPERTY_CLASSES, consensus, entropy_bits, gap_fraction, jsd_scores, property_entropy,
                     residue_frequencies, residue_strings, smooth_window)
from .weights import Weights, compute_weights

__all__ = ["ScoreOptions", "score_columns", "summarise", "COLUMN_ORDER"]

#: Order of the table's columns (``ref_position`` and ``ref_residue`` follow ``column`` with a reference).
COLUMN_ORDER = ("column", "frame_label", "sites", "class", "low_data", "consensus", "residues", "entropy_bits", "entropy_norm",
                "property_entropy", "jsd", "gap_fraction", "unknown_fraction", "n_eff")


@dataclass(frozen=True)
class ScoreOptions:
    """Everything that changes a column table, recorded in its metadata.

    Attributes
    ----------
    weights
        ``henikoff``, ``none`` or ``cluster``.
    identity
        Identity threshold of ``cluster`` weights.
    window
        Half-width of the JSD smoothing window (0: none).
    rules
        Class thresholds.
    reference
        Id of a row whose residue numbering is added (``ref_position``, ``ref_residue``); it is also the
        anchor that ties the columns to the globin frame.
    frame
        Tie the columns to the globin frame (``frame_label``, ``sites``); False leaves both empty.
    sites_path
        A user's site table (label or column, role, ...) added to the built-in sites.
    replace_sites
        Use only the user's sites.
    """

    weights: str = "henikoff"
    identity: float = 0.8
    window: int = 0
    rules: ClassRules = ClassRules()
    reference: str | None = None
    frame: bool = True
    sites_path: str | None = None
    replace_sites: bool = False

    def __post_init__(self) -> None:
        if self.window < 0:
            raise OptionError(f"--window must not be negative, got {self.window}")


def score_columns(alignment: Alignment, options: ScoreOptions | None = None, **kwargs) -> pd.DataFrame:
    """Score and class every column of an alignment.

    Parameters
    ----------
    alignment
        From :func:`globcons.io.read_alignment`.
    options
        A :class:`ScoreOptions`; or give its fields (and those of :class:`~globcons.classes.ClassRules`,
        e.g. ``max_gaps=0.3``) as keyword arguments.

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
    options = _options(options, kwargs)
    user_sites = site_table(path=options.sites_path) if options.sites_path else None
    if options.replace_sites and user_sites is None:
        raise OptionError("replacing the sites needs a site table (--sites FILE)")
    weights = compute_weights(alignment.codes, options.weights, options.identity)
    counts = column_counts(alignment.codes, weights.values)
    frequencies = residue_frequencies(counts)
    gaps = gap_fraction(counts)
    n_eff = counts[:, :N_RESIDUES].sum(axis=1)
    classes, low_data = classify(frequencies, gaps, n_eff, options.rules)
    entropy = entropy_bits(counts)
    total = counts.sum(axis=1)
    if options.frame:
        source = alignment.source if Path(alignment.source).is_file() else None
        mapping = map_columns(alignment, anchor=options.reference, source_path=source)
    else:
        mapping = ColumnMapping(("",) * alignment.n_columns, "none", note="frame mapping switched off")
    table = pd.DataFrame({
        "column": np.arange(1, alignment.n_columns + 1),
        "frame_label": list(mapping.labels),
        "sites": column_sites(mapping.labels, mapping.nearest_reference, user_sites, options.replace_sites),
        "class": classes.astype(str),
        "low_data": low_data,
        "consensus": consensus(counts).astype(str),
        "residues": residue_strings(frequencies),
        "entropy_bits": entropy,
        "entropy_norm": entropy / np.log2(20),
        "property_entropy": property_entropy(counts),
        "jsd": smooth_window(jsd_scores(counts), options.window),
        "gap_fraction": gaps,
        "unknown_fraction": np.where(total > 0, counts[:, UNKNOWN] / np.where(total > 0, total, 1), 0.0),
        "n_eff": n_eff,
    })
    if options.reference is not None:
        if options.reference not in alignment.ids:
            raise OptionError(f"--reference {options.reference!r} is not an id of {alignment.source}")
        row = alignment.ids.index(options.reference)
        positions = alignment.ungapped_positions(row)
        letters = np.array(list(alignment.row(row)))
        table.insert(1, "ref_position", pd.array(np.where(positions > 0, positions, 0), dtype="Int64"))
        table.loc[positions <= 0, "ref_position"] = pd.NA
        table.insert(2, "ref_residue", np.where(positions > 0, letters, ""))
    table.attrs.update(_metadata(alignment, options, weights, classes, low_data))
    table.attrs["frame"] = {"source": mapping.source, "anchor": mapping.anchor,
                            "nearest_reference": mapping.nearest_reference, "note": mapping.note,
                            "evalue": mapping.placement.evalue if mapping.placement else None}
    return table


def _options(options: ScoreOptions | None, kwargs: dict) -> ScoreOptions:
    if options is not None and kwargs:
        raise TypeError("give either options or keyword arguments, not both")
    if options is not None:
        return options
    rule_fields = set(ClassRules.__dataclass_fields__)
    rules = ClassRules(**{k: kwargs.pop(k) for k in list(kwargs) if k in rule_fields})
    unknown = set(kwargs) - set(ScoreOptions.__dataclass_fields__)
    if unknown:
        raise TypeError(f"unknown options: {', '.join(sorted(unknown))}")
    return ScoreOptions(rules=rules, **kwargs)


def _metadata(alignment: Alignment, options: ScoreOptions, weights: Weights, classes: np.ndarray,
              low_data: np.ndarray) -> dict[str, object]:
    counts = {name: int((classes == name).sum()) for name in CLASSES}
    return {
        "tool": "globcons",
        "version": __version__,
        "input": alignment.source,
        "format": alignment.format,
        "sequences": alignment.n_rows,
        "columns": alignment.n_columns,
        "effective_sequences": round(weights.n_eff, 6),
        "weights": options.weights,
        "identity": options.identity if options.weights == "cluster" else None,
        "window": options.window,
        "reference": options.reference,
        "property_classes": PROPERTY_CLASSES,
        "rules": options.rules.as_dict(),
        "grouping": options.rules.grouping,
        "class_counts": counts,
        "low_data_columns": int(low_data.sum()),
        "reader_notes": dict(alignment.notes),
    }


def summarise(table: pd.DataFrame) -> str:
    """One line: sequences, effective sequences, columns and the count of each class."""
    meta = table.attrs
    counts = meta["class_counts"]
    parts = ", ".join(f"{counts[name]} {name}" for name in CLASSES)
    line = (f"{meta['sequences']} sequences ({meta['effective_sequences']:.1f} effective, {meta['weights']} "
            f"weights), {meta['columns']} columns: {parts}")
    frame = meta.get("frame")
    if frame and frame.get("note"):
        line += f"; {frame['note']}"
    if meta["low_data_columns"]:
        line += f"; {meta['low_data_columns']} low-data columns (n_eff < {meta['rules']['min_neff']:g})"
    return line
