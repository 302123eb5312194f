"""What a structure says about each residue of a target: the per-position input of structure-aware judging.

The values are measured on coordinates by :func:`globcons.structure.context.target_context` (a higher
layer, which knows files and Biopython); this module only holds them, so that :mod:`globcons.mutations.judge`
can use them without reading a structure itself.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from globcons.core.vocabulary import BURIAL_CLASSES

__all__ = ["StructureContext", "STRUCTURE_COLUMNS", "BURIAL_ORDER"]

#: Columns ``check`` and ``plan`` add when a structure is given.
STRUCTURE_COLUMNS = ("structure_residue", "rsa", "burial", "heme_contact", "iron_distance", "interface")
#: Rank of each burial class within a verdict tier of the plan: surface first, unknown before core.
BURIAL_ORDER = {"surface": 0, "boundary": 1, "": 2, "core": 3}


@dataclass(frozen=True, eq=False)
class StructureContext:
    """Per-residue structural features of a target, mapped from one chain of a structure.

    Attributes
    ----------
    source, chain
        The structure file and its target chain.
    residue
        (n,) object: the chain residue mapped to each target residue (``"Phe42"``), '' where none.
    rsa
        (n,) float64 relative accessibility (NaN where unmapped or unknown).
    burial
        (n,) object: ``core``, ``boundary``, ``surface`` or ''.
    heme_contact
        (n,) bool.
    heme_distance, iron_distance
        (n,) float64, A (NaN where unmapped or the structure has no heme).
    partners
        Per target residue, the other chains its chain residue touches.
    mapped
        Target residues with a chain residue.
    counted
        Target residues the coverage counts (the initiator Met is left out).
    identical
        Mapped residues identical to their chain residue.
    settings
        Thresholds and methods, for the outputs' metadata.
    """

    source: str
    chain: str
    residue: np.ndarray
    rsa: np.ndarray
    burial: np.ndarray
    heme_contact: np.ndarray
    heme_distance: np.ndarray
    iron_distance: np.ndarray
    partners: tuple[tuple[str, ...], ...]
    mapped: int
    counted: int
    identical: int
    settings: Mapping[str, object] = field(default_factory=dict)

    def __post_init__(self) -> None:
        n = len(self.residue)
        sizes = {len(self.rsa), len(self.burial), len(self.heme_contact), len(self.heme_distance),
                 len(self.iron_distance), len(self.partners)}
        if sizes != {n}:
            raise ValueError(f"structure context arrays differ in length: {sorted(sizes | {n})}")
        unknown = set(self.burial.tolist()) - set(BURIAL_CLASSES) - {""}
        if unknown:
            raise ValueError(f"unknown burial class {sorted(unknown)[0]!r}")

    @property
    def coverage(self) -> float:
        """Share of the counted target residues that have a chain residue."""
        return self.mapped / self.counted if self.counted else 0.0

    def is_mapped(self, given: int) -> bool:
        """Whether the target residue at ``given`` (1-based) has a chain residue."""
        return bool(self.residue[given - 1])

    def interface(self, given: int) -> str:
        """The partner chains of the residue at ``given`` (1-based), comma-separated ('' for none)."""
        return ",".join(self.partners[given - 1])

    def cells(self, given: int) -> dict[str, object]:
        """The :data:`STRUCTURE_COLUMNS` cells of the residue at ``given`` (1-based)."""
        i = given - 1
        if not self.residue[i]:
            return {"structure_residue": "", "rsa": float("nan"), "burial": "", "heme_contact": "",
                    "iron_distance": float("nan"), "interface": ""}
        return {"structure_residue": f"{self.chain}:{self.residue[i]}", "rsa": round(float(self.rsa[i]), 3),
                "burial": str(self.burial[i]), "heme_contact": "yes" if self.heme_contact[i] else "no",
                "iron_distance": round(float(self.iron_distance[i]), 2), "interface": self.interface(given)}

    def describe(self) -> str:
        """One line: the chain, how many target residues mapped, and how many are identical."""
        identity = self.identical / self.mapped if self.mapped else 0.0
        return (f"structure {self.source} chain {self.chain}: {self.mapped} of {self.counted} target residues "
                f"mapped ({self.coverage:.0%}), {identity:.0%} of them identical")

    def metadata(self) -> dict[str, object]:
        """What the outputs' metadata records about the structure."""
        return {"structure": self.source, "structure_chain": self.chain, "structure_mapped": self.mapped,
                "structure_coverage": round(self.coverage, 6), **dict(self.settings)}
