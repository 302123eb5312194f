"""Column scores from weighted counts: entropies, gap fraction, Jensen-Shannon divergence, consensus, logo heights.

Every function takes weighted counts whose last axis is the code (``(L, N_CODES)`` from
:func:`globcons.core.counts.column_counts`, or with leading axes, e.g. ``(groups, L, N_CODES)``) and
returns one value per column; nothing here loops over sequences. This is the one implementation of each
statistic: tables, figures, contrast and family all call these.

Logo heights
------------
Per column, with ``p`` the weighted frequencies of the 20 standard residues (gaps, unknowns, U and O left
out) and ``n`` their summed weight,

    R = log2(20) - (H(p) + e(n)),   e(n) = (s - 1) / (2 ln 2 * n),  s = 20,

the information of the column in bits, with the small-sample correction ``e(n)`` of Schneider, Stormo,
Gold & Ehrenfeucht 1986 (J Mol Biol 188:415) in its usual large-n approximation. ``n`` is the column's
*weighted* residue count: with Henikoff weights that is the column's effective number of residues, so
near-duplicate sequences do not buy a smaller correction. R is clipped at 0, and letter ``a`` is drawn
``p[a] * R`` bits high (:func:`information_bits`).
"""

from __future__ import annotations

import math

import numpy as np

from globcons.core.alphabet import (
    CODE_LETTERS,
    GAP,
    N_RESIDUES,
    N_STANDARD,
    RESIDUE_GROUPS,
    STANDARD,
    UNKNOWN,
    group_index,
)

__all__ = [
    "BLOSUM62_BACKGROUND",
    "PROPERTY_CLASSES",
    "residue_frequencies",
    "standard_frequencies",
    "shannon_entropy",
    "entropy_bits",
    "entropy_norm",
    "gap_fraction",
    "unknown_fraction",
    "occupancy",
    "property_entropy",
    "jensen_shannon",
    "jsd_scores",
    "smooth_window",
    "consensus",
    "residue_strings",
    "conservation",
    "property_conservation",
    "small_sample_correction",
    "information_bits",
    "LOG2_20",
]

#: Entropy of the uniform distribution over the 20 standard residues, in bits: the largest a column can have.
LOG2_20 = math.log2(N_STANDARD)

#: Background residue frequencies of BLOSUM62: the marginals of its target frequencies
#: (Henikoff & Henikoff 1992 PNAS 89:10915), in the order of :data:`~globcons.core.alphabet.STANDARD`.
#: Three decimals, from memory; normalised to sum to 1. Used as the JSD background, as in
#: Capra & Singh 2007 (Bioinformatics 23:1875).
_BACKGROUND_BY_LETTER = {
    "A": 0.074, "R": 0.052, "N": 0.045, "D": 0.054, "C": 0.025, "Q": 0.034, "E": 0.054, "G": 0.074,
    "H": 0.026, "I": 0.068, "L": 0.099, "K": 0.058, "M": 0.025, "F": 0.047, "P": 0.039, "S": 0.057,
    "T": 0.051, "W": 0.013, "Y": 0.032, "V": 0.073,
}
BLOSUM62_BACKGROUND = np.array([_BACKGROUND_BY_LETTER[c] for c in STANDARD])
BLOSUM62_BACKGROUND = BLOSUM62_BACKGROUND / BLOSUM62_BACKGROUND.sum()
BLOSUM62_BACKGROUND.flags.writeable = False

#: The reduced alphabet behind ``property_entropy`` (Mirny & Shakhnovich 1999).
PROPERTY_CLASSES = "mirny-shakhnovich-6"

#: Pseudocount added to every residue before the JSD (Capra & Singh 2007 use a very small one so that
#: the logarithms stay finite; its size barely moves the score).
JSD_PSEUDOCOUNT = 1e-6


def _share(part: np.ndarray, total: np.ndarray) -> np.ndarray:
    """``part / total`` along the last axis, 0 where ``total`` is 0."""
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, part / np.where(total > 0, total, 1.0), 0.0)


def residue_frequencies(counts: np.ndarray) -> np.ndarray:
    """Frequencies over the 22 residue codes (standard + U, O), gaps and unknowns left out.

    Returns
    -------
    numpy.ndarray
        (..., L, 22); rows of columns with no residue are all zero.
    """
    residues = counts[..., :N_RESIDUES]
    return _share(residues, residues.sum(axis=-1, keepdims=True))


def standard_frequencies(counts: np.ndarray) -> np.ndarray:
    """Frequencies over the 20 standard residues only, renormalised; (..., L, 20), zero rows where none."""
    residues = counts[..., :N_STANDARD]
    return _share(residues, residues.sum(axis=-1, keepdims=True))


def shannon_entropy(frequencies: np.ndarray) -> np.ndarray:
    """Shannon entropy in bits along the last axis of ``frequencies`` (0 log 0 = 0); NaN for an all-zero row."""
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(frequencies > 0, frequencies * np.log2(np.where(frequencies > 0, frequencies, 1.0)), 0.0)
    entropy = np.asarray(-terms.sum(axis=-1) + 0.0)  # + 0.0 turns -0.0 into 0.0
    return np.where(frequencies.sum(axis=-1) > 0, entropy, np.nan)


def entropy_bits(counts: np.ndarray) -> np.ndarray:
    """Shannon entropy (bits) over the 20 standard residues; gaps, unknowns, U and O excluded."""
    return shannon_entropy(standard_frequencies(counts))


def entropy_norm(counts: np.ndarray) -> np.ndarray:
    """:func:`entropy_bits` over :data:`LOG2_20`: 0 for one residue, 1 for all twenty alike (NaN: no residue)."""
    return entropy_bits(counts) / LOG2_20


def gap_fraction(counts: np.ndarray) -> np.ndarray:
    """Weighted fraction of rows with a gap in each column (unknowns count as not-gap)."""
    return _share(counts[..., GAP], counts.sum(axis=-1))


def unknown_fraction(counts: np.ndarray) -> np.ndarray:
    """Weighted fraction of rows with an unknown residue (X, B, Z, J) in each column."""
    return _share(counts[..., UNKNOWN], counts.sum(axis=-1))


def occupancy(counts: np.ndarray) -> np.ndarray:
    """Weighted fraction of rows holding a residue in each column (neither gap nor unknown)."""
    return _share(counts[..., :N_RESIDUES].sum(axis=-1), counts.sum(axis=-1))


def property_entropy(counts: np.ndarray, classes: str = PROPERTY_CLASSES) -> np.ndarray:
    """Shannon entropy (bits) over a reduced property alphabet (default: Mirny & Shakhnovich 1999's six)."""
    membership = np.eye(len(RESIDUE_GROUPS[classes]))[group_index(classes)]  # (22, groups) one-hot
    grouped = counts[..., :N_RESIDUES] @ membership
    return shannon_entropy(_share(grouped, grouped.sum(axis=-1, keepdims=True)))


def conservation(counts: np.ndarray) -> np.ndarray:
    """Gap-aware conservation: ``(1 - entropy_bits / log2 20) * (1 - gap_fraction)``.

    1 for a column of one residue with no gaps, 0 for all twenty alike or for a column without residues;
    gaps scale it down as Capra & Singh 2007 scale their scores, so a gappy column never scores as high
    as a filled invariant one.
    """
    return np.nan_to_num(1.0 - entropy_norm(counts), nan=0.0) * (1.0 - gap_fraction(counts))


def property_conservation(counts: np.ndarray, classes: str = PROPERTY_CLASSES) -> np.ndarray:
    """:func:`conservation` over the reduced property alphabet: ``(1 - H / log2 k) * (1 - gap_fraction)``."""
    k = len(RESIDUE_GROUPS[classes])
    return np.nan_to_num(1.0 - property_entropy(counts, classes) / math.log2(k), nan=0.0) * (1.0 - gap_fraction(counts))


def jensen_shannon(p: np.ndarray, q: np.ndarray) -> np.ndarray:
    """Jensen-Shannon divergence (bits, equal weights) between the rows of ``p`` and the distribution ``q``."""
    m = 0.5 * (p + q)
    with np.errstate(divide="ignore", invalid="ignore"):
        kl_p = np.where(p > 0, p * np.log2(p / m), 0.0).sum(axis=-1)
        kl_q = np.where(q > 0, q * np.log2(q / m), 0.0).sum(axis=-1)
    return 0.5 * kl_p + 0.5 * kl_q


def jsd_scores(counts: np.ndarray, background: np.ndarray = BLOSUM62_BACKGROUND,
               pseudocount: float = JSD_PSEUDOCOUNT) -> np.ndarray:
    """Capra & Singh 2007 conservation: JSD from the background, times (1 - gap fraction).

    The column distribution is over the 20 standard residues with ``pseudocount`` added to each and
    renormalised. Columns with no standard residue score 0.
    """
    residues = counts[..., :N_STANDARD]
    total = residues.sum(axis=-1)
    p = (standard_frequencies(counts) + pseudocount) / (1.0 + N_STANDARD * pseudocount)
    score = jensen_shannon(p, background) * (1.0 - gap_fraction(counts))
    return np.where(total > 0, score, 0.0)


def smooth_window(score: np.ndarray, window: int, weight: float = 0.5) -> np.ndarray:
    """Blend each column's score with the mean of its ``window`` neighbours on each side.

    ``(1 - weight) * score[j] + weight * mean(score[j-window .. j+window], j excluded)``, as in
    Capra & Singh 2007 (they use window 3, weight 0.5). ``window = 0`` returns the score unchanged.
    """
    if window <= 0 or score.size < 2:
        return score.copy()
    window = min(window, score.size - 1)  # wider than the alignment: every other column is a neighbour
    padded_sum = np.convolve(score, np.ones(2 * window + 1), mode="same") - score
    neighbours = np.convolve(np.ones_like(score), np.ones(2 * window + 1), mode="same") - 1
    return (1.0 - weight) * score + weight * padded_sum / neighbours


def consensus(counts: np.ndarray) -> np.ndarray:
    """Most weighted residue of each column (ties: alphabetical); where the column has none, 'X' if it holds
    unknowns (X, B, Z, J) and '-' if only gaps.

    Returns an object array of letters with the shape of ``counts`` less its last axis.
    """
    residues = counts[..., :N_RESIDUES]
    letters = np.array(list(CODE_LETTERS[:N_RESIDUES]), dtype=object)[residues.argmax(axis=-1)]
    empty = np.where(counts[..., UNKNOWN] > 0, "X", "-") if counts.shape[-1] > UNKNOWN else "-"
    return np.where(residues.max(axis=-1) > 0, letters, empty).astype(object)


def residue_strings(frequencies: np.ndarray, digits: int = 2) -> list[str]:
    """``"H:0.97,Q:0.03"`` per column: residues by descending frequency (ties alphabetical).

    Residues whose frequency rounds to zero at ``digits`` are left out; a column without residues is ''.
    """
    order = np.argsort(-frequencies, axis=1, kind="stable")
    cutoff = 0.5 * 10.0 ** (-digits)
    result = []
    for row, ranks in zip(frequencies, order, strict=True):
        shown = [f"{CODE_LETTERS[k]}:{row[k]:.{digits}f}" for k in ranks if row[k] >= cutoff]
        result.append(",".join(shown))
    return result


def small_sample_correction(n: np.ndarray | float, s: int = N_STANDARD) -> np.ndarray:
    """e(n) = (s - 1) / (2 ln 2 n), in bits (Schneider et al. 1986); infinite where n is 0.

    Parameters
    ----------
    n
        Residues observed per column (weighted), any shape.
    s
        Alphabet size.
    """
    n = np.asarray(n, dtype=np.float64)
    with np.errstate(divide="ignore"):
        return np.where(n > 0, (s - 1) / (2.0 * math.log(2.0) * np.where(n > 0, n, 1.0)), np.inf)


def information_bits(counts: np.ndarray, small_sample: bool = True) -> np.ndarray:
    """Letter heights of a logo, in bits (see the module notes).

    Parameters
    ----------
    counts
        Weighted counts (..., L, >= 20): only the first 20 codes, the standard residues, are used.
    small_sample
        Subtract the small-sample correction e(n) (n = the column's weighted count of the 20 residues).

    Returns
    -------
    numpy.ndarray
        (..., L, 20) in the order of ``STANDARD``; a column's heights sum to its information R, clipped
        at 0; columns without a standard residue are all zero.

    Examples
    --------
    >>> counts = np.zeros((1, 24)); counts[0, STANDARD.index("W")] = 1000.0
    >>> round(float(information_bits(counts, small_sample=False)[0, STANDARD.index("W")]), 4)
    4.3219
    """
    counts = np.asarray(counts, dtype=np.float64)
    if counts.ndim < 2 or counts.shape[-1] < N_STANDARD:
        raise ValueError(f"counts must have shape (L, 24), got {counts.shape}")
    n = counts[..., :N_STANDARD].sum(axis=-1)
    p = standard_frequencies(counts)
    entropy = np.nan_to_num(shannon_entropy(p))
    correction = np.where(n > 0, small_sample_correction(n), 0.0) if small_sample else 0.0
    information = np.where(n > 0, np.clip(LOG2_20 - entropy - correction, 0.0, None), 0.0)
    return p * information[..., None]
