"""Column tables for papers: rows kept by class or frame label, and the columns of a page-wide LaTeX table.

:func:`keep_rows` keeps the rows of chosen classes and/or frame labels (``--only-classes``,
``--only-labels``); a name that is not a class, or a label the table does not carry, is an error that
lists the valid ones. :func:`paper_table` chooses and formats the columns of the LaTeX table
(:data:`TEX_COLUMNS` by default; ``--tex-columns``) so that it fits the text width of a page, with the
column specification :func:`tex_column_spec` gives it (numbers right-aligned, the sites wrapped).
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Sequence

import pandas as pd

from globcons.core.classes import CLASSES
from globcons.core.labels import is_label, label_key, segment_of
from globcons.errors import OptionError
from globcons.io.tables import write_table

__all__ = ["TEX_COLUMNS", "TEX_HEADERS", "keep_rows", "label_runs", "paper_table", "tex_column_spec",
           "write_column_table"]

#: Columns of the LaTeX column table by default: enough to read a column's class and why, narrow enough for
#: a page (the full table stays in tsv/csv/json/md).
TEX_COLUMNS: tuple[str, ...] = ("column", "frame_label", "class", "support", "consensus", "conservation",
                                "gap_fraction", "n_eff", "sites")
#: Short headings of the LaTeX table (a name not listed keeps its own).
TEX_HEADERS: dict[str, str] = {"column": "col.", "frame_label": "label", "support": "supp.", "consensus": "res.",
                               "conservation": "cons.", "gap_fraction": "gaps", "n_eff": "n_eff",
                               "ref_position": "ref.", "ref_residue": "ref. res.", "property_conservation": "prop.",
                               "entropy_bits": "H (bits)", "entropy_norm": "H norm.", "low_data": "low data"}
#: Decimals of the LaTeX table's numbers (two for shares and scores, one for effective sequences).
_TEX_DECIMALS: dict[str, int] = {"n_eff": 1}
#: Width of the wrapped sites column of the LaTeX table.
SITES_WIDTH = "3cm"
#: What the short headings mean, for the caption.
_HEADER_WORDS: dict[str, str] = {"column": "alignment column", "frame_label": "globin helix label",
                                 "support": "posterior support of the class", "consensus": "consensus residue",
                                 "conservation": "conservation (gap-weighted)", "gap_fraction": "gap fraction",
                                 "n_eff": "effective sequences", "ref_position": "position in the reference row"}


def label_runs(labels: Iterable[str]) -> str:
    """Labels written as runs of consecutive places per segment, in frame order: ``A1-A16, AB1, B1-B16``.

    Examples
    --------
    >>> label_runs(["A2", "A1", "A3", "B5", "CD1", "", "B6"])
    'A1-A3, B5-B6, CD1'
    """
    ordered = sorted({label for label in labels if label and is_label(label)}, key=label_key)
    runs: list[list[str]] = []
    for label in ordered:
        last = runs[-1][-1] if runs else None
        if last and segment_of(last) == segment_of(label) and label_key(label)[1] == label_key(last)[1] + 1:
            runs[-1].append(label)
        else:
            runs.append([label])
    return ", ".join(run[0] if len(run) == 1 else f"{run[0]}-{run[-1]}" for run in runs)


def _check_classes(classes: Sequence[str]) -> None:
    unknown = [name for name in classes if name not in CLASSES]
    if unknown:
        raise OptionError(f"--only-classes: unknown class {unknown[0]!r}; the classes are {', '.join(CLASSES)}")


def _check_labels(labels: Sequence[str], present: Sequence[str]) -> None:
    carried = set(present)
    for label in labels:
        if label in carried:
            continue
        if not carried:
            raise OptionError(f"--only-labels: the table has no frame labels (not tied to the frame), so no "
                              f"column is labelled {label!r}")
        near = [known for known in carried if known.casefold() == label.casefold()]
        hint = f" (labels are case-sensitive: {near[0]})" if near else ""
        what = "is not a frame label" if not is_label(label) and not near else "is not a label of this table"
        raise OptionError(f"--only-labels: {label!r} {what}{hint}; the table's labels are {label_runs(carried)}")


def keep_rows(table: pd.DataFrame, classes: Sequence[str] = (), labels: Sequence[str] = ()) -> pd.DataFrame:
    """The rows of a column table of the chosen classes and/or frame labels (both given: rows meeting both).

    Parameters
    ----------
    table
        A column table (:func:`globcons.analysis.columns.score_columns`).
    classes
        Class names (:data:`globcons.core.classes.CLASSES`); empty keeps every class.
    labels
        Frame labels the table carries (``F8``, ``CD1``); empty keeps every label.

    Returns
    -------
    pandas.DataFrame
        The rows kept, in table order, with the table's metadata plus ``kept_rows`` (the choice and the
        number of rows); the metadata's class counts stay those of the whole alignment.

    Raises
    ------
    OptionError
        A name that is not a class, or a label the table does not carry: the message lists the valid ones.

    Examples
    --------
    >>> table = pd.DataFrame({"column": [1, 2, 3], "frame_label": ["F7", "F8", ""],
    ...                       "class": ["variable", "invariant", "gap-rich"]})
    >>> keep_rows(table, labels=["F8"])["column"].tolist()
    [2]
    """
    classes, labels = list(classes), list(labels)
    if not classes and not labels:
        return table
    _check_classes(classes)
    present = [label for label in table["frame_label"].astype(str) if label]
    _check_labels(labels, present)
    mask = pd.Series(True, index=table.index)
    if classes:
        mask &= table["class"].astype(str).isin(classes)
    if labels:
        mask &= table["frame_label"].astype(str).isin(labels)
    kept = table[mask].reset_index(drop=True)
    kept.attrs = dict(table.attrs)
    kept.attrs["kept_rows"] = {"only_classes": classes, "only_labels": labels, "rows": int(mask.sum()),
                               "of": len(table)}
    return kept


def paper_table(table: pd.DataFrame, columns: Sequence[str] | None = None) -> pd.DataFrame:
    """The LaTeX table's columns of a column table: chosen, renamed to short headings, numbers rounded.

    Parameters
    ----------
    table
        A column table.
    columns
        Names of its columns (default :data:`TEX_COLUMNS`, those the table has); ``["all"]`` keeps every one.

    Raises
    ------
    OptionError
        A name the table does not have (the message lists the table's columns).
    """
    if columns is None:
        chosen = [name for name in TEX_COLUMNS if name in table.columns]
        if "ref_position" in table.columns:
            chosen.insert(2, "ref_position")
    elif list(columns) == ["all"]:
        chosen = list(table.columns)
    else:
        chosen = list(columns)
        unknown = [name for name in chosen if name not in table.columns]
        if unknown:
            raise OptionError(f"--tex-columns: unknown column {unknown[0]!r}; the table's columns are "
                              f"{', '.join(table.columns)} (or 'all')")
    out = pd.DataFrame(index=table.index)
    for name in chosen:
        column = table[name]
        if pd.api.types.is_float_dtype(column.dtype):
            digits = _TEX_DECIMALS.get(name, 2)
            column = column.map(lambda v, d=digits: "" if pd.isna(v) else f"{v:.{d}f}")
        elif name == "sites":
            column = column.astype(str).str.replace(",", ", ", regex=False)
        out[TEX_HEADERS.get(name, name)] = column
    out.attrs = dict(table.attrs)
    out.attrs["tex_columns"] = chosen
    out.attrs["tex_legend"] = "; ".join(f"{TEX_HEADERS[name]}: {_HEADER_WORDS[name]}" for name in chosen
                                        if name in TEX_HEADERS and name in _HEADER_WORDS)
    return out


def tex_column_spec(table: pd.DataFrame, source: pd.DataFrame) -> str:
    """The longtable column specification of a :func:`paper_table`: numbers right, text left, sites wrapped.

    Parameters
    ----------
    table
        The paper table (its ``attrs["tex_columns"]`` name the source columns, in order).
    source
        The column table it was made from (for the dtypes).
    """
    spec = []
    for name in table.attrs["tex_columns"]:
        if name in ("sites", "residues"):
            spec.append(rf">{{\raggedright\arraybackslash}}p{{{SITES_WIDTH}}}")
        elif pd.api.types.is_numeric_dtype(source[name].dtype) and source[name].dtype != bool:
            spec.append("r")
        else:
            spec.append("l")
    return "".join(spec)


def write_column_table(table: pd.DataFrame, path: str | os.PathLike | None, fmt: str, inputs: Iterable = (),
                       caption: str | None = None, tex_columns: Sequence[str] | None = None) -> list[str]:
    """Write a column table (already :func:`keep_rows`-filtered) in ``fmt``; tex as the page-wide paper table.

    Returns
    -------
    list of str
        The files written (see :func:`globcons.io.tables.write_table`).
    """
    if fmt != "tex":
        return write_table(table, path, fmt, metadata=table.attrs, inputs=inputs, caption=caption)
    paper = paper_table(table, tex_columns or None)
    legend = paper.attrs["tex_legend"]
    caption = f"{caption}. {legend}." if caption and legend else caption
    return write_table(paper, path, "tex", metadata=table.attrs, inputs=inputs, caption=caption,
                       tex_spec=tex_column_spec(paper, table))
