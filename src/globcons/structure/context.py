"""A structure's per-residue features carried over to a target (``check``/``plan``) or to alignment columns.

The mapping is the painting's (:meth:`globcons.analysis.family.Family.columns_of`): the chain's sequence
is placed on the family's columns exactly as a target, a scanned sequence or a painted chain is, and a
target residue takes the features of the chain residue on its column. Residues that sit between the
family's columns (insertions) or fall on a column the chain does not fill (a missing or disordered stretch
of the structure) stay unmapped, and count against the coverage: below :data:`MIN_COVERAGE` the run stops.
An initiator Met that maps to no chain residue (the structure is of the mature chain) is not counted.
"""

from __future__ import annotations

import os

import numpy as np
import pandas as pd

from globcons.core.alignment import Alignment
from globcons.errors import InputError
from globcons.mutations.context import STRUCTURE_COLUMNS, StructureContext
from globcons.mutations.target import Target
from globcons.structure.features import ChainFeatures, StructureFeatures, structure_features
from globcons.structure.paint import map_chain_to_alignment
from globcons.structure.read import StructureFile, load_structure

__all__ = ["MIN_COVERAGE", "load_features", "target_context", "column_features", "add_structure_columns"]

#: Share of the target's residues (the initiator Met not counted) that must map to the chain.
MIN_COVERAGE = 0.5


def load_features(structure: str | os.PathLike | StructureFile) -> StructureFeatures:
    """Read a structure (PDB or mmCIF, gzip too) and measure its residues once (see :mod:`.features`)."""
    loaded = structure if isinstance(structure, StructureFile) else load_structure(structure)
    return structure_features(loaded)


def _chain_on_target(target: Target, chain: ChainFeatures) -> tuple[np.ndarray, int, int]:
    """Chain residue index of each target residue (-1 where none), target residues counted, identical."""
    chain_columns = target.family.columns_of(chain.sequence)
    residue_of_column = np.full(target.family.n_columns, -1, dtype=np.int64)
    placed = np.flatnonzero(chain_columns >= 0)
    residue_of_column[chain_columns[placed]] = placed
    columns = np.asarray(target.columns, dtype=np.int64)
    on_target = np.where(columns >= 0, residue_of_column[np.clip(columns, 0, None)], -1)
    # an initiator Met the chain lacks (the mature chain) is not counted against the coverage
    counted = len(target.sequence) - (1 if target.starts_with_met and on_target[0] < 0 else 0)
    mapped = np.flatnonzero(on_target >= 0)
    target_letters = np.frombuffer(target.sequence.encode("ascii"), dtype=np.uint8)
    chain_letters = np.frombuffer(chain.sequence.upper().encode("ascii"), dtype=np.uint8)
    identical = int((target_letters[mapped] == chain_letters[on_target[mapped]]).sum())
    return on_target, counted, identical


def _best_chain(target: Target, features: StructureFeatures) -> str:
    """The protein chain with the most residues identical to the target (file order breaks ties)."""
    scores = {chain_id: _chain_on_target(target, chain)[2] for chain_id, chain in features.chains.items()}
    return max(scores, key=lambda c: (scores[c], -list(features.chains).index(c)))


def target_context(target: Target, structure: str | os.PathLike | StructureFile | StructureFeatures,
                   chain: str | None = None, min_coverage: float = MIN_COVERAGE) -> StructureContext:
    """What a structure says about each residue of a target.

    Parameters
    ----------
    target
        From :func:`globcons.mutations.target.prepare_target`.
    structure
        A PDB or mmCIF file (gzip too), a loaded one, or its features (computed once per structure).
    chain
        The target's chain (the others are its partners); default: the protein chain with the most
        residues identical to the target.
    min_coverage
        Refuse a chain onto which fewer than this share of the target's residues map.

    Returns
    -------
    StructureContext

    Raises
    ------
    InputError
        The structure cannot be read, has no such protein chain, or covers too little of the target.
    """
    features = structure if isinstance(structure, StructureFeatures) else load_features(structure)
    chain_id = chain if chain is not None else _best_chain(target, features)
    chain_features = features.chain(chain_id)
    on_target, counted, identical = _chain_on_target(target, chain_features)
    mapped = int((on_target >= 0).sum())
    if counted == 0 or mapped < min_coverage * counted:
        raise InputError(f"chain {chain_id} covers {mapped} of the target's {counted} residues "
                         f"({mapped / max(counted, 1):.0%}); at least {min_coverage:.0%} must map "
                         "(is it the target's chain?)", source=features.source)
    hit = on_target >= 0
    take = np.clip(on_target, 0, None)

    def carried(values: np.ndarray, empty):
        out = np.asarray(values)[take].copy()
        out[~hit] = empty
        return out

    residues = np.array(chain_features.residues, dtype=object)
    partners = tuple(chain_features.partners[j] if j >= 0 else () for j in on_target)
    settings = {**features.settings, "structure_models": features.models, "structure_hemes": features.hemes,
                "min_coverage": min_coverage}
    return StructureContext(features.source, chain_id, carried(residues, ""), carried(chain_features.rsa, np.nan),
                            carried(chain_features.burial, ""), carried(chain_features.heme_contact, False),
                            carried(chain_features.heme_distance, np.nan),
                            carried(chain_features.iron_distance, np.nan), partners, mapped, counted, identical,
                            settings)


def column_features(alignment: Alignment, table: pd.DataFrame,
                    structure: str | os.PathLike | StructureFile | StructureFeatures,
                    chain: str | None = None) -> tuple[pd.DataFrame, str]:
    """The structural columns of a column table: the chain residue on each alignment column.

    The chain is placed on the alignment as ``paint`` places it
    (:func:`globcons.structure.paint.map_chain_to_alignment`).

    Parameters
    ----------
    alignment, table
        The alignment and its column table.
    structure
        A PDB or mmCIF file, a loaded one, or its features.
    chain
        The chain (default: the first protein chain, as ``paint``).

    Returns
    -------
    tuple of (pandas.DataFrame, str)
        One row per column with :data:`globcons.mutations.context.STRUCTURE_COLUMNS` (empty where no
        chain residue sits on the column), and a one-line description of the mapping.

    Raises
    ------
    InputError
        The structure cannot be read or has no such protein chain.
    """
    features = structure if isinstance(structure, StructureFeatures) else load_features(structure)
    chain_id = chain if chain is not None else next(iter(features.chains))
    chain_features = features.chain(chain_id)
    chain_columns = map_chain_to_alignment(chain_features.sequence, alignment, table) - 1
    rows = [dict.fromkeys(STRUCTURE_COLUMNS, "") for _ in range(alignment.n_columns)]
    for frame in rows:
        frame["rsa"] = frame["iron_distance"] = np.nan
    for j in np.flatnonzero(chain_columns >= 0):
        rows[chain_columns[j]] = {
            "structure_residue": f"{chain_id}:{chain_features.residues[j]}",
            "rsa": round(float(chain_features.rsa[j]), 3), "burial": str(chain_features.burial[j]),
            "heme_contact": "yes" if chain_features.heme_contact[j] else "no",
            "iron_distance": round(float(chain_features.iron_distance[j]), 2),
            "interface": ",".join(chain_features.partners[j])}
    mapped = int((chain_columns >= 0).sum())
    note = (f"structure {features.source} chain {chain_id}: {mapped} of {len(chain_features.sequence)} residues "
            "on the alignment's columns")
    frame = pd.DataFrame(rows, columns=list(STRUCTURE_COLUMNS))
    frame.attrs["structure"] = {"file": features.source, "chain": chain_id, "mapped": mapped,
                                "residues": len(chain_features.sequence), "models": features.models,
                                **features.settings}
    return frame, note


def add_structure_columns(alignment: Alignment, table: pd.DataFrame,
                          structure: str | os.PathLike | StructureFile | StructureFeatures,
                          chain: str | None = None) -> tuple[pd.DataFrame, str]:
    """A copy of a column table with the structural columns of :func:`column_features` at its end.

    The copy's metadata (``attrs``) gains ``structure``: the file, chain, residues mapped and every
    threshold used. Returns the table and the one-line description of the mapping.
    """
    extra, note = column_features(alignment, table, structure, chain)
    combined = pd.concat([table.reset_index(drop=True), extra], axis=1)
    combined.attrs = {**table.attrs, "structure": extra.attrs["structure"]}
    return combined, note
