"""Column scores from weighted counts: entropies, gap fraction, Jensen-Shannon divergence, consensus.

Every function takes the (L x N_CODES) weighted counts of :func:`globcons.core.counts.column_counts` and
returns one value per column; nothing here loops over sequences.
"""

from __future__ import annotations

import numpy as np

from globcons.core.alphabet import CODE_LETTERS, GAP, N_RESIDUES, N_STANDARD, RESIDUE_GROUPS, STANDARD, group_index

__all__ = [
    "BLOSUM62_BACKGROUND",
    "PROPERTY_CLASSES",
    "residue_frequencies",
    "standard_frequencies",
    "shannon_entropy",
    "entropy_bits",
    "gap_fraction",
    "property_entropy",
    "jensen_shannon",
    "jsd_scores",
    "smooth_window",
    "consensus",
    "residue_strings",
]

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


def residue_frequencies(counts: np.ndarray) -> np.ndarray:
    """Frequencies over the 22 residue codes (standard + U, O), gaps and unknowns left out.

    Returns
    -------
    numpy.ndarray
        (L, 22); rows of columns with no residue are all zero.
    """
    residues = counts[:, :N_RESIDUES]
    total = residues.sum(axis=1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, residues / total, 0.0)


def standard_frequencies(counts: np.ndarray) -> np.ndarray:
    """Frequencies over the 20 standard residues only, renormalised; (L, 20), zero rows where none."""
    residues = counts[:, :N_STANDARD]
    total = residues.sum(axis=1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, residues / total, 0.0)


def shannon_entropy(frequencies: np.ndarray) -> np.ndarray:
    """Shannon entropy in bits of each row of ``frequencies`` (0 log 0 = 0); NaN for an all-zero row."""
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(frequencies > 0, frequencies * np.log2(frequencies), 0.0)
    entropy = -terms.sum(axis=1)
    entropy[frequencies.sum(axis=1) <= 0] = np.nan
    return entropy + 0.0  # turns -0.0 into 0.0


def entropy_bits(counts: np.ndarray) -> np.ndarray:
    """Shannon entropy (bits) over the 20 standard residues; gaps, unknowns, U and O excluded."""
    return shannon_entropy(standard_frequencies(counts))


def gap_fraction(counts: np.ndarray) -> np.ndarray:
    """Weighted fraction of rows with a gap in each column (unknowns count as not-gap)."""
    total = counts.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, counts[:, GAP] / total, 0.0)


def property_entropy(counts: np.ndarray, classes: str = PROPERTY_CLASSES) -> np.ndarray:
    """Shannon entropy (bits) over a reduced property alphabet (default: Mirny & Shakhnovich 1999's six)."""
    membership = np.eye(len(RESIDUE_GROUPS[classes]))[group_index(classes)]  # (22, groups) one-hot
    grouped = counts[:, :N_RESIDUES] @ membership
    return shannon_entropy(grouped / np.maximum(grouped.sum(axis=1, keepdims=True), 1e-300))


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
    residues = counts[:, :N_STANDARD]
    total = residues.sum(axis=1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        p = (residues / np.where(total > 0, total, 1.0) + pseudocount) / (1.0 + N_STANDARD * pseudocount)
    score = jensen_shannon(p, background[None, :]) * (1.0 - gap_fraction(counts))
    score[total[:, 0] <= 0] = 0.0
    return score


def smooth_window(score: np.ndarray, window: int, weight: float = 0.5) -> np.ndarray:
    """Blend each column's score with the mean of its ``window`` neighbours on each side.

    ``(1 - weight) * score[j] + weight * mean(score[j-window .. j+window], j excluded)``, as in
    Capra & Singh 2007 (they use window 3, weight 0.5). ``window = 0`` returns the score unchanged.
    """
    if window <= 0 or score.size < 2:
        return score.copy()
    padded_sum = np.convolve(score, np.ones(2 * window + 1), mode="same") - score
    neighbours = np.convolve(np.ones_like(score), np.ones(2 * window + 1), mode="same") - 1
    return (1.0 - weight) * score + weight * padded_sum / neighbours


def consensus(counts: np.ndarray) -> np.ndarray:
    """Most weighted residue of each column (ties: alphabetical), '-' where the column has none."""
    residues = counts[:, :N_RESIDUES]
    top = residues.argmax(axis=1)
    letters = np.array(list(CODE_LETTERS[:N_RESIDUES]), dtype=object)[top]
    letters[residues.max(axis=1) <= 0] = "-"
    return letters


def residue_strings(frequencies: np.ndarray, digits: int = 2) -> list[str]:
    """``"H:0.97,Q:0.03"`` per column: residues by descending frequency (ties alphabetical).

    Residues whose frequency rounds to zero at ``digits`` are left out; a column without residues is ''.
    """
    order = np.argsort(-frequencies, axis=1, kind="stable")
    cutoff = 0.5 * 10.0 ** (-digits)
    result = []
    for row, ranks in zip(frequencies, order):
        shown = [f"{CODE_LETTERS[k]}:{row[k]:.{digits}f}" for k in ranks if row[k] >= cutoff]
        result.append(",".join(shown))
    return result
