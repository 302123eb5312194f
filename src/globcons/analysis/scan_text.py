"""Scan tables as tsv/csv text without pandas: the bytes :func:`globcons.io.tables.format_table` writes.

The scan streams many batches; building a DataFrame per batch only to print it cost more than the
alignment. Here cells are turned into text by the rules of :mod:`globcons.io.tables` (its ``text_cell`` and
:data:`~globcons.io.tables.FLOAT_DIGITS` decimals, a column's kind inferred from its values as a DataFrame
would infer its dtype; small numbers with significant digits, :func:`~globcons.io.tables.format_number`);
tsv cells go out as they are (a tab or line end inside one becomes a space), csv cells are neutralised
against formula injection (:func:`~globcons.io.tables.neutralise_formula`) and quoted where needed by the
standard library's csv writer, so the text is byte for byte what the pandas path writes
(tests/test_scan_text.py compares the two).
"""

from __future__ import annotations

import csv
import io
from collections.abc import Sequence

import numpy as np

from globcons.io.tables import float_texts, neutralise_formula, text_cell, tsv_cell

__all__ = ["DELIMITED_FORMATS", "cell_texts", "delimited_text", "number_texts"]

#: Table formats written without pandas, with their separator.
DELIMITED_FORMATS = {"tsv": "\t", "csv": ","}


def cell_texts(values: Sequence[object]) -> list[str]:
    """The text of each cell of one column of Python values (a table's column built from rows of dicts).

    Whole numbers print as they are, floats (or floats mixed with whole numbers) rounded to
    :data:`FLOAT_DIGITS` decimals with no ``-0.0000``, NaN as '', booleans as yes/no, and a column mixing
    other kinds (text with numbers, say) cell by cell by ``text_cell``: as an int64, float64, bool or
    object column of a DataFrame is written.
    """
    kinds = set(map(type, values))
    if not kinds or kinds == {int} or kinds == {str}:
        return [str(v) for v in values]
    if kinds <= {int, float}:
        return float_texts(np.array(values, dtype=np.float64))
    if kinds == {bool}:
        return ["yes" if v else "no" for v in values]
    return [text_cell(v) for v in values]


_NUMBERS = {"texts": np.array(["0"], dtype=object)}


def number_texts(values: np.ndarray, zero: str = "0") -> np.ndarray:
    """Whole numbers ``0 <= v`` as text, by look-up (object array); ``zero`` is the text of 0."""
    top = int(values.max(initial=0))
    table = _NUMBERS["texts"]
    if top >= table.shape[0]:
        table = np.array([str(v) for v in range(max(top + 1, 2 * table.shape[0]))], dtype=object)
        _NUMBERS["texts"] = table
    texts = table[values]
    if zero != "0":
        texts[values == 0] = zero
    return texts


def delimited_text(columns: Sequence[Sequence[str]], fmt: str) -> str:
    """Rows of the given text columns (equal lengths), one line each, as ``fmt`` (tsv or csv) writes them.

    The header is a row like any other: pass ``[[name] for name in names]`` for it. tsv rows are joined
    directly (checked on the result: the separators and line ends must number exactly what the rows and
    columns make, else the cells are cleaned first); csv cells are neutralised against formulas and the csv
    module quotes them where needed.
    """
    if fmt not in DELIMITED_FORMATS:
        raise ValueError(f"fmt must be one of {', '.join(DELIMITED_FORMATS)}, got {fmt!r}")
    n_rows = len(columns[0]) if columns else 0
    if not n_rows:
        return ""
    if fmt == "tsv":
        text = "\n".join(map("\t".join, zip(*columns, strict=True))) + "\n"
        if text.count("\t") == n_rows * (len(columns) - 1) and text.count("\n") == n_rows and "\r" not in text:
            return text
        cleaned = [[tsv_cell(cell) for cell in column] for column in columns]
        return "\n".join(map("\t".join, zip(*cleaned, strict=True))) + "\n"
    buffer = io.StringIO()
    writer = csv.writer(buffer, delimiter=",", quoting=csv.QUOTE_MINIMAL, lineterminator="\n")
    writer.writerows(zip(*([neutralise_formula(cell) for cell in column] for column in columns), strict=True))
    return buffer.getvalue()
