"""Amino-acid substitution models: exchangeabilities, frequencies, the rate matrix and its eigen system.

The model's published values ship as package data (``data/models``, provenance in its README). The rate
matrix of a reversible model is ``Q_ij = s_ij pi_j`` (i != j), rows summing to zero, scaled to one
expected substitution per unit time (``-sum_i pi_i Q_ii = 1``). It is eigen-decomposed once, through the
symmetric matrix ``D^1/2 Q D^-1/2`` (``D = diag(pi)``), so ``P(t) = U exp(Lambda t) U^-1`` for any ``t``.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from importlib import resources

import numpy as np

from globcons.core.alphabet import N_STANDARD, STANDARD

__all__ = ["MODELS", "EigenSystem", "SubstitutionModel", "load_model"]

#: Residue order of the published model files (the order of the paper's distributed file).
FILE_ORDER = "ARNDCQEGHILKMFPSTWYV"

#: Models shipped, with the citation the methods text gives.
MODELS: dict[str, str] = {
    "LG": "Le & Gascuel 2008, Mol Biol Evol 25:1307",
}


@dataclass(frozen=True, eq=False)
class SubstitutionModel:
    """A reversible amino-acid model in globcons' residue order (:data:`globcons.core.alphabet.STANDARD`).

    Attributes
    ----------
    name, citation
        As in :data:`MODELS`.
    exchangeabilities
        ``float64`` (20, 20), symmetric, zero diagonal.
    frequencies
        ``float64`` (20,), the equilibrium frequencies, summing to 1.
    """

    name: str
    citation: str
    exchangeabilities: np.ndarray
    frequencies: np.ndarray

    def rate_matrix(self) -> np.ndarray:
        """``Q`` (20, 20): ``s_ij pi_j`` off the diagonal, rows summing to 0, one substitution per unit time."""
        q = self.exchangeabilities * self.frequencies[None, :]
        np.fill_diagonal(q, 0.0)
        np.fill_diagonal(q, -q.sum(axis=1))
        return q / -(self.frequencies * np.diag(q)).sum()

    def eigen(self) -> EigenSystem:
        """The eigen system of :meth:`rate_matrix` (computed once per model)."""
        return _eigen(self)


@dataclass(frozen=True, eq=False)
class EigenSystem:
    """``Q = U diag(values) U^-1`` of a reversible rate matrix.

    Attributes
    ----------
    values
        (20,) eigenvalues (one is 0, the others negative).
    right, left
        ``U`` and ``U^-1``, (20, 20).
    frequencies
        The stationary frequencies.
    """

    values: np.ndarray
    right: np.ndarray
    left: np.ndarray
    frequencies: np.ndarray

    def transition(self, times: np.ndarray) -> np.ndarray:
        """``P(t) = exp(Q t)`` for every time of ``times`` (any shape S): array of shape S + (20, 20)."""
        times = np.asarray(times, dtype=np.float64)
        decay = np.exp(times[..., None] * self.values)
        p = (self.right * decay[..., None, :]) @ self.left
        return np.maximum(p, 0.0)  # round-off can leave -1e-17 where P is 0 to machine precision

    def transition_derivative(self, times: np.ndarray) -> np.ndarray:
        """``dP/dt = Q exp(Q t)`` for every time of ``times``: shape S + (20, 20)."""
        times = np.asarray(times, dtype=np.float64)
        decay = self.values * np.exp(times[..., None] * self.values)
        return (self.right * decay[..., None, :]) @ self.left


@cache
def _eigen(model: SubstitutionModel) -> EigenSystem:
    q = model.rate_matrix()
    root = np.sqrt(model.frequencies)
    symmetric = root[:, None] * q / root[None, :]
    values, vectors = np.linalg.eigh((symmetric + symmetric.T) / 2)
    return EigenSystem(values, vectors / root[:, None], vectors.T * root[None, :], model.frequencies)


def _parse(text: str) -> tuple[np.ndarray, np.ndarray]:
    """Exchangeabilities (lower triangle) and frequencies from a model file, in :data:`FILE_ORDER`."""
    numbers = [float(value) for value in text.split()]
    n_pairs = N_STANDARD * (N_STANDARD - 1) // 2
    if len(numbers) != n_pairs + N_STANDARD:
        raise ValueError(f"a model file holds {n_pairs} exchangeabilities and {N_STANDARD} frequencies, "
                         f"found {len(numbers)} numbers")
    s = np.zeros((N_STANDARD, N_STANDARD))
    s[np.tril_indices(N_STANDARD, -1)] = numbers[:n_pairs]
    return s + s.T, np.array(numbers[n_pairs:])


@cache
def load_model(name: str = "LG") -> SubstitutionModel:
    """A shipped model (:data:`MODELS`), reordered to globcons' residue codes; frequencies renormalised.

    Examples
    --------
    >>> model = load_model("LG")
    >>> round(float(model.frequencies[0]), 6)   # Ala
    0.079066
    """
    if name not in MODELS:
        raise ValueError(f"unknown model {name!r}; shipped: {', '.join(MODELS)}")
    text = resources.files("globcons").joinpath(f"data/models/{name.lower()}.dat").read_text(encoding="utf-8")
    s, pi = _parse(text)
    order = np.array([FILE_ORDER.index(letter) for letter in STANDARD])
    s, pi = s[np.ix_(order, order)], pi[order]
    for array in (s, pi):
        array.setflags(write=False)
    return SubstitutionModel(name, MODELS[name], s, pi / pi.sum())
