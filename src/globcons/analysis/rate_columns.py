"""The rate columns of the column table: per-column evolutionary rates (``globcons.phylo``) joined in.

:func:`add_rate_columns` estimates the rates of an alignment (on a tree from the alignment, or the
user's) and returns the table with ``rate``, ``rate_low`` and ``rate_high`` added and the fit recorded
in ``attrs["rates"]`` (model, alpha, rows used, subset, the tree in Newick).
"""

from __future__ import annotations

import os

import pandas as pd

from globcons.core.alignment import Alignment
from globcons.errors import InputError, OptionError
from globcons.phylo.newick import read_tree
from globcons.phylo.rates import ColumnRates, RateOptions, column_rates

__all__ = ["RATE_COLUMNS", "add_rate_columns", "rates_of"]

#: The columns added, in order: posterior mean rate and the ends of the credible interval.
RATE_COLUMNS = ("rate", "rate_low", "rate_high")


def rates_of(alignment: Alignment, options: RateOptions | None = None,
             tree_path: str | os.PathLike | None = None) -> ColumnRates:
    """The per-column rates of an alignment, on the tree of ``tree_path`` (Newick) or a tree from the alignment.

    Raises
    ------
    InputError
        The tree file cannot be read, or its leaves are not the alignment's ids.
    OptionError
        Fewer than three sequences, or a user's tree with more rows than ``options.max_rows``.
    """
    options = options or RateOptions()
    if alignment.n_rows < 3:
        raise OptionError(f"rates need at least three sequences; {alignment.source} has {alignment.n_rows}")
    if tree_path is None:
        return column_rates(alignment, options)
    tree = read_tree(tree_path, alignment.ids)
    if tree.n_leaves > options.max_rows:
        raise InputError(f"the tree has {tree.n_leaves} leaves, more than the {options.max_rows} rows rates use "
                         "exactly; raise --rates-max-rows, or leave out --tree to use a representative subset",
                         source=str(tree_path))
    return column_rates(alignment, options, tree, tree_source=f"the user's tree {tree_path}")


def add_rate_columns(table: pd.DataFrame, alignment: Alignment, options: RateOptions | None = None,
                     tree_path: str | os.PathLike | None = None) -> tuple[pd.DataFrame, ColumnRates]:
    """The column table with the rate columns added (a copy), and the rates themselves.

    Parameters
    ----------
    table
        From :func:`globcons.analysis.columns.score_columns` on ``alignment``.
    alignment
        The alignment the table was made from.
    options
        How to estimate the rates.
    tree_path
        A user's Newick tree (leaves = the alignment's ids); default: neighbour joining.

    Returns
    -------
    (pandas.DataFrame, ColumnRates)
        ``rate`` (posterior mean relative rate: 1 is the average column, lower is slower), ``rate_low``
        and ``rate_high`` (the credible interval), and ``attrs["rates"]``.
    """
    if len(table) != alignment.n_columns:
        raise ValueError(f"the table has {len(table)} rows for {alignment.n_columns} columns")
    result = rates_of(alignment, options, tree_path)
    out = table.copy()
    out.attrs = dict(table.attrs)
    out["rate"], out["rate_low"], out["rate_high"] = result.rate, result.lower, result.upper
    out.attrs["rates"] = result.metadata() | {"summary": result.describe()}
    return out, result
