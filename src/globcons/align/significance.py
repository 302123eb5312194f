"""Significance of a placement: how a query scores against shuffled copies of itself.

Local alignment scores of unrelated sequences follow an extreme-value (Gumbel) distribution (Karlin &
Altschul 1990 PNAS 87:2264). Its scale ``beta`` is calibrated once per profile from shuffled reference
chains (:data:`CALIBRATION_SHUFFLES` of each, pooled, each centred on its own mean; for the built-in frame
profile the value is stored as package data, ``data/frame/calibration.json``, keyed by a digest of the
profile, so no run pays for it; a test recomputes it), its location per
query from the mean of the query's own shuffles (``mu = mean - EULER_GAMMA * beta``). The E-value-like
figure is ``exp(-(score - mu) / beta)``: the expected number of shuffled copies scoring at least as well.
Shuffles use a random generator seeded from the sequence itself, so results do not depend on batch order
or worker count.
"""

from __future__ import annotations

import functools
import hashlib
import json
import zlib
from collections.abc import Sequence
from importlib import resources

import numpy as np

from globcons.align.dp import align_scores
from globcons.align.frame_columns import reference_alignment
from globcons.align.scoring_profile import Profile, frame_profile, query_codes

__all__ = ["GLOBIN_EVALUE", "DEFAULT_SHUFFLES", "CALIBRATION_SHUFFLES", "EULER_GAMMA", "shuffled", "gumbel_scale",
           "evalues", "calibrated_scale", "profile_digest", "stored_calibration",
           "calibration_file_text"]

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


def profile_digest(profile: Profile) -> str:
    """SHA-256 of what the calibration depends on: the profile's scores and gap costs, and the shuffle count."""
    digest = hashlib.sha256()
    for array in (profile.scores, profile.gaps.open_delete, profile.gaps.extend_delete, profile.gaps.open_insert,
                  profile.gaps.extend_insert):
        digest.update(np.ascontiguousarray(array, dtype=np.float64).tobytes())
    digest.update(str(CALIBRATION_SHUFFLES).encode())
    return digest.hexdigest()


@functools.cache
def stored_calibration() -> dict[str, float]:
    """The stored Gumbel scales, by profile digest (package data)."""
    text = (resources.files("globcons") / "data" / "frame" / "calibration.json").read_text(encoding="utf-8")
    return {entry["profile_digest"]: float(entry["gumbel_scale"]) for entry in json.loads(text)["profiles"]}


def calibrated_scale(profile: Profile) -> float:
    """Gumbel scale beta from shuffled reference chains (pooled, each centred on its own mean), computed."""
    reference = reference_alignment()
    chains = [query_codes(chain.mature_sequence) for chain in reference.chains]
    scores = align_scores(profile.scores, profile.gaps, shuffled(chains, CALIBRATION_SHUFFLES))
    scores = scores.reshape(len(chains), CALIBRATION_SHUFFLES)
    centred = scores - scores.mean(axis=1, keepdims=True)
    sd = float(np.sqrt((centred ** 2).sum() / (centred.size - len(chains))))
    return sd * np.sqrt(6.0) / np.pi


def calibration_file_text() -> str:
    """The text of ``data/frame/calibration.json`` for the built-in frame profile (computed afresh)."""
    profile = frame_profile()
    record = {
        "about": "Gumbel scale of the built-in frame profile (globcons.align.significance.calibrated_scale), "
                 "stored so that no run recomputes it; a test recomputes it and checks the digest. Regenerate: "
                 "python -c \"from globcons.align.significance import calibration_file_text as t; "
                 "print(t(), end='')\" > src/globcons/data/frame/calibration.json",
        "profiles": [{"name": profile.name, "profile_digest": profile_digest(profile),
                      "calibration_shuffles": CALIBRATION_SHUFFLES, "gumbel_scale": calibrated_scale(profile)}],
    }
    return json.dumps(record, indent=1) + "\n"


@functools.cache
def gumbel_scale(profile: Profile) -> float:
    """Gumbel scale beta of a profile: the stored value when the profile is a stored one, else computed."""
    stored = stored_calibration().get(profile_digest(profile))
    return stored if stored is not None else calibrated_scale(profile)


def evalues(profile: Profile, codes_list: Sequence[np.ndarray], scores: np.ndarray, shuffles: int) -> np.ndarray:
    """E-value of each query's score (see the module notes); NaN for all when ``shuffles`` is 0."""
    if shuffles <= 0:
        return np.full(len(codes_list), np.nan)
    null = align_scores(profile.scores, profile.gaps, shuffled(codes_list, shuffles)).reshape(len(codes_list),
                                                                                             shuffles)
    beta = gumbel_scale(profile)
    mu = null.mean(axis=1) - EULER_GAMMA * beta
    return np.exp(-(scores - mu) / beta)

