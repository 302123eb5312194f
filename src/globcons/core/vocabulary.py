"""The words scripts rely on (a contract), and the one caution text every advisory output carries.

Column classes, mutation verdicts and per-residue deviations are the trade's words where it has them
(invariant, conservative, variable) and ours otherwise; each is defined here once and imported
wherever it is used, so a table, a figure legend and a check can never disagree on a spelling.
"""

from __future__ import annotations

__all__ = ["CLASSES", "VERDICTS", "DEVIATIONS", "CONTRAST_CLASSES", "BURIAL_CLASSES", "CAUTION"]

#: Column classes of ``globcons columns``, from most to least constrained, then ``gap-rich``.
CLASSES: tuple[str, ...] = ("invariant", "conservative", "variable", "gap-rich")

#: Mutation verdicts of ``check`` and ``plan``, most tolerant first: ``open`` (variable column),
#: ``guarded`` (conservative column, or a structural rule), ``locked`` (invariant column or listed site).
VERDICTS: tuple[str, ...] = ("open", "guarded", "locked")

#: Per-residue deviations of ``scan --residues``, from least to most severe.
DEVIATIONS: tuple[str, ...] = ("none", "insertion", "leaves-group", "breaks-invariant")

#: Column classes of ``globcons contrast``.
CONTRAST_CLASSES: tuple[str, ...] = ("group-specific", "shared", "mixed", "gap-rich")

#: Burial classes of a residue in a structure (``plan``/``check``/``columns --structure``), most buried first.
BURIAL_CLASSES: tuple[str, ...] = ("core", "boundary", "surface")

#: Printed by every ``check`` and ``plan`` run, ending their Markdown output, in the report and the demo.
CAUTION = ("Caution: these are family-conservation predictions for research, not a clinical interpretation. "
           "Variant classification follows the laboratory's accredited procedures and current professional "
           "guidelines; engineered proteins need experimental validation and must follow the local biosafety rules.")
