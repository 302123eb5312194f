"""The regularised incomplete beta function, vectorised: the Beta posterior's tail behind the column classes.

``I_x(a, b)`` by the continued fraction of Numerical Recipes (Press et al. 2007, 3rd ed., section 6.4),
evaluated with the modified Lentz method (Lentz 1976, Appl Opt 15:668; Thompson & Barnett 1986, J Comput
Phys 64:490) for all elements at once, using the symmetry ``I_x(a, b) = 1 - I_{1-x}(b, a)`` where the
fraction converges slowly. The tests hold it against ``scipy.special.betainc`` over a wide grid.

Why not scipy here: importing ``scipy.special`` costs 0.3 to 0.6 s on this kind of machine, more than
reading and counting a 20,000-row alignment; every command that classes columns would pay it.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["regularized_incomplete_beta"]

_EPSILON = 1e-15
_TINY = 1e-300
#: Enough for parameters up to about 1e8 (the fraction needs of the order of sqrt(max(a, b)) terms).
_MAX_TERMS = 20_000
_log_gamma = np.frompyfunc(math.lgamma, 1, 1)


def regularized_incomplete_beta(a: np.ndarray | float, b: np.ndarray | float, x: np.ndarray | float) -> np.ndarray:
    """``I_x(a, b)``, the Beta(a, b) distribution function at ``x``; arrays broadcast.

    Parameters
    ----------
    a, b
        Shape parameters, > 0.
    x
        In [0, 1].

    Returns
    -------
    numpy.ndarray
        ``float64``, the broadcast shape of the inputs.
    """
    a, b, x = np.broadcast_arrays(*(np.asarray(v, dtype=np.float64) for v in (a, b, x)))
    result = np.empty(a.shape)
    result[x <= 0.0] = 0.0
    result[x >= 1.0] = 1.0
    inner = (x > 0.0) & (x < 1.0)
    if not inner.any():
        return result
    a_in, b_in, x_in = a[inner], b[inner], x[inner]
    log_front = (_log_gamma(a_in + b_in).astype(np.float64) - _log_gamma(a_in).astype(np.float64)
                 - _log_gamma(b_in).astype(np.float64) + a_in * np.log(x_in) + b_in * np.log1p(-x_in))
    front = np.exp(log_front)
    direct = x_in < (a_in + 1.0) / (a_in + b_in + 2.0)
    values = np.empty(a_in.shape)
    values[direct] = front[direct] * _continued_fraction(a_in[direct], b_in[direct], x_in[direct]) / a_in[direct]
    flip = ~direct
    values[flip] = 1.0 - front[flip] * _continued_fraction(b_in[flip], a_in[flip], 1.0 - x_in[flip]) / b_in[flip]
    result[inner] = np.clip(values, 0.0, 1.0)
    return result


def _continued_fraction(a: np.ndarray, b: np.ndarray, x: np.ndarray) -> np.ndarray:
    """The continued fraction of ``I_x(a, b)`` (NR ``betacf``), all elements at once until each converges."""
    total = a + b
    c = np.ones(a.shape)
    d = _guard(1.0 - total * x / (a + 1.0))
    d = 1.0 / d
    h = d.copy()
    active = np.ones(a.shape, dtype=bool)
    with np.errstate(all="ignore"):  # elements already converged may run off; they are no longer used
        for m in range(1, _MAX_TERMS + 1):
            if not active.any():
                break
            twice = 2.0 * m
            even = m * (b - m) * x / ((a - 1.0 + twice) * (a + twice))
            d = 1.0 / _guard(1.0 + even * d)
            c = _guard(1.0 + even / c)
            h = np.where(active, h * d * c, h)
            odd = -(a + m) * (total + m) * x / ((a + twice) * (a + 1.0 + twice))
            d = 1.0 / _guard(1.0 + odd * d)
            c = _guard(1.0 + odd / c)
            step = d * c
            h = np.where(active, h * step, h)
            active &= np.abs(step - 1.0) >= _EPSILON
    return h


def _guard(value: np.ndarray) -> np.ndarray:
    return np.where(np.abs(value) < _TINY, _TINY, value)
