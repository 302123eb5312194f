"""The frame's reference alignment: the reference chains aligned column by column through their labels.

The trade's helix notation is itself a structural alignment: residues with the same label in two globins
sit at the same place of the fold (F8 is the proximal His in all of them). So the frame's columns are the
union of the labels of the reference chains, in fold order (NA, A, AB, ..., H, HC, then the place), and
every reference residue goes to its label's column. One exception: human hemoglobin alpha has no CD corner
and no D helix and names that stretch CE1-CE9. Its CE1 is the residue the others call CD1 (from memory,
see the frame data README); the rest of the stretch is placed onto the CD/D columns by a global pairwise
alignment of alpha's CE residues to beta's CD+D residues (BLOSUM62, gap open 8, extend 1; where
co-optimal placements exist, the aligner's first is taken), anchored because both stretches start with
the heme-contact Phe.

The result is computed once from the package data and cached.
"""

from __future__ import annotations

import functools
import json
from dataclasses import dataclass
from importlib import resources

import numpy as np

from globcons.core.alphabet import GAP, encode
from globcons.core.labels import HELICES, is_helix, label_key, segment_of
from globcons.core.matrices import DEFAULT_MATRIX
from globcons.frame.reference import ReferenceChain, reference_chains

__all__ = ["FrameColumn", "ReferenceAlignment", "reference_alignment", "alpha_ce_alignment",
           "stored_alpha_ce_placement"]

# Alpha's CE stretch maps onto these segments of the others.
_CE_TARGET_SEGMENTS = ("CD", "D")
_CE_ALIGNMENT_GAPS = (-8.0, -1.0)


@dataclass(frozen=True)
class FrameColumn:
    """One column of the frame.

    Attributes
    ----------
    index
        0-based column index.
    label
        Canonical label (the myoglobin/beta notation; alpha's CE residues sit in CD/D columns).
    segment
        Segment of the label (``"F"``, ``"FG"``, ...).
    place
        Place in the segment (8 for F8).
    """

    index: int
    label: str
    segment: str
    place: int

    @property
    def in_helix(self) -> bool:
        """Whether the column lies inside one of the helices A-H."""
        return is_helix(self.segment)


@dataclass(frozen=True, eq=False)
class ReferenceAlignment:
    """The reference chains on the frame's columns.

    Attributes
    ----------
    columns
        The frame columns, in fold order.
    chains
        The reference chains, in package order.
    positions
        ``int64`` (n_chains, n_columns): mature residue number (1-based) of each chain at each column, 0 where
        the chain has no residue.
    codes
        ``uint8`` (n_chains, n_columns): residue codes, gap where the chain has no residue.
    """

    columns: tuple[FrameColumn, ...]
    chains: tuple[ReferenceChain, ...]
    positions: np.ndarray
    codes: np.ndarray

    @property
    def labels(self) -> tuple[str, ...]:
        """Canonical label of every column."""
        return tuple(column.label for column in self.columns)

    def column_of(self, label: str) -> int:
        """Index of the column with canonical ``label``; -1 if the frame has no such column."""
        return self._column_index.get(label, -1)

    def chain_index(self, name: str) -> int:
        return [chain.name for chain in self.chains].index(name)

    def chain_label(self, chain: int, column: int) -> str:
        """The label chain ``chain`` gives its residue at ``column`` ('' where it has none)."""
        position = int(self.positions[chain, column])
        return self.chains[chain].labels[position - 1] if position else ""

    @functools.cached_property
    def own_labels(self) -> np.ndarray:
        """Object array (n_chains, n_columns): each chain's own label at each column ('' where none)."""
        table = np.full(self.positions.shape, "", dtype=object)
        for row, chain in enumerate(self.chains):
            present = self.positions[row] > 0
            table[row, present] = np.array(chain.labels, dtype=object)[self.positions[row, present] - 1]
        table.flags.writeable = False
        return table

    @functools.cached_property
    def helix_masks(self) -> tuple[dict[str, np.ndarray], ...]:
        """Per chain: helix letter -> bool mask of the columns holding that chain's residues of the helix."""
        masks = []
        for row in range(len(self.chains)):
            own = self.own_labels[row]
            segments = np.array([segment_of(label) if label else "" for label in own], dtype=object)
            masks.append({helix: segments == helix for helix in HELICES if (segments == helix).any()})
        return tuple(masks)

    @functools.cached_property
    def _column_index(self) -> dict[str, int]:
        return {column.label: column.index for column in self.columns}


def alpha_ce_alignment(alpha: ReferenceChain, beta: ReferenceChain) -> dict[str, str]:
    """Alpha CE label -> the CD/D label of the beta residue it aligns to, from a pairwise alignment (BLOSUM62,
    Biopython's PairwiseAligner). Stored as package data (``data/frame/alpha_ce_placement.json``) so that no run
    pays for Bio.Align; a test recomputes it."""
    from Bio.Align import PairwiseAligner, substitution_matrices

    ce = [i for i, label in enumerate(alpha.labels) if segment_of(label) == "CE"]
    target = [i for i, label in enumerate(beta.labels) if segment_of(label) in _CE_TARGET_SEGMENTS]
    if not ce:
        return {}
    aligner = PairwiseAligner(mode="global", substitution_matrix=substitution_matrices.load(DEFAULT_MATRIX),
                              open_gap_score=_CE_ALIGNMENT_GAPS[0], extend_gap_score=_CE_ALIGNMENT_GAPS[1])
    alignment = aligner.align("".join(alpha.mature_sequence[i] for i in ce),
                              "".join(beta.mature_sequence[i] for i in target))[0]
    placement = {}
    for alpha_index, beta_index in zip(*alignment.indices, strict=True):
        if alpha_index >= 0 and beta_index >= 0:
            placement[alpha.labels[ce[alpha_index]]] = beta.labels[target[beta_index]]
    return placement


def stored_alpha_ce_placement() -> dict[str, str]:
    """The stored result of :func:`alpha_ce_alignment` for the built-in chains."""
    text = (resources.files("globcons") / "data" / "frame" / "alpha_ce_placement.json").read_text(encoding="utf-8")
    return dict(json.loads(text)["placement"])


@functools.cache
def reference_alignment() -> ReferenceAlignment:
    """The reference chains aligned on the frame's columns (see the module notes)."""
    chains = reference_chains()
    by_kind = {chain.kind: chain for chain in chains}
    ce_placement = stored_alpha_ce_placement() if "alpha" in by_kind else {}
    placed: list[dict[str, int]] = []  # per chain: canonical label -> mature position
    for chain in chains:
        mapping: dict[str, int] = {}
        for position, label in enumerate(chain.labels, start=1):
            canonical = ce_placement.get(label, label) if chain.kind == "alpha" else label
            if segment_of(canonical) == "CE":
                raise ValueError(f"alpha residue {label} has no place on the CD/D columns")  # data invariant
            mapping[canonical] = position
        placed.append(mapping)
    keys = sorted({label for mapping in placed for label in mapping}, key=label_key)
    columns = tuple(FrameColumn(i, label, segment_of(label), label_key(label)[1]) for i, label in enumerate(keys))
    positions = np.zeros((len(chains), len(columns)), dtype=np.int64)
    codes = np.full((len(chains), len(columns)), GAP, dtype=np.uint8)
    for row, (chain, mapping) in enumerate(zip(chains, placed, strict=True)):
        for column, label in enumerate(keys):
            if label in mapping:
                positions[row, column] = mapping[label]
                codes[row, column] = encode(chain.mature_sequence[mapping[label] - 1])[0]
    # The columns must keep every chain's residues in sequence order (a structural alignment never crosses).
    for row in range(len(chains)):
        present = positions[row][positions[row] > 0]
        if (np.diff(present) <= 0).any():
            raise ValueError(f"{chains[row].name}: labels out of order on the frame")  # data invariant
    positions.flags.writeable = False
    codes.flags.writeable = False
    return ReferenceAlignment(columns, chains, positions, codes)
