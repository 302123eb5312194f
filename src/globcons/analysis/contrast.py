"""Group contrast: the columns that are conserved inside groups of sequences but differ between them.

Given an alignment and a grouping of its rows (a table of ``id<TAB>group``, a regular expression over the
ids, or each row's nearest reference chain), :func:`contrast_columns` scores every column.

Definitions
-----------
Rows are weighted on the *whole* alignment (:func:`globcons.core.weights.compute_weights`); rows without a
group are then left out, and so are groups whose effective size (sum of their rows' weights) is below
``min_group_neff``. For the ``g`` groups kept, in column ``j``:

``O[k, a]``
    the summed weight of the rows of group ``k`` holding residue ``a`` (22 residue codes: the 20
    standard ones, U and O; gaps and X are not residues). ``n_k = sum_a O[k, a]``, ``N = sum_k n_k``.
``p_k = O[k, :] / n_k``
    the group's residue distribution (undefined, and the group ignored in that column, when ``n_k = 0``).
``consensus_<group>``
    the group's most weighted residue (ties alphabetical; ``-`` when it has none).
``conservation_<group>``
    ``1 - H(p_k) / log2(20)`` over the 20 standard residues (1: one residue; 0: all twenty alike).
``contrast``
    the generalised Jensen-Shannon divergence (Lin 1991, IEEE Trans Inf Theory 37:145) of the group
    distributions, in bits: ``H(sum_k pi_k p_k) - sum_k pi_k H(p_k)``, with ``pi_k`` the group's effective
    size divided by the summed effective size of the groups that hold a residue in the column. It lies
    between 0 (every group has the same distribution) and ``log2(g)``; for two groups of equal size it is
    the squared Jensen-Shannon distance.
``mi``
    the mutual information (Shannon 1948) between residue and group in the column's joint table ``O / N``,
    in bits, with the Miller-Madow correction (Miller 1955) of each of the three entropies in
    ``MI = H(residue) + H(group) - H(residue, group)``, i.e.
    ``mi = MI_plugin - (m_rg - m_r - m_g + 1) / (2 N ln 2)`` with ``m_*`` the numbers of non-empty cells of
    the joint table and of its margins; clipped at 0. Without gaps, ``contrast`` equals ``MI_plugin``.
``pvalue``
    the G-test of independence of residue and group (Sokal & Rohlf, Biometry):
    ``G = 2 sum O ln(O / E)``, ``E[k, a] = n_k * sum_k O[k, a] / N``, referred to chi-square with
    ``(r - 1)(g' - 1)`` degrees of freedom (``r`` residues and ``g'`` groups present in the column);
    1 when the degrees of freedom are 0. With ``weights="none"`` ``O`` are counts and this is the usual
    test; with sequence weights, ``O`` are effective counts and the p-value is an approximation.
``pvalue_permutation`` (``permutations=K > 0``)
    ``(1 + #{permutations with G >= G_observed}) / (1 + K)``, the group labels of the kept rows permuted
    ``K`` times with a fixed seed (the row weights move with the rows); valid at any sample size.
``qvalue`` (and ``qvalue_permutation``)
    the Benjamini-Hochberg q-value (Benjamini & Hochberg 1995, J R Stat Soc B 57:289) of ``pvalue`` (and of
    ``pvalue_permutation``) over the tested columns, those whose test has at least one degree of freedom
    (their number is ``.attrs["tested_columns"]``); a column with nothing to test has p = q = 1.
``class``
    ``gap-rich`` when the weighted gap fraction of the grouped rows exceeds ``rules.max_gaps``; else,
    calling a group *conserved* in the column when its own gap fraction is at most ``rules.max_gaps`` and
    its consensus residue carries at least ``conserved_min`` of its residue weight: ``shared`` when every
    group is conserved with the same consensus, ``group-specific`` when every group is conserved and the
    consensus differs between some groups, ``mixed`` otherwise.
"""

from __future__ import annotations

import math
import os
import re
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from globcons._version import __version__
from globcons.align.anchor import ColumnMapping, map_columns
from globcons.align.significance import DEFAULT_SHUFFLES
from globcons.core.alignment import Alignment
from globcons.core.alphabet import N_CODES, N_RESIDUES, decode
from globcons.core.classes import ClassRules
from globcons.core.multiple_testing import bh_qvalues
from globcons.core.scores import consensus, entropy_norm, gap_fraction, shannon_entropy
from globcons.core.vocabulary import CONTRAST_CLASSES
from globcons.core.weights import compute_weights
from globcons.errors import InputError, InputWarning, OptionError
from globcons.frame.functional_sites import column_sites
from globcons.io.opening import read_text

__all__ = ["CONTRAST_CLASSES", "NEAREST_GROUPS", "assign_groups", "read_groups", "contrast_columns",
           "GroupedRows", "group_counts", "group_labels", "permutation_pvalues", "summarise_contrast", "top_contrast"]

#: Group of each reference chain for ``--group-by nearest`` (rows that do not place as globins: ``other``).
NEAREST_GROUPS: dict[str, str] = {
    "sperm_whale_myoglobin": "myoglobin-like",
    "human_myoglobin": "myoglobin-like",
    "human_hemoglobin_alpha": "alpha-like",
    "human_hemoglobin_beta": "beta-like",
}

_HEADER_WORDS = {"id", "ids", "sequence", "sequence_id", "seq_id", "name", "identifier", "accession", "row"}
_TOLERANCE = 1e-9
#: Upper bound of the (permutations x rows x columns) index array of one permutation block.
_BLOCK_ELEMENTS = 4_000_000
#: Default share of a group's residue weight its consensus needs for the group to count as conserved.
CONSERVED_MIN = 0.8
#: Default smallest effective size of a group that is kept.
MIN_GROUP_NEFF = 3.0


# ---------------------------------------------------------------------------------------------------
# Groups


def read_groups(path: str | os.PathLike) -> dict[str, str]:
    """Read a groups table: one ``id<TAB>group`` per line, an optional header, ``#`` comments, blank lines.

    The first line is a header when its first field is one of ``id``, ``sequence``, ``name``, ...
    (case-insensitive).

    Raises
    ------
    InputError
        Naming the file and line, for a line without exactly two non-empty tab-separated fields or an id
        given two different groups.
    """
    source = str(path)
    text = read_text(path, "groups table")
    groups: dict[str, str] = {}
    first = True
    for number, raw in enumerate(text.splitlines(), start=1):
        line = raw.rstrip("\r")
        if not line.strip() or line.lstrip().startswith("#"):
            continue
        fields = [field.strip() for field in line.split("\t")]
        if first and fields[0].lower() in _HEADER_WORDS:
            first = False
            continue
        first = False
        if len(fields) != 2 or not fields[0] or not fields[1]:
            raise InputError(f"expected 'id<TAB>group', got {line[:60]!r}", source=source, line=number)
        identifier, group = fields
        if groups.get(identifier, group) != group:
            raise InputError(f"id {identifier!r} is given two groups ({groups[identifier]!r} and {group!r})",
                             source=source, line=number)
        groups[identifier] = group
    if not groups:
        raise InputError("the groups table lists no id", source=source)
    return groups


def _groups_by_regex(ids: Sequence[str], pattern: str) -> np.ndarray:
    try:
        compiled = re.compile(pattern)
    except re.error as exc:
        raise OptionError(f"--group-by {pattern!r} is not a regular expression ({exc})") from None
    if compiled.groups != 1:
        raise OptionError(f"--group-by {pattern!r} must have exactly one capture group (...), it has "
                          f"{compiled.groups}")
    result = np.full(len(ids), "", dtype=object)
    for index, identifier in enumerate(ids):
        match = compiled.search(identifier)
        if match and match.group(1):
            result[index] = match.group(1)
    return result


def _groups_by_nearest(alignment: Alignment, shuffles: int) -> np.ndarray:
    from globcons.align.placement import place_many  # placement is only needed for this grouping

    result = np.full(alignment.n_rows, "", dtype=object)
    rows = [i for i in range(alignment.n_rows) if (alignment.codes[i] < N_RESIDUES).any()]
    records = [(alignment.ids[i], decode(alignment.codes[i]).replace("-", "")) for i in rows]
    for row, placed in zip(rows, place_many(records, shuffles=shuffles), strict=True):
        result[row] = NEAREST_GROUPS.get(placed.nearest_reference, "other") if placed.is_globin else "other"
    return result


def assign_groups(alignment: Alignment, groups_file: str | os.PathLike | None = None,
                  group_by: str | None = None, shuffles: int = DEFAULT_SHUFFLES) -> np.ndarray:
    """The group of every row of an alignment.

    Parameters
    ----------
    alignment
        The alignment.
    groups_file
        A table of ``id<TAB>group`` (see :func:`read_groups`); ids not in the alignment are ignored.
    group_by
        A regular expression with one capture group, searched in each id (the captured text is the
        group); or ``"nearest"``: the row's nearest reference chain on the globin frame, as
        ``myoglobin-like``, ``alpha-like``, ``beta-like``, or ``other`` for rows that do not place
        significantly (E-value from ``shuffles`` shuffled copies).
    shuffles
        Shuffled copies per row for ``nearest`` (must be > 0 to tell ``other``).

    Returns
    -------
    numpy.ndarray
        Object array of length N: the group name of each row, ``""`` for a row without a group. The
        number of rows without a group is reported as an :class:`~globcons.errors.InputWarning`.
    """
    if (groups_file is None) == (group_by is None):
        raise OptionError("give either a groups table (--groups FILE) or --group-by REGEX|nearest")
    if groups_file is not None:
        table = read_groups(groups_file)
        result = np.array([table.get(identifier, "") for identifier in alignment.ids], dtype=object)
        unknown = len(set(table) - set(alignment.ids))
        if unknown == len(table):
            raise InputError(f"none of its {len(table)} ids is a row of {alignment.source}", source=str(groups_file))
        if unknown:
            warnings.warn(f"{unknown} id(s) of {groups_file} are not rows of the alignment (ignored)", InputWarning,
                          stacklevel=2)
    elif group_by == "nearest":
        if shuffles <= 0:
            raise OptionError("--group-by nearest needs shuffled copies to tell non-globins (shuffles > 0)")
        result = _groups_by_nearest(alignment, shuffles)
    else:
        result = _groups_by_regex(alignment.ids, str(group_by))
    missing = int((result == "").sum())
    if missing:
        warnings.warn(f"{missing} of {alignment.n_rows} rows have no group and are left out", InputWarning,
                      stacklevel=2)
    return result


# ---------------------------------------------------------------------------------------------------
# Counts and scores


def group_counts(codes: np.ndarray, labels: np.ndarray, n_groups: int, weights: np.ndarray) -> np.ndarray:
    """Weighted count of every code in every column of every group, from ONE bincount.

    Parameters
    ----------
    codes
        ``uint8`` (N, L).
    labels
        ``int`` (N,): group index 0..n_groups-1 of each row.
    n_groups
        Number of groups.
    weights
        (N,) row weights.

    Returns
    -------
    numpy.ndarray
        ``float64`` (n_groups, L, N_CODES).
    """
    n_columns = codes.shape[1]
    offsets = ((labels.astype(np.int64)[:, None] * n_columns + np.arange(n_columns, dtype=np.int64)[None, :])
               * N_CODES + codes)
    flat = np.bincount(offsets.ravel(), weights=np.broadcast_to(weights[:, None], codes.shape).ravel(),
                       minlength=n_groups * n_columns * N_CODES)
    return flat.reshape(n_groups, n_columns, N_CODES)


def _xlogx(x: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(x > 0, x * np.log(np.where(x > 0, x, 1.0)), 0.0)


def _g_statistic(residues: np.ndarray) -> np.ndarray:
    """G = 2 sum O ln(O/E) of every column; ``residues`` (..., g, L, R) -> (..., L).

    Uses sum O ln(O/E) = sum xlogx(O) - sum xlogx(row) - sum xlogx(col) + xlogx(N).
    """
    by_residue = residues.sum(axis=-3)  # (..., L, R)
    by_group = residues.sum(axis=-1)  # (..., g, L)
    total = by_group.sum(axis=-2)  # (..., L)
    value = (_xlogx(residues).sum(axis=(-3, -1)) - _xlogx(by_residue).sum(axis=-1) - _xlogx(by_group).sum(axis=-2)
             + _xlogx(total))
    return np.maximum(2.0 * value, 0.0)


def _entropy_or_zero(p: np.ndarray) -> np.ndarray:
    """Shannon entropy along the last axis, 0 (not NaN) for an all-zero row: absent groups weigh 0 anyway."""
    return np.nan_to_num(shannon_entropy(p), nan=0.0)


def _contrast_scores(residues: np.ndarray, group_sizes: np.ndarray) -> dict[str, np.ndarray]:
    """Scores of every column from the (g, L, R) residue counts and the groups' effective sizes."""
    from scipy.stats import chi2  # the chi-square tail, only needed here

    n_k = residues.sum(axis=2)  # (g, L)
    total = n_k.sum(axis=0)  # (L,)
    present = n_k > 0
    with np.errstate(invalid="ignore", divide="ignore"):
        p = np.where(present[:, :, None], residues / np.where(present, n_k, 1.0)[:, :, None], 0.0)
    pi = np.where(present, group_sizes[:, None], 0.0)
    pi = pi / np.where(pi.sum(axis=0) > 0, pi.sum(axis=0), 1.0)
    mixture = (pi[:, :, None] * p).sum(axis=0)
    contrast = _entropy_or_zero(mixture) - (pi * _entropy_or_zero(p)).sum(axis=0)
    contrast = np.maximum(contrast, 0.0)

    g_stat = _g_statistic(residues)
    with np.errstate(invalid="ignore", divide="ignore"):
        mi_plugin = g_stat / (2.0 * np.where(total > 0, total, 1.0) * math.log(2.0))
    m_rg = (residues > 0).sum(axis=(0, 2))
    m_r = (residues.sum(axis=0) > 0).sum(axis=1)
    m_g = present.sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        bias = (m_rg - m_r - m_g + 1) / (2.0 * np.where(total > 0, total, 1.0) * math.log(2.0))
    mi = np.maximum(mi_plugin - bias, 0.0)
    df = (m_r - 1).clip(min=0) * (m_g - 1).clip(min=0)
    pvalue = np.where(df > 0, chi2.sf(g_stat, np.maximum(df, 1)), 1.0)
    empty = total <= 0
    for array in (contrast, mi, pvalue, g_stat, mi_plugin):
        array[empty] = np.nan
    return {"contrast": contrast, "mi": mi, "mi_plugin": mi_plugin, "g": g_stat, "df": df, "pvalue": pvalue,
            "p": p, "n_k": n_k, "total": total}


def permutation_pvalues(codes: np.ndarray, labels: np.ndarray, n_groups: int, weights: np.ndarray,
                        observed: np.ndarray, permutations: int, seed: int = 0) -> np.ndarray:
    """Permutation p-values of the G statistic of every column, permutations batched.

    The group labels are permuted ``permutations`` times (one ``(K, N)`` array from a seeded generator);
    each block of permutations is counted with one bincount over (permutation, group, column, code)
    offsets, so no loop runs over columns or single permutations.

    Parameters
    ----------
    codes, labels, n_groups, weights
        As for :func:`group_counts`.
    observed
        (L,) the observed G of each column.
    permutations
        K.
    seed
        Seed of :func:`numpy.random.default_rng`.

    Returns
    -------
    numpy.ndarray
        (L,) ``(1 + #{G_perm >= G_obs}) / (1 + K)``; NaN where ``observed`` is NaN.
    """
    n_rows, n_columns = codes.shape
    if seed < 0:
        raise OptionError(f"--seed must be a whole number from 0, got {seed}")
    rng = np.random.default_rng(seed)
    permuted = rng.permuted(np.broadcast_to(labels.astype(np.int64), (permutations, n_rows)), axis=1)
    cell = (np.arange(n_columns, dtype=np.int64)[None, :] * N_CODES + codes)  # (N, L)
    row_weights = np.broadcast_to(weights[:, None], codes.shape)
    per_block = max(1, _BLOCK_ELEMENTS // max(1, n_rows * n_columns))
    exceed = np.zeros(n_columns, dtype=np.int64)
    threshold = observed - 1e-9 * np.maximum(1.0, np.abs(observed))  # equal tables may differ in the last bits
    for start in range(0, permutations, per_block):
        block = permuted[start:start + per_block]
        k = block.shape[0]
        offsets = ((np.arange(k, dtype=np.int64)[:, None] * n_groups + block)[:, :, None]
                   * (n_columns * N_CODES) + cell[None, :, :])
        flat = np.bincount(offsets.ravel(), weights=np.broadcast_to(row_weights, (k,) + codes.shape).ravel(),
                           minlength=k * n_groups * n_columns * N_CODES)
        counts = flat.reshape(k, n_groups, n_columns, N_CODES)[..., :N_RESIDUES]
        exceed += (_g_statistic(counts) >= threshold[None, :]).sum(axis=0)
    pvalues = (1.0 + exceed) / (1.0 + permutations)
    pvalues[~np.isfinite(observed)] = np.nan
    return pvalues


def _conservation(residues: np.ndarray) -> np.ndarray:
    """1 - normalised entropy over the 20 standard residues, per group and column; NaN where a group has none."""
    return np.clip(1.0 - entropy_norm(residues), 0.0, 1.0)


def group_labels(alignment: Alignment, groups) -> np.ndarray:
    """The group name of every row (``""`` for none), from a sequence of names or a mapping id -> group."""
    if isinstance(groups, Mapping):
        return np.array([str(groups.get(identifier, "") or "") for identifier in alignment.ids], dtype=object)
    labels = np.array(["" if g is None else str(g) for g in groups], dtype=object)
    if labels.shape != (alignment.n_rows,):
        raise OptionError(f"{labels.size} group names for {alignment.n_rows} rows")
    return labels


@dataclass(frozen=True, eq=False)
class GroupedRows:
    """The rows of the groups kept for a contrast: their codes, group index and weights.

    Attributes
    ----------
    kept
        Names of the groups kept (effective size at least the minimum), sorted.
    sizes
        Every group's ``rows`` and ``effective_size`` (kept or not).
    in_kept
        (N,) bool: the row belongs to a kept group.
    codes, labels, weights
        Codes (n, L), group index (n,) and weight (n,) of the rows of the kept groups.
    """

    kept: tuple[str, ...]
    sizes: dict[str, dict[str, float]]
    in_kept: np.ndarray
    codes: np.ndarray
    labels: np.ndarray
    weights: np.ndarray

    @property
    def effective_sizes(self) -> np.ndarray:
        return np.array([self.sizes[g]["effective_size"] for g in self.kept])

    @classmethod
    def of(cls, alignment: Alignment, names: np.ndarray, row_weights: np.ndarray,
           min_group_neff: float) -> GroupedRows:
        """Group the rows; refuse fewer than two groups of at least ``min_group_neff``."""
        all_groups = sorted(set(names) - {""})
        sizes = {g: {"rows": int((names == g).sum()),
                     "effective_size": round(float(row_weights[names == g].sum()), 6)} for g in all_groups}
        kept = tuple(g for g in all_groups if sizes[g]["effective_size"] >= min_group_neff - _TOLERANCE)
        if len(kept) < 2:
            have = ", ".join(f"{g} ({v['effective_size']:.1f})" for g, v in sizes.items()) or "none"
            raise OptionError(f"need at least two groups with an effective size of at least {min_group_neff:g}; "
                              f"have {have}")
        return cls.select(alignment, names, row_weights, kept, sizes)

    @classmethod
    def select(cls, alignment: Alignment, names: np.ndarray, row_weights: np.ndarray, kept: Sequence[str],
               sizes: dict[str, dict[str, float]] | None = None) -> GroupedRows:
        """The rows of the named groups ``kept``, in that group order."""
        index = {g: k for k, g in enumerate(kept)}
        in_kept = np.array([name in index for name in names], dtype=bool)
        labels = np.array([index[name] for name in names[in_kept]], dtype=np.int64)
        return cls(tuple(kept), sizes or {}, in_kept, np.ascontiguousarray(alignment.codes[in_kept]), labels,
                   row_weights[in_kept])


def _contrast_classes(counts: np.ndarray, n_k: np.ndarray, group_consensus: np.ndarray, gaps: np.ndarray,
                      max_gaps: float, conserved_min: float) -> np.ndarray:
    """The class of every column (see the module notes) from the (g, L, N_CODES) counts."""
    residues = counts[..., :N_RESIDUES]
    group_total = counts.sum(axis=2)
    group_gaps = np.where(group_total > 0, gap_fraction(counts), 1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        top_share = np.where(n_k > 0, residues.max(axis=2) / np.where(n_k > 0, n_k, 1), 0.0)
    conserved = (top_share >= conserved_min - _TOLERANCE) & (group_gaps <= max_gaps + _TOLERANCE)
    all_conserved = conserved.all(axis=0)
    same = (group_consensus == group_consensus[0:1]).all(axis=0)
    classes = np.full(gaps.size, "mixed", dtype=object)
    classes[all_conserved & same] = "shared"
    classes[all_conserved & ~same] = "group-specific"
    classes[gaps > max_gaps + _TOLERANCE] = "gap-rich"
    return classes


_SCORE_WORDS = {
    "contrast": "generalised Jensen-Shannon divergence of the group residue distributions, weighted by group "
                "effective size (bits; Lin 1991)",
    "mi": "mutual information of residue and group, Miller-Madow corrected (bits; Shannon 1948, Miller 1955)",
    "pvalue": "G-test of independence, chi-square with (r-1)(g-1) df",
    "pvalue_permutation": "(1 + #permuted G >= observed G) / (1 + K)",
    "qvalue": "Benjamini-Hochberg q-value of pvalue over the tested columns (Benjamini & Hochberg 1995)",
    "qvalue_permutation": "Benjamini-Hochberg q-value of pvalue_permutation over the tested columns",
}


def _contrast_metadata(alignment: Alignment, names: np.ndarray, grouped: GroupedRows, classes: np.ndarray,
                       mapping: ColumnMapping, weights: str, identity: float, min_group_neff: float,
                       conserved_min: float, rules: ClassRules, permutations: int, seed: int,
                       reference: str | None, tested_columns: int) -> dict[str, object]:
    return {
        "tool": "globcons",
        "version": __version__,
        "input": alignment.source,
        "format": alignment.format,
        "sequences": alignment.n_rows,
        "columns": alignment.n_columns,
        "grouped_rows": int(grouped.in_kept.sum()),
        "ungrouped_rows": int((names == "").sum()),
        "weights": weights,
        "identity": identity if weights == "cluster" else None,
        "groups": {g: grouped.sizes[g] for g in grouped.kept},
        "left_out_groups": {g: v for g, v in grouped.sizes.items() if g not in grouped.kept},
        "min_group_neff": min_group_neff,
        "conserved_min": conserved_min,
        "max_gaps": rules.max_gaps,
        "permutations": permutations,
        "seed": seed if permutations else None,
        "reference": reference,
        "class_counts": {name: int((classes == name).sum()) for name in CONTRAST_CLASSES},
        "tested_columns": tested_columns,
        "frame": {"source": mapping.source, "anchor": mapping.anchor, "nearest_reference": mapping.nearest_reference,
                  "note": mapping.note},
        "scores": _SCORE_WORDS,
    }


def contrast_columns(alignment: Alignment, groups: Sequence[str | None] | Mapping[str, str] | np.ndarray,
                     weights: str = "henikoff", identity: float = 0.8, min_group_neff: float = MIN_GROUP_NEFF,
                     permutations: int = 0, seed: int = 0, rules: ClassRules = ClassRules(),
                     conserved_min: float = CONSERVED_MIN, reference: str | None = None,
                     frame: bool = True) -> pd.DataFrame:
    """Score every column for how it sets groups of rows apart (see the module notes for every definition).

    Parameters
    ----------
    alignment
        The alignment.
    groups
        The group of every row (a sequence of length N, ``""``/None for none, e.g. from
        :func:`assign_groups`), or a mapping id -> group.
    weights, identity
        Sequence weighting, computed on the whole alignment (``henikoff``, ``none``, ``cluster``).
    min_group_neff
        Groups with a smaller effective size are left out (listed in ``.attrs["left_out_groups"]``).
    permutations
        K > 0 adds ``pvalue_permutation`` from K label permutations.
    seed
        Seed of the permutations.
    rules
        ``rules.max_gaps`` sets the gap-rich threshold (of the grouped rows, and of each group for
        *conserved*).
    conserved_min
        Share of a group's residue weight its consensus residue needs for the group to be conserved.
    reference
        Tie the frame through this row (as ``globcons columns --reference``).
    frame
        Add frame labels and sites (False leaves them empty).

    Returns
    -------
    pandas.DataFrame
        One row per column: ``column``, ``frame_label``, ``sites``, ``class``, ``contrast``, ``mi``,
        ``pvalue``, ``qvalue`` (``pvalue_permutation``, ``qvalue_permutation``), ``gap_fraction``, ``n_eff``,
        then ``consensus_<group>`` and ``conservation_<group>`` per group; ``.attrs`` holds the groups, their
        sizes and the options.

    Raises
    ------
    OptionError
        For bad options, or fewer than two groups of at least ``min_group_neff``.
    """
    if min_group_neff < 0:
        raise OptionError(f"--min-group-neff must not be negative, got {min_group_neff}")
    if permutations < 0:
        raise OptionError(f"--permutations must not be negative, got {permutations}")
    if not 0.0 < conserved_min <= 1.0:
        raise OptionError(f"--conserved-min must be in (0, 1], got {conserved_min}")
    names = group_labels(alignment, groups)
    row_weights = compute_weights(alignment.codes, weights, identity).values
    grouped = GroupedRows.of(alignment, names, row_weights, min_group_neff)
    counts = group_counts(grouped.codes, grouped.labels, len(grouped.kept), grouped.weights)  # (g, L, N_CODES)
    residues = counts[..., :N_RESIDUES]
    scores = _contrast_scores(residues, grouped.effective_sizes)
    gaps = gap_fraction(counts.sum(axis=0))
    group_consensus = consensus(residues)
    classes = _contrast_classes(counts, scores["n_k"], group_consensus, gaps, rules.max_gaps, conserved_min)
    tested = scores["df"] > 0  # the family of the multiple-testing correction: columns with something to test
    mapping = (map_columns(alignment, anchor=reference) if frame else
               ColumnMapping(("",) * alignment.n_columns, "none", note="frame mapping switched off"))
    data: dict[str, object] = {
        "column": np.arange(1, alignment.n_columns + 1),
        "frame_label": list(mapping.labels),
        "sites": column_sites(mapping.labels, mapping.nearest_reference),
        "class": classes.astype(str),
        "contrast": scores["contrast"],
        "mi": scores["mi"],
        "pvalue": scores["pvalue"],
        "qvalue": bh_qvalues(scores["pvalue"], tested),
    }
    if permutations:
        data["pvalue_permutation"] = permutation_pvalues(grouped.codes, grouped.labels, len(grouped.kept),
                                                         grouped.weights, scores["g"], permutations, seed)
        data["qvalue_permutation"] = bh_qvalues(data["pvalue_permutation"], tested)
    data["gap_fraction"] = gaps
    data["n_eff"] = scores["total"]
    conservation = _conservation(residues)
    for k, g in enumerate(grouped.kept):
        data[f"consensus_{g}"] = group_consensus[k].astype(str)
    for k, g in enumerate(grouped.kept):
        data[f"conservation_{g}"] = conservation[k]
    table = pd.DataFrame(data)
    table.attrs.update(_contrast_metadata(alignment, names, grouped, classes, mapping, weights, identity,
                                          min_group_neff, conserved_min, rules, permutations, seed, reference,
                                          int(tested.sum())))
    return table


def top_contrast(table: pd.DataFrame, n: int = 12) -> pd.DataFrame:
    """The ``n`` columns of highest contrast that are not gap-rich (ties: lower p-value, then column)."""
    candidates = table[(table["class"] != "gap-rich") & table["contrast"].notna()]
    return candidates.sort_values(["contrast", "pvalue", "column"], ascending=[False, True, True],
                                  kind="stable").head(n)


def summarise_contrast(table: pd.DataFrame) -> str:
    """One line: groups with their sizes, columns by class, left-out groups and rows."""
    meta = table.attrs
    groups = ", ".join(f"{g} ({v['rows']} rows, {v['effective_size']:.1f} effective)"
                       for g, v in meta["groups"].items())
    counts = ", ".join(f"{meta['class_counts'][c]} {c}" for c in CONTRAST_CLASSES)
    line = f"{meta['columns']} columns, groups {groups}: {counts}"
    if meta["left_out_groups"]:
        line += "; left out (effective size < {:g}): ".format(meta["min_group_neff"]) + ", ".join(
            f"{g} ({v['effective_size']:.1f})" for g, v in meta["left_out_groups"].items())
    if meta["ungrouped_rows"]:
        line += f"; {meta['ungrouped_rows']} rows without a group"
    return line
