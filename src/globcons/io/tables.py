"""Table output: tsv, csv, json, Markdown and LaTeX (booktabs longtable), written atomically.

The first row of every format is the header; tsv and csv carry their metadata in a sidecar
``<output>.meta.json``, written together with the table (:func:`~globcons.io.atomic.atomic_batch`).
Numbers (:func:`format_number`) are written with :data:`FLOAT_DIGITS` decimals, and small ones with
:data:`SIGNIFICANT_DIGITS` significant digits (a p-value of 1e-20 never reads 0.0000). tsv cells are
written as they are (no quoting, no escapes; tabs and line ends inside a cell become spaces); csv cells
that a spreadsheet would run as a formula are neutralised (:func:`neutralise_formula`).
"""

from __future__ import annotations

import csv
import json
import math
import os
import re
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from globcons.errors import OptionError
from globcons.io.atomic import atomic_batch, atomic_output, check_not_input
from globcons.io.formats import TABLE_FORMATS, table_format_for

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["FLOAT_DIGITS", "SIGNIFICANT_DIGITS", "FIXED_MIN", "FORMULA_STARTS", "format_number", "neutralise_formula",
           "float_texts", "needs_significant_digits", "tsv_cell",
           "format_table", "write_table", "text_cell", "metadata_path", "write_metadata"]

#: Decimals of numbers written in fixed notation.
FLOAT_DIGITS = 4
#: Significant digits of small numbers (general format: ``0.0021``, ``1.234e-05``, ``8.1e-53``).
SIGNIFICANT_DIGITS = 4
#: Numbers smaller than this in absolute value (and not 0) are written with significant digits.
FIXED_MIN = 0.01
#: Significant digits JSON keeps of numbers below :data:`FIXED_MIN` (larger ones keep 6 decimals).
_JSON_DIGITS = 6
#: First characters that make a spreadsheet read a cell as a formula (OWASP "CSV injection"; common practice).
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
_NUMBER = re.compile(r"[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?%?")












def _is_missing(value: object) -> bool:
    # pandas' NA, told by its type so that writing plain cells (scan, metadata) never loads pandas
    return value is None or (type(value).__name__ == "NAType" and type(value).__module__.startswith("pandas"))


def text_cell(value: object) -> str:
    """How a table cell reads as text: '' for missing, yes/no for booleans, floats with :data:`FLOAT_DIGITS`."""
    if _is_missing(value):
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (float, np.floating)):
        return "" if math.isnan(value) else format_number(float(value))
    return str(value)


def format_number(value: float) -> str:
    """A number as tables write it: :data:`FLOAT_DIGITS` decimals, or :data:`SIGNIFICANT_DIGITS` significant
    digits below :data:`FIXED_MIN`.

    Examples
    --------
    >>> [format_number(v) for v in (0.5, 0.01234, 0.0021, 1e-20, 8.1e-53, -0.0)]
    ['0.5000', '0.0123', '0.0021', '1e-20', '8.1e-53', '0.0000']
    """
    if value != 0 and abs(value) < FIXED_MIN:
        return f"{value:.{SIGNIFICANT_DIGITS}g}"
    text = f"{value:.{FLOAT_DIGITS}f}"
    return text[1:] if text.startswith("-") and not text.strip("-0.") else text


def neutralise_formula(text: str) -> str:
    """A csv cell a spreadsheet would run as a formula, prefixed with a single quote (shown as text).

    Cells starting with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return are neutralised, except
    numbers (``-0.5``) and a lone ``-`` (how tables say "not covered").

    Examples
    --------
    >>> [neutralise_formula(t) for t in ("=HYPERLINK(1)", "@SUM(A1)", "-", "-0.5", "KBM-1")]
    ["'=HYPERLINK(1)", "'@SUM(A1)", '-', '-0.5', 'KBM-1']
    """
    if text.startswith(FORMULA_STARTS) and text != "-" and not _NUMBER.fullmatch(text):
        return "'" + text
    return text


def _text_rows(table: pd.DataFrame) -> list[list[str]]:
    columns = [table[name].tolist() for name in table.columns]
    return [[text_cell(v) for v in row] for row in zip(*columns, strict=True)] if len(table) else []


def _json_cell(value: object) -> object:
    if _is_missing(value):
        return None
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        if math.isnan(value):
            return None
        value = float(value)
        return round(value, 6) if abs(value) >= FIXED_MIN else float(f"{value:.{_JSON_DIGITS}g}")
    return str(value)


def _tex_escape(text: str) -> str:
    replacements = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#", "_": r"\_",
                    "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}"}
    return "".join(replacements.get(c, c) for c in text)


def _md_escape(text: str) -> str:
    return text.replace("\\", "\\\\").replace("|", "\\|")


def needs_significant_digits(values: np.ndarray) -> bool:
    """Whether a float column holds a value :func:`format_number` writes with significant digits."""
    return bool(((values != 0) & (np.abs(values) < FIXED_MIN)).any())


def float_texts(values: np.ndarray) -> list[str]:
    """A float column as every delimited table writes it: :func:`format_number` per value when one of them
    is small, else rounded to :data:`FLOAT_DIGITS` decimals (no ``-0.0000``); NaN as ''."""
    if needs_significant_digits(values):
        return ["" if math.isnan(v) else format_number(v) for v in values.tolist()]
    rounded = np.round(values, FLOAT_DIGITS) + 0.0  # + 0.0: no negative zero
    return ["" if math.isnan(v) else f"{v:.{FLOAT_DIGITS}f}" for v in rounded.tolist()]


def _number_strings(column: pd.Series) -> pd.Series | None:
    """A float column as :func:`float_texts` writes it, or None when no value needs significant digits
    (then pandas' own float format is faster and the same)."""
    import pandas as pd

    values = column.to_numpy(dtype=float)
    if not needs_significant_digits(values):
        return None
    return pd.Series(float_texts(values), index=column.index, dtype=object)


def tsv_cell(value: object) -> str:
    """A tsv cell: the text of :func:`text_cell`, a tab or line end inside it made a space (tsv has no quoting)."""
    return text_cell(value).replace("\t", " ").replace("\r\n", " ").replace("\n", " ").replace("\r", " ")


def _delimited(table: pd.DataFrame, sep: str) -> str:
    """tsv/csv through pandas' writer (fast on large tables), with the cell rules of :func:`text_cell`.

    tsv cells go out as they are (no quotes, no escapes); csv is quoted where needed (RFC 4180) and its
    text cells are neutralised against formula injection (:func:`neutralise_formula`).
    """
    import pandas as pd

    frame = table.copy()
    for name in frame.columns:
        column = frame[name]
        if column.dtype == bool:
            frame[name] = np.where(column, "yes", "no")
        elif pd.api.types.is_float_dtype(column.dtype):
            strings = _number_strings(column)
            frame[name] = column.round(FLOAT_DIGITS) + 0.0 if strings is None else strings  # no "-0.0000"
        elif column.dtype == object or pd.api.types.is_string_dtype(column.dtype):
            cells = column.map(tsv_cell if sep == "\t" else text_cell)
            frame[name] = cells.map(neutralise_formula) if sep == "," else cells
    if sep == ",":
        return frame.to_csv(index=False, float_format=f"%.{FLOAT_DIGITS}f", na_rep="", lineterminator="\n",
                            quoting=csv.QUOTE_MINIMAL)
    return frame.to_csv(sep=sep, index=False, float_format=f"%.{FLOAT_DIGITS}f", na_rep="", lineterminator="\n",
                        quoting=csv.QUOTE_NONE, quotechar=None, escapechar=None)


def format_table(table: pd.DataFrame, fmt: str, metadata: Mapping[str, object] | None = None,
                 caption: str | None = None, tex_spec: str | None = None) -> str:
    """Render a table as text.

    Parameters
    ----------
    table
        The table; its first row in every format is the header.
    fmt
        One of :data:`TABLE_FORMATS`.
    metadata
        Options and provenance: embedded in json (``"metadata"``), as ``%`` comments in tex and as a
        closing note in md; tsv and csv carry none (see :func:`write_table`).
    caption
        Caption of the tex table.
    tex_spec
        Column specification of the tex table (default: ``r`` for numbers, ``l`` for text). The tex table
        is set compactly (small type, 3pt between columns) to fit a page.
    """
    import pandas as pd

    if fmt == "tsv":
        return _delimited(table, "\t")
    if fmt == "csv":
        return _delimited(table, ",")
    if fmt == "json":
        rows = [{name: _json_cell(v) for name, v in zip(table.columns, row, strict=True)}
                for row in zip(*(table[c].tolist() for c in table.columns), strict=True)]
        return json.dumps({"metadata": _plain(metadata or {}), "rows": rows}, indent=1, ensure_ascii=False) + "\n"
    if fmt == "md":
        header = "| " + " | ".join(_md_escape(str(c)) for c in table.columns) + " |"
        rule = "|" + "|".join("---:" if pd.api.types.is_numeric_dtype(table[c]) and table[c].dtype != bool else "---"
                              for c in table.columns) + "|"
        body = ["| " + " | ".join(_md_escape(cell) for cell in row) + " |" for row in _text_rows(table)]
        note = [] if not metadata else ["", "Options: " + _md_escape(_one_line(metadata))]
        return "\n".join([header, rule, *body, *note]) + "\n"
    if fmt == "tex":
        spec = tex_spec or "".join("r" if pd.api.types.is_numeric_dtype(table[c]) and table[c].dtype != bool
                                   else "l" for c in table.columns)
        lines = [f"% {line}" for line in json.dumps(_plain(metadata or {}), indent=1).splitlines()]
        lines += [r"% needs \usepackage{booktabs,longtable,array}", r"\begingroup\small\setlength{\tabcolsep}{3pt}",
                  rf"\begin{{longtable}}{{{spec}}}"]
        if caption:
            lines.append(rf"\caption{{{_tex_escape(caption)}}}\\")
        header = " & ".join(_tex_escape(str(c)) for c in table.columns) + r" \\"
        lines += [r"\toprule", header, r"\midrule", r"\endhead", r"\bottomrule", r"\endfoot"]
        lines += [" & ".join(_tex_escape(cell) for cell in row) + r" \\" for row in _text_rows(table)]
        lines += [r"\end{longtable}", r"\endgroup"]
        return "\n".join(lines) + "\n"
    raise OptionError(f"unknown table format {fmt!r}; choose one of {', '.join(TABLE_FORMATS)}")


def _plain(value: object) -> object:
    """JSON-ready copy of metadata (numpy scalars, tuples and mappings made plain)."""
    if isinstance(value, Mapping):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return _json_cell(value) if isinstance(value, (np.generic, float, bool)) else value


def _one_line(metadata: Mapping[str, object]) -> str:
    parts = []
    for key, value in metadata.items():
        if isinstance(value, Mapping):
            value = ", ".join(f"{k}={v}" for k, v in value.items())
        parts.append(f"{key}: {value}")
    return "; ".join(parts)


def write_table(table: pd.DataFrame, path: str | os.PathLike | None, fmt: str | None = None,
                metadata: Mapping[str, object] | None = None, inputs: Iterable = (),
                caption: str | None = None, sidecar: bool = True, tex_spec: str | None = None) -> list[str]:
    """Write a table atomically; a tsv or csv file also gets its metadata in ``<path>.meta.json``.

    Returns
    -------
    list of str
        The files written (empty when writing to standard output).
    """
    fmt = table_format_for(path, fmt)
    text = format_table(table, fmt, metadata, caption, tex_spec)
    inputs = list(inputs)
    written = []
    regular = path is not None and str(path) != "-" and not (Path(path).exists() and not Path(path).is_file())
    meta_path = Path(f"{path}.meta.json") if (regular and sidecar and metadata and fmt in ("tsv", "csv")) else None
    if meta_path is not None:
        check_not_input(meta_path, inputs)
    with atomic_batch():  # the table and its metadata land together or not at all
        with atomic_output(path, inputs) as stream:
            stream.write(text)
        if regular:
            written.append(str(path))
        if meta_path is not None:
            written.append(write_metadata(meta_path, metadata, inputs))
    return written


def metadata_path(path: str | os.PathLike | None) -> Path | None:
    """Where a table written to ``path`` keeps its metadata (``<path>.meta.json``); None for standard output
    and special files."""
    if path is None or str(path) == "-" or (Path(path).exists() and not Path(path).is_file()):
        return None
    return Path(f"{path}.meta.json")


def write_metadata(path: str | os.PathLike, metadata: Mapping[str, object], inputs: Iterable = ()) -> str:
    """Write metadata as JSON, atomically, never over an input; returns the path written."""
    with atomic_output(path, inputs) as stream:
        stream.write(json.dumps(_plain(metadata), indent=1, ensure_ascii=False) + "\n")
    return str(path)
