"""Scan tables as tsv/csv text without pandas: the bytes :func:`globcons.io.tables.format_table` writes.

The scan streams many batches; building a DataFrame per batch only to print it cost more than the
alignment. Here cells are turned into text by the rules of :mod:`globcons.io.tables` (its ``text_cell`` and
:data:`~globcons.io.tables.FLOAT_DIGITS` decimals, a column's kind inferred from its values as a DataFrame
would infer its dtype) and rows go through the standard library's csv writer with the dialect pandas is
given there (tsv: no quoting, backslash escapes; csv: minimal quoting), so the text is byte for byte what
the pandas path writes (tests/test_scan.py compares the two).
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Sequence

import numpy as np

from globcons.io.tables import FLOAT_DIGITS, text_cell

__all__ = ["DELIMITED_FORMATS", "cell_texts", "delimited_text"]

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
        rounded = np.round(np.array(values, dtype=np.float64), FLOAT_DIGITS) + 0.0  # + 0.0: no negative zero
        return ["" if math.isnan(v) else f"{v:.{FLOAT_DIGITS}f}" for v in rounded.tolist()]
    if kinds == {bool}:
        return ["yes" if v else "no" for v in values]
    return [text_cell(v) for v in values]


def delimited_text(columns: Sequence[Sequence[str]], fmt: str) -> str:
    """Rows of the given text columns (equal lengths), one line each, as ``fmt`` (tsv or csv) writes them.

    The header is a row like any other: pass ``[[name] for name in names]`` for it.
    """
    if fmt not in DELIMITED_FORMATS:
        raise ValueError(f"fmt must be one of {', '.join(DELIMITED_FORMATS)}, got {fmt!r}")
    sep = DELIMITED_FORMATS[fmt]
    buffer = io.StringIO()
    writer = csv.writer(buffer, delimiter=sep, quoting=csv.QUOTE_MINIMAL if sep == "," else csv.QUOTE_NONE,
                        escapechar="\\", lineterminator="\n")
    writer.writerows(zip(*columns, strict=True))
    return buffer.getvalue()
