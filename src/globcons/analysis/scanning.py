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

import itertools
import os
import re
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from globcons.align.dp import COMPILED_AFTER_CELLS, align, prepare_kernels
from globcons.align.frame_columns import reference_alignment
from globcons.align.placement import PlacedSequence, frame_labels, place_many
from globcons.align.scoring_profile import frame_profile, query_codes
from globcons.align.significance import DEFAULT_SHUFFLES
from globcons.analysis.family import Family, frame_family
from globcons.analysis.scan_text import cell_texts, delimited_text, number_texts
from globcons.analysis.workers import ordered_map
from globcons.core.alphabet import N_RESIDUES, N_STANDARD, encode, looks_like_nucleotide
from globcons.core.labels import HELICES
from globcons.core.matrices import compatible_pairs
from globcons.core.properties import CORE_HYDROPHOBICITY_ARRAY, HYDROPHOBIC_CORE_MIN, POLAR_MAX
from globcons.core.vocabulary import DEVIATIONS
from globcons.errors import OptionError

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["scan", "iter_scan", "iter_scan_batches", "ScanBatch", "header_text", "FLAGS", "KEY_LABELS",
           "SUMMARY_COLUMNS", "RESIDUE_COLUMNS", "default_jobs"]

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
# one batch

_LETTERS = re.compile(r"[A-Z*]*")


def _screen(sequence: str) -> tuple[str, list[str]]:
    """Clean a raw record: (sequence to place or '' if it must not be placed, flags)."""
    text = sequence.upper().replace("-", "").replace(".", "").replace("~", "")
    if text.endswith("*"):
        text = text[:-1]
    if not text:
        return "", ["empty"]
    if not (text.isascii() and _LETTERS.fullmatch(text)):  # upper() leaves only these as ASCII letters
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
    """The deviation word of every residue (of one query or of many end to end): object array of str."""
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


#: One character string per byte value, so that letters of many sequences become an object array at once.
_CHARACTERS = np.array([chr(b) for b in range(256)], dtype=object)


def _key_letters(texts: list[str], frame_columns: np.ndarray, query: np.ndarray, letters: np.ndarray) -> list[dict]:
    """Per query: the residue at each of :data:`KEY_LABELS` ('-' where no residue is placed there)."""
    reference = reference_alignment()
    at = [dict.fromkeys(KEY_LABELS, "-") for _ in texts]
    for label in KEY_LABELS:
        hits = np.flatnonzero(frame_columns == reference.column_of(label))
        owners, first = np.unique(query[hits], return_index=True)  # the first residue of each query there
        for q, letter in zip(owners.tolist(), letters[hits[first]].tolist(), strict=True):
            at[q][label] = letter
    return at


@dataclass(frozen=True, eq=False)
class _Placed:
    """The placed queries of a batch end to end (``query``: each residue's query, 0-based among them)."""

    ids: list[str]
    texts: list[str]
    flags: list[list[str]]
    placements: list[PlacedSequence]
    lengths: np.ndarray
    query: np.ndarray
    letters: np.ndarray
    frame_columns: np.ndarray
    columns: np.ndarray
    deviation: np.ndarray


def _place_batch(records: list[tuple[str, str, list[str]]], family: Family, shuffles: int) -> _Placed:
    """Place the screened records (id, text, flags) on the frame (and on the family's profile)."""
    texts = [text for _, text, _ in records]
    placements = place_many([(identifier, text) for identifier, text, _ in records], shuffles=shuffles)
    codes_list = [query_codes(text) for text in texts]  # unknowns and stops: no residue of their own
    lengths = np.array([len(text) for text in texts], dtype=np.int64)
    query = np.repeat(np.arange(len(texts)), lengths)
    frame_columns = np.concatenate([p.column_of_residue for p in placements] or [np.zeros(0, np.int64)])
    columns = frame_columns
    if family.profile is not None and texts:
        columns = np.concatenate([p.column_of_residue for p in align(family.profile.scores, family.profile.gaps,
                                                                         codes_list)])
    codes = np.concatenate(codes_list or [np.zeros(0, np.uint8)])
    letters = _CHARACTERS[np.frombuffer("".join(texts).encode("ascii"), dtype=np.uint8)]
    return _Placed([r[0] for r in records], texts, [r[2] for r in records], placements, lengths, query, letters,
                   frame_columns, columns, _deviations(family, codes, columns))


def _summary_rows(placed: _Placed) -> list[dict[str, object]]:
    """One summary row per placed query."""
    n = len(placed.texts)
    n_breaks = np.bincount(placed.query, weights=placed.deviation == BREAKS_INVARIANT, minlength=n).astype(int)
    n_leaves = np.bincount(placed.query, weights=placed.deviation == LEAVES_GROUP, minlength=n).astype(int)
    key = _key_letters(placed.texts, placed.frame_columns, placed.query, placed.letters)
    rows = []
    for q, (p, flags, at) in enumerate(zip(placed.placements, placed.flags, key, strict=True)):
        flags = flags + [f for f in _indel_flags(p.column_of_residue) if f not in flags]
        if "internal-stop" in flags and "possible-frameshift" not in flags:
            flags.append("possible-frameshift")
        breaks, leaves = int(n_breaks[q]), int(n_leaves[q])
        significant = np.isfinite(p.evalue)
        rows.append({
            "id": placed.ids[q], "length": len(placed.texts[q]), "nearest_reference": p.nearest_reference,
            "identity": round(p.identity, 1), "score": round(p.score, 1),
            "evalue": f"{p.evalue:.2e}" if significant else "",
            "is_globin": ("yes" if p.is_globin else "no") if significant else "",
            "helices_missing": ",".join(h for h in HELICES if p.coverage.get(h, 1.0) < HELIX_PRESENT),
            "key_residues": " ".join(f"{label}:{at[label]}" for label in KEY_LABELS), "pocket": _pocket(at),
            "departures": breaks + leaves, "departures_invariant": breaks, "departures_conservative": leaves,
            "flags": ",".join(flags)})
    return rows


def _residue_columns(placed: _Placed, family: Family) -> dict[str, np.ndarray]:
    """The per-residue table of the batch as arrays (``column`` 0 where the residue has none)."""
    reference = reference_alignment()
    chains = np.array([reference.chain_index(p.nearest_reference) for p in placed.placements], dtype=np.int64)
    on_column = placed.columns >= 0
    safe = np.maximum(placed.columns, 0)
    starts = np.cumsum(placed.lengths) - placed.lengths
    return {
        "id": np.repeat(np.array(placed.ids, dtype=object), placed.lengths),
        "position": np.arange(placed.query.size) - np.repeat(starts, placed.lengths) + 1,
        "residue": placed.letters,
        "frame_label": frame_labels(placed.frame_columns, chains[placed.query], reference),
        "column": np.where(on_column, placed.columns + 1, 0),
        "column_class": np.where(on_column, family.classes[safe], ""),
        "family_residues": np.where(on_column, family.family_residues[safe], ""),
        "deviation": placed.deviation,
    }


@dataclass(frozen=True, eq=False)
class ScanBatch:
    """The results of one batch of queries, as plain columns (DataFrames or text on demand).

    Attributes
    ----------
    rows
        One summary row (a dict over :data:`SUMMARY_COLUMNS`) per query, in input order.
    residues
        The per-residue table as arrays over :data:`RESIDUE_COLUMNS` (``column`` 0 where the residue has
        none), or None when not asked for (or dropped after :meth:`rendered`).
    texts
        Filled by :meth:`rendered`: the summary's and the per-residue table's lines as text, no header.
    """

    rows: list[dict[str, object]]
    residues: dict[str, np.ndarray] | None
    texts: tuple[str, str | None] | None = None

    @property
    def globins(self) -> int:
        """Queries called globins."""
        return sum(row["is_globin"] == "yes" for row in self.rows)

    @property
    def departing(self) -> int:
        """Queries with at least one departure."""
        return sum(row["departures"] > 0 for row in self.rows)

    def summary_frame(self) -> pd.DataFrame:
        """The summary rows as a DataFrame (columns :data:`SUMMARY_COLUMNS`)."""
        import pandas as pd

        return pd.DataFrame(self.rows, columns=list(SUMMARY_COLUMNS))

    def residue_frame(self) -> pd.DataFrame | None:
        """The per-residue rows as a DataFrame (``column`` a nullable integer), or None."""
        import pandas as pd

        if self.residues is None:
            return None
        if not self.residues["id"].size:
            return pd.DataFrame(columns=list(RESIDUE_COLUMNS))
        table = dict(self.residues)
        column = pd.array(table["column"], dtype="Int64")
        column[table["column"] == 0] = pd.NA
        table["column"] = column
        return pd.DataFrame(table)

    def summary_text(self, fmt: str) -> str:
        """The summary rows as ``fmt`` (tsv or csv) lines, no header."""
        return delimited_text([cell_texts([row[name] for row in self.rows]) for name in SUMMARY_COLUMNS], fmt)

    def residue_text(self, fmt: str) -> str:
        """The per-residue rows as ``fmt`` (tsv or csv) lines, no header."""
        if self.residues is None:
            raise ValueError("this batch has no per-residue table")
        table = dict(self.residues)
        table["position"] = number_texts(table["position"])
        table["column"] = number_texts(table["column"], zero="")  # no column: an empty cell
        return delimited_text([table[name].tolist() for name in RESIDUE_COLUMNS], fmt)

    def rendered(self, summary_format: str, residue_format: str | None, keep_residues: bool = False) -> ScanBatch:
        """This batch with :attr:`texts` filled (the per-residue one when ``residue_format`` is given), keeping
        the per-residue arrays only with ``keep_residues`` (text crosses between processes faster)."""
        residue_text = self.residue_text(residue_format) if residue_format else None
        return ScanBatch(self.rows, self.residues if keep_residues else None,
                         (self.summary_text(summary_format), residue_text))


def header_text(columns: Sequence[str], fmt: str) -> str:
    """The header line of a table of ``columns`` in ``fmt`` (tsv or csv)."""
    return delimited_text([[name] for name in columns], fmt)


def _scan_batch(records: list[tuple[str, str]], family: Family, want_residues: bool, shuffles: int) -> ScanBatch:
    screened = [_screen(sequence) for _, sequence in records]
    to_place = [(identifier, text, flags) for (identifier, _), (text, flags) in zip(records, screened, strict=True)
                if text]
    placed = _place_batch(to_place, family, shuffles)
    placed_rows = iter(_summary_rows(placed))
    rows = []
    for (identifier, raw), (text, flags) in zip(records, screened, strict=True):
        if text:
            rows.append(next(placed_rows))
            continue
        row = dict.fromkeys(SUMMARY_COLUMNS, "")
        row.update(id=identifier, length=len(raw.strip()), is_globin="no", flags=",".join(flags), departures=0,
                   departures_invariant=0, departures_conservative=0)
        rows.append(row)
    return ScanBatch(rows, _residue_columns(placed, family) if want_residues else None)


# --------------------------------------------------------------------------------------------------
# batches and workers

def _finished(batch: ScanBatch, render: tuple | None) -> ScanBatch:
    return batch if render is None else batch.rendered(*render)


def _worker_batch(records: list[tuple[str, str]], family: Family, want_residues: bool, shuffles: int,
                  render: tuple | None, compiled: bool) -> ScanBatch:
    """One batch in a worker process (:func:`~globcons.analysis.workers.ordered_map`), rendered as text there."""
    if compiled:  # forked workers have the parent's kernels already (a no-op); started ones load them here
        prepare_kernels(COMPILED_AFTER_CELLS)
    return _finished(_scan_batch(records, family, want_residues, shuffles), render)



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


def iter_scan_batches(records: Iterable[tuple[str, str]], family: Family | None = None, residues: bool = True,
                      jobs: int = 1, batch_size: int = 256, shuffles: int = DEFAULT_SHUFFLES,
                      render: tuple[str, str | None, bool] | None = None) -> Iterator[ScanBatch]:
    """Scan records in batches, yielding a :class:`ScanBatch` per batch, in input order.

    Memory stays that of a few batches whatever the number of records; results are identical for any
    ``jobs`` (each query's significance is seeded from the query itself).

    Parameters
    ----------
    records
        ``(id, sequence)`` pairs, e.g. from :func:`globcons.io.records.stream_records`.
    family
        :func:`~globcons.analysis.family.frame_family` (default) or
        :func:`~globcons.analysis.family.family_from_alignment`.
    residues
        Build the per-residue table too.
    jobs
        Worker processes (1: in this process).
    batch_size
        Queries per batch.
    shuffles
        Shuffled copies per query for the E-value.
    render
        ``(summary format, residue format or None, keep the residue arrays)``: each batch comes
        :meth:`ScanBatch.rendered` (in the worker, so that text, not arrays, crosses between processes).
    """
    if jobs < 1:
        raise OptionError(f"--jobs must be at least 1, got {jobs}")
    family = family or frame_family()
    frame = frame_profile()  # build the caches once, before any worker forks
    batches = _chunks(records, batch_size)
    # A look at the first batches: if they alone make enough alignment work, load the compiled kernels
    # now (before the workers fork, so they share them) rather than after a first stretch on numpy.
    ahead = list(itertools.islice(batches, 2 * jobs))
    alignments = shuffles + 1 + (family.profile is not None)  # per query: shuffles, frame, family profile
    residues_ahead = sum(len(sequence) for batch in ahead for _, sequence in batch)
    compiled = prepare_kernels(residues_ahead * alignments * max(frame.n_columns, family.n_columns))
    batches = itertools.chain(ahead, batches)
    if jobs == 1:
        for batch in batches:
            yield _finished(_scan_batch(batch, family, residues, shuffles), render)
        return
    yield from ordered_map(_worker_batch, batches, jobs, state=(family, residues, shuffles, render, compiled))


def iter_scan(records: Iterable[tuple[str, str]], family: Family | None = None, residues: bool = True,
              jobs: int = 1, batch_size: int = 256,
              shuffles: int = DEFAULT_SHUFFLES) -> Iterator[tuple[pd.DataFrame, pd.DataFrame | None]]:
    """Scan records in batches, yielding (summary rows, residue rows) DataFrames per batch, in input order.

    Parameters as :func:`iter_scan_batches`.
    """
    for batch in iter_scan_batches(records, family, residues=residues, jobs=jobs, batch_size=batch_size,
                                   shuffles=shuffles):
        yield batch.summary_frame(), batch.residue_frame()


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
    import pandas as pd

    parts = list(iter_scan(records, family, residues=True, jobs=jobs, shuffles=shuffles))
    if not parts:
        return pd.DataFrame(columns=list(SUMMARY_COLUMNS)), pd.DataFrame(columns=list(RESIDUE_COLUMNS))
    summary = pd.concat([p[0] for p in parts], ignore_index=True)
    residues = pd.concat([p[1] for p in parts], ignore_index=True)
    return summary, residues
