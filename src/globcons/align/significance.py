"""Significance of a placement: how a query scores against shuffled copies of itself.

Local alignment scores of unrelated sequences follow an extreme-value (Gumbel) distribution (Karlin &
Altschul 1990 PNAS 87:2264). Its scale ``beta`` is calibrated once per profile from shuffled reference
chains (:data:`CALIBRATION_SHUFFLES` of each, pooled, each centred on its own mean), its location per
query from the mean of the query's own shuffles (``mu = mean - EULER_GAMMA * beta``). The E-value-like
figure is ``exp(-(score - mu) / beta)``: the expected number of shuffled copies scoring at least as well.
Shuffles use a random generator seeded from the sequence itself, so results do not depend on batch order
or worker count.
"""

from __future__ import annotations

import functools
import zlib
from collections.abc import Sequence

import numpy as np

from globcons.align.dp import align_scores
from globcons.align.frame_columns import reference_alignment
from globcons.align.scoring_profile import Profile, query_codes

__all__ = ["GLOBIN_EVALUE", "DEFAULT_SHUFFLES", "CALIBRATION_SHUFFLES", "EULER_GAMMA", "shuffled", "gumbel_scale",
           "evalues"]

#: E-value below which a sequence is called a globin.
GLOBIN_EVALUE = 1e-3
#: Shuffled copies per query for the significance.
DEFAULT_SHUFFLES = 12
#: Shuffled copies of each reference chain that calibrate the Gumbel scale.
CALIBRATION_SHUFFLES = 60
#: The Euler-Mascheroni constant: the mean of a standard Gumbel distribution.
EULER_GAMMA = 0.5772156649015329
#: Mixed into the per-sequence seed, so that shuffles are not seeded by the bare checksum.
_SEED_SALT = 0x5EED


def _seed(codes: np.ndarray) -> int:
    return zlib.crc32(codes.tobytes()) ^ _SEED_SALT


def shuffled(codes_list: Sequence[np.ndarray], copies: int) -> list[np.ndarray]:
    """``copies`` shuffled copies of each query (same composition), seeded from the query itself."""
    shuffled = []
    for codes in codes_list:
        rng = np.random.default_rng(_seed(codes))
        # One permutation per copy, drawn as argsort of random keys: a (copies x n) array at once.
        order = np.argsort(rng.random((copies, codes.size)), axis=1)
        shuffled.extend(codes[order])
    return shuffled


@functools.cache
def gumbel_scale(profile: Profile) -> float:
    """Gumbel scale beta from shuffled reference chains (pooled, each centred on its own mean)."""
    reference = reference_alignment()
    chains = [query_codes(chain.mature_sequence) for chain in reference.chains]
    scores = align_scores(profile.scores, profile.gaps, shuffled(chains, CALIBRATION_SHUFFLES))
    scores = scores.reshape(len(chains), CALIBRATION_SHUFFLES)
    centred = scores - scores.mean(axis=1, keepdims=True)
    sd = float(np.sqrt((centred ** 2).sum() / (centred.size - len(chains))))
    return sd * np.sqrt(6.0) / np.pi


def evalues(profile: Profile, codes_list: Sequence[np.ndarray], scores: np.ndarray, shuffles: int) -> np.ndarray:
    """E-value of each query's score (see the module notes); NaN for all when ``shuffles`` is 0."""
    if shuffles <= 0:
        return np.full(len(codes_list), np.nan)
    null = align_scores(profile.scores, profile.gaps, shuffled(codes_list, shuffles)).reshape(len(codes_list),
                                                                                             shuffles)
    beta = gumbel_scale(profile)
    mu = null.mean(axis=1) - EULER_GAMMA * beta
    return np.exp(-(scores - mu) / beta)

