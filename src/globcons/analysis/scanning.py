"""Scanning new sequences against the family: per-sequence verdicts and per-residue departures.

Every query is placed on the globin frame (:mod:`globcons.align.placement`): that gives its nearest reference chain,
identity, significance, helix coverage and the residues at the key positions. Its departures are judged
against a *family*: the built-in frame (the reference chains and the classes of their columns), or a
user's alignment (``--family``), whose profile the query is aligned to, so that departures are judged
against the user's own columns.

Per residue, ``deviation`` is

``breaks-invariant``
    the column is invariant in the family and the residue differs from it;
``leaves-group``
    the column is conservative and the residue does not score above 0 (in the family's matrix) with every
    residue of the column's substitution group; or the column is a hydrophobic core (weighted mean
    Fauchère & Pliška 1983 hydrophobicity of at least 1.0, so W, F, Y, M and C count as hydrophobic) and
    the residue is polar (S, Q, N, E, D, K, R), whatever the column's class but gap-rich;
``insertion``
    the residue sits between the family's columns (or outside the aligned region);
``none``
    otherwise (variable and gap-rich columns never count as departures).

The summary's ``pocket`` is ``canonical`` when the proximal His (F8), distal His (E7) and heme-contact Phe
(CD1) of the vertebrate globins are all there, ``altered: E7 Q`` when a residue differs, ``missing: F8``
when the position is not covered. Flags (``flags``, comma-separated) are documented in :data:`FLAGS`.
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Iterator

import numpy as np
import pandas as pd

from globcons.align.dp import align
from globcons.align.frame_columns import reference_alignment
from globcons.align.placement import PlacedSequence, place_many
from globcons.align.scoring_profile import frame_profile, query_codes
from globcons.align.significance import DEFAULT_SHUFFLES
from globcons.analysis.family import Family, frame_family
from globcons.analysis.workers import ordered_map
from globcons.core.alphabet import N_RESIDUES, N_STANDARD, encode, looks_like_nucleotide
from globcons.core.labels import HELICES
from globcons.core.matrices import compatible_pairs
from globcons.core.properties import CORE_HYDROPHOBICITY_ARRAY, HYDROPHOBIC_CORE_MIN, POLAR_MAX
from globcons.core.vocabulary import DEVIATIONS
from globcons.errors import OptionError

__all__ = ["scan", "iter_scan", "FLAGS", "KEY_LABELS", "SUMMARY_COLUMNS", "RESIDUE_COLUMNS", "default_jobs"]

#: Key positions reported in ``key_residues``, by their canonical frame label.
KEY_LABELS = ("F8", "E7", "CD1", "B10", "E11")
#: The canonical vertebrate heme pocket (proximal His, distal His, heme-contact Phe).
CANONICAL_POCKET = {"F8": "H", "E7": "H", "CD1": "F"}
#: A helix covered less than this by the query is listed in ``helices_missing``.
HELIX_PRESENT = 0.5
SHORT_QUERY = 80
LONG_INSERTION = 20
FRAMESHIFT_RUN = 10
MAX_QUERY_LENGTH = 5000

FLAGS = {
    "empty": "the record has no residues (not placed)",
    "invalid-characters": "characters that are not amino-acid letters (not placed)",
    "nucleotide": "looks like a nucleotide sequence: translate first (not placed)",
    "too-long": f"longer than {MAX_QUERY_LENGTH} residues (not placed)",
    "internal-stop": "a '*' inside the sequence (scored as an unknown residue)",
    "X-run": "three or more unknown residues (X) in a row",
    "short": f"fewer than {SHORT_QUERY} residues (a globin fold has about 140-160)",
    "long-insertion": f"an insertion of {LONG_INSERTION} or more residues between frame positions",
    "possible-frameshift": (f"an internal stop, or a stretch of {FRAMESHIFT_RUN}+ residues that aligns nowhere "
                            f"in place of {FRAMESHIFT_RUN}+ frame positions (a translation out of frame?)"),
}

NO_DEVIATION, INSERTION, LEAVES_GROUP, BREAKS_INVARIANT = DEVIATIONS

SUMMARY_COLUMNS = ("id", "length", "nearest_reference", "identity", "score", "evalue", "is_globin",
                   "helices_missing", "key_residues", "pocket", "departures", "departures_invariant",
                   "departures_conservative", "flags")
RESIDUE_COLUMNS = ("id", "position", "residue", "frame_label", "column", "column_class", "family_residues",
                   "deviation")


# --------------------------------------------------------------------------------------------------
# one query


def _screen(sequence: str) -> tuple[str, list[str]]:
    """Clean a raw record: (sequence to place or '' if it must not be placed, flags)."""
    text = sequence.upper().replace("-", "").replace(".", "").replace("~", "")
    if text.endswith("*"):
        text = text[:-1]
    if not text:
        return "", ["empty"]
    if any(not (c.isascii() and (c.isalpha() or c == "*")) for c in text):
        return "", ["invalid-characters"]
    if looks_like_nucleotide(encode(text)):
        return "", ["nucleotide"]
    if len(text) > MAX_QUERY_LENGTH:
        return "", ["too-long"]
    flags = []
    if "*" in text:
        flags.append("internal-stop")
    if "XXX" in text:
        flags.append("X-run")
    if len(text) < SHORT_QUERY:
        flags.append("short")
    return text, flags


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """(start, end) half-open runs of True in ``mask``."""
    padded = np.concatenate(([False], mask, [False]))
    edges = np.flatnonzero(padded[1:] != padded[:-1])
    return list(zip(edges[::2].tolist(), edges[1::2].tolist(), strict=True))


def _indel_flags(columns: np.ndarray) -> list[str]:
    placed = np.flatnonzero(columns >= 0)
    if placed.size == 0:
        return []
    flags = []
    inside = np.zeros(columns.size, dtype=bool)
    inside[placed[0]:placed[-1] + 1] = True
    for start, end in _runs((columns < 0) & inside):
        skipped = int(columns[end] - columns[start - 1] - 1)
        if end - start >= LONG_INSERTION and "long-insertion" not in flags:
            flags.append("long-insertion")
        if end - start >= FRAMESHIFT_RUN and skipped >= FRAMESHIFT_RUN and "possible-frameshift" not in flags:
            flags.append("possible-frameshift")
    return flags


def _deviations(family: Family, codes: np.ndarray, columns: np.ndarray) -> np.ndarray:
    deviation = np.full(codes.size, NO_DEVIATION, dtype=object)
    placed = columns >= 0
    deviation[~placed] = INSERTION
    cols = columns[placed]
    residue = np.minimum(codes[placed], N_RESIDUES)  # unknown X never departs
    is_residue = residue < N_RESIDUES
    classes = family.classes[cols]
    breaks = (classes == "invariant") & is_residue & (residue != family.consensus[cols])
    pairs = compatible_pairs(family.matrix, family.residue_groups)
    safe = np.where(is_residue, residue, 0)
    compatible = ~((~pairs[safe]) & family.groups[cols]).any(axis=1)
    leaves = (classes == "conservative") & is_residue & ~compatible
    # A polar residue in a hydrophobic core column leaves it, whatever the column's class (not gap-rich).
    standard = residue < N_STANDARD
    polar = standard & (CORE_HYDROPHOBICITY_ARRAY[np.where(standard, residue, 0)] < POLAR_MAX)
    core = np.nan_to_num(family.core_hydrophobicity[cols], nan=-np.inf) >= HYDROPHOBIC_CORE_MIN
    leaves |= polar & core & (classes != "gap-rich") & ~breaks
    result = np.where(breaks, BREAKS_INVARIANT, np.where(leaves, LEAVES_GROUP, NO_DEVIATION))
    deviation[placed] = result
    return deviation


def _pocket(at: dict[str, str]) -> str:
    missing = [label for label in CANONICAL_POCKET if at.get(label, "-") == "-"]
    if missing:
        return "missing: " + " ".join(missing)
    altered = [f"{label} {at[label]}" for label, residue in CANONICAL_POCKET.items() if at[label] != residue]
    return "altered: " + ", ".join(altered) if altered else "canonical"


def _query_result(identifier: str, sequence: str, flags: list[str], placed: PlacedSequence | None,
                  family: Family, family_columns: np.ndarray | None, want_residues: bool):
    reference = reference_alignment()
    row = dict.fromkeys(SUMMARY_COLUMNS, "")
    row.update(id=identifier, length=len(sequence))
    if placed is None:
        row.update(is_globin="no", flags=",".join(flags), departures=0, departures_invariant=0,
                   departures_conservative=0)
        return row, None
    codes = query_codes(sequence)  # unknowns and stops: no residue of their own
    frame_columns = placed.column_of_residue
    letter_at = {}
    for label in KEY_LABELS:
        column = reference.column_of(label)
        hit = np.flatnonzero(frame_columns == column)
        letter_at[label] = sequence[hit[0]] if hit.size else "-"
    columns = frame_columns if family_columns is None else family_columns
    deviation = _deviations(family, codes, columns)
    n_breaks = int((deviation == BREAKS_INVARIANT).sum())
    n_leaves = int((deviation == LEAVES_GROUP).sum())
    flags = flags + [f for f in _indel_flags(frame_columns) if f not in flags]
    if "internal-stop" in flags and "possible-frameshift" not in flags:
        flags.append("possible-frameshift")
    row.update(
        nearest_reference=placed.nearest_reference, identity=round(placed.identity, 1), score=round(placed.score, 1),
        evalue=f"{placed.evalue:.2e}" if np.isfinite(placed.evalue) else "",
        is_globin=("yes" if placed.is_globin else "no") if np.isfinite(placed.evalue) else "",
        helices_missing=",".join(h for h in HELICES if placed.coverage.get(h, 1.0) < HELIX_PRESENT),
        key_residues=" ".join(f"{label}:{letter_at[label]}" for label in KEY_LABELS),
        pocket=_pocket(letter_at), departures=n_breaks + n_leaves, departures_invariant=n_breaks,
        departures_conservative=n_leaves, flags=",".join(flags),
    )
    if not want_residues:
        return row, None
    placed_mask = columns >= 0
    safe = np.maximum(columns, 0)
    residues = {  # plain arrays: one DataFrame per batch is built from them
        "id": np.full(len(sequence), identifier, dtype=object),
        "position": np.arange(1, len(sequence) + 1),
        "residue": np.array(list(sequence), dtype=object),
        "frame_label": np.array(placed.labels, dtype=object),
        "column": np.where(placed_mask, columns + 1, 0),
        "column_class": np.where(placed_mask, family.classes[safe], ""),
        "family_residues": np.where(placed_mask, family.family_residues[safe], ""),
        "deviation": deviation,
    }
    return row, residues


def _scan_batch(records: list[tuple[str, str]], family: Family, want_residues: bool,
                shuffles: int) -> tuple[pd.DataFrame, pd.DataFrame | None]:
    screened = [_screen(sequence) for _, sequence in records]
    to_place = [(records[i][0], text) for i, (text, _) in enumerate(screened) if text]
    placed = iter(place_many(to_place, shuffles=shuffles)) if to_place else iter(())
    family_columns = None
    if family.profile is not None and to_place:
        codes = [query_codes(text) for _, text in to_place]
        family_columns = iter(p.column_of_residue for p in align(family.profile.scores, family.profile.gaps, codes))
    rows, residue_tables = [], []
    for (identifier, raw), (text, flags) in zip(records, screened, strict=True):
        placement = next(placed) if text else None
        columns = next(family_columns) if (text and family_columns is not None) else None
        row, residues = _query_result(identifier, text, flags, placement, family, columns, want_residues)
        if placement is None:
            row["length"] = len(raw.strip())
        rows.append(row)
        if residues is not None:
            residue_tables.append(residues)
    summary = pd.DataFrame(rows, columns=list(SUMMARY_COLUMNS))
    if not want_residues:
        return summary, None
    if not residue_tables:
        return summary, pd.DataFrame(columns=list(RESIDUE_COLUMNS))
    joined = {name: np.concatenate([t[name] for t in residue_tables]) for name in RESIDUE_COLUMNS}
    column = pd.array(joined["column"], dtype="Int64")
    column[joined["column"] == 0] = pd.NA
    joined["column"] = column
    return summary, pd.DataFrame(joined)


# --------------------------------------------------------------------------------------------------
# batches and workers


def default_jobs() -> int:
    """Worker processes by default: the cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


def _chunks(records: Iterable[tuple[str, str]], size: int) -> Iterator[list[tuple[str, str]]]:
    batch: list[tuple[str, str]] = []
    for record in records:
        batch.append(record)
        if len(batch) == size:
            yield batch
            batch = []
    if batch:
        yield batch


def iter_scan(records: Iterable[tuple[str, str]], family: Family | None = None, residues: bool = True,
              jobs: int = 1, batch_size: int = 256,
              shuffles: int = DEFAULT_SHUFFLES) -> Iterator[tuple[pd.DataFrame, pd.DataFrame | None]]:
    """Scan records in batches, yielding (summary rows, residue rows) per batch, in input order.

    Memory stays that of a few batches whatever the number of records; results are identical for any
    ``jobs`` (each query's significance is seeded from the query itself).

    Parameters
    ----------
    records
        ``(id, sequence)`` pairs, e.g. from :func:`globcons.io.readers.stream_records`.
    family
        :func:`~globcons.analysis.family.frame_family` (default) or
        :func:`~globcons.analysis.family.family_from_alignment`.
    residues
        Build the per-residue table too.
    jobs
        Worker processes (1: in this process).
    batch_size
        Queries per batch.
    """
    if jobs < 1:
        raise OptionError(f"--jobs must be at least 1, got {jobs}")
    family = family or frame_family()
    frame_profile()  # build the caches once, before any worker forks
    batches = _chunks(records, batch_size)
    if jobs == 1:
        for batch in batches:
            yield _scan_batch(batch, family, residues, shuffles)
        return
    yield from ordered_map(_scan_batch, batches, jobs, state=(family, residues, shuffles))


def scan(records: Iterable[tuple[str, str]], family: Family | None = None,
         jobs: int = 1, shuffles: int = DEFAULT_SHUFFLES) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Scan sequences: (summary, per-residue) tables (columns :data:`SUMMARY_COLUMNS`, :data:`RESIDUE_COLUMNS`).

    Examples
    --------
    >>> from globcons.frame.reference import reference_chain
    >>> beta = reference_chain("human_hemoglobin_beta").full_sequence
    >>> summary, residues = scan([("beta", beta), ("beta_H92Y", beta[:92] + "Y" + beta[93:])])
    >>> summary[["id", "pocket"]].values.tolist()
    [['beta', 'canonical'], ['beta_H92Y', 'altered: F8 Y']]

    Departures are judged against the family's confident classes: the built-in one is three chains,
    too thin for any (give ``family=family_from_alignment(...)``), so here both rows have none.

    >>> summary["departures"].tolist()
    [0, 0]
    """
    parts = list(iter_scan(records, family, residues=True, jobs=jobs, shuffles=shuffles))
    if not parts:
        return pd.DataFrame(columns=list(SUMMARY_COLUMNS)), pd.DataFrame(columns=list(RESIDUE_COLUMNS))
    summary = pd.concat([p[0] for p in parts], ignore_index=True)
    residues = pd.concat([p[1] for p in parts], ignore_index=True)
    return summary, residues
