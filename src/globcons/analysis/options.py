"""The options that change a column table, recorded in its metadata."""

from __future__ import annotations

from dataclasses import dataclass

from globcons.core.classes import ClassRules
from globcons.core.neighbours import NEFF_EXACT_MAX_ROWS, NEFF_IDENTITY, NEFF_QUERY_ROWS
from globcons.errors import OptionError

__all__ = ["ScoreOptions", "options_from_keywords"]


@dataclass(frozen=True)
class ScoreOptions:
    """Everything that changes a column table, recorded in its metadata.

    Attributes
    ----------
    weights
        ``henikoff``, ``none`` or ``cluster``.
    identity
        Identity threshold of the clusters behind the effective numbers of sequences (and of ``cluster``
        weights): rows at least this identical count as one.
    neff_exact_rows
        Up to this many rows the clusters compare every pair of rows; above, the effective number is
        estimated from a fixed sample of rows (:mod:`globcons.core.neighbours`).
    neff_sample
        Rows of that sample, each compared with every row.
    window
        Half-width of the JSD smoothing window (0: none).
    rules
        Class thresholds.
    reference
        Id of a row whose residue numbering is added (``ref_position``, ``ref_residue``); it is also the
        anchor that ties the columns to the globin frame.
    frame
        Tie the columns to the globin frame (``frame_label``, ``sites``); False leaves both empty.
    sites_path
        A user's site table (label or column, role, ...) added to the built-in sites.
    replace_sites
        Use only the user's sites.
    """

    weights: str = "henikoff"
    identity: float = NEFF_IDENTITY
    neff_exact_rows: int = NEFF_EXACT_MAX_ROWS
    neff_sample: int = NEFF_QUERY_ROWS
    window: int = 0
    rules: ClassRules = ClassRules()
    reference: str | None = None
    frame: bool = True
    sites_path: str | None = None
    replace_sites: bool = False

    def __post_init__(self) -> None:
        if self.window < 0:
            raise OptionError(f"--window must not be negative, got {self.window}")
        if not 0.0 < self.identity <= 1.0:
            raise OptionError(f"--identity must be in (0, 1], got {self.identity}")
        if self.neff_exact_rows < 0:
            raise OptionError(f"--neff-exact-rows must not be negative, got {self.neff_exact_rows}")
        if self.neff_sample < 2:
            raise OptionError(f"--neff-sample must be 2 or more, got {self.neff_sample}")


def options_from_keywords(options: ScoreOptions | None, keywords: dict) -> ScoreOptions:
    """``options``, or options built from keyword arguments (fields of :class:`ScoreOptions` and of
    :class:`~globcons.core.classes.ClassRules`, e.g. ``max_gaps=0.3``); not both."""
    if options is not None and keywords:
        raise TypeError("give either options or keyword arguments, not both")
    if options is not None:
        return options
    keywords = dict(keywords)
    rule_fields = set(ClassRules.__dataclass_fields__)
    rules = ClassRules(**{k: keywords.pop(k) for k in list(keywords) if k in rule_fields})
    unknown = set(keywords) - set(ScoreOptions.__dataclass_fields__)
    if unknown:
        raise TypeError(f"unknown options: {', '.join(sorted(unknown))}")
    return ScoreOptions(rules=rules, **keywords)
