"""Multiple-testing correction: Benjamini-Hochberg q-values (false discovery rate).

Benjamini Y, Hochberg Y (1995) Controlling the false discovery rate: a practical and powerful approach to
multiple testing. J R Stat Soc B 57:289-300. For m tests with p-values sorted ascending,
``q_(i) = min over k >= i of min(1, p_(k) m / k)``: the smallest false discovery rate at which the test
would be called significant by the step-up procedure.
"""

from __future__ import annotations

import numpy as np

__all__ = ["bh_qvalues"]


def bh_qvalues(pvalues: np.ndarray, tested: np.ndarray | None = None) -> np.ndarray:
    """Benjamini-Hochberg q-values of a family of p-values.

    Parameters
    ----------
    pvalues
        (L,) float p-values; NaN where there is no test (left NaN, not counted).
    tested
        (L,) bool, optional: which finite p-values belong to the family. Those outside it (a column with
        nothing to test, whose p-value is 1 by convention) get q = 1 and do not count in ``m``.

    Returns
    -------
    numpy.ndarray
        (L,) float q-values in [0, 1], NaN where ``pvalues`` is NaN.

    Examples
    --------
    >>> bh_qvalues(np.array([0.01, 0.04, 0.03, np.nan])).round(4).tolist()[:3]
    [0.03, 0.04, 0.04]
    """
    p = np.asarray(pvalues, dtype=np.float64)
    q = np.full(p.shape, np.nan)
    finite = np.isfinite(p)
    family = finite if tested is None else finite & np.asarray(tested, dtype=bool)
    values = p[family]
    m = values.size
    if m:
        order = np.argsort(values, kind="stable")
        scaled = values[order] * m / np.arange(1, m + 1)
        stepped = np.minimum.accumulate(scaled[::-1])[::-1]  # the step-up: min over k >= i
        ranked = np.empty(m)
        ranked[order] = np.minimum(stepped, 1.0)
        q[family] = ranked
    q[finite & ~family] = 1.0
    return q
