"""What a structure's coordinates say about each residue: accessibility, burial, heme contact, interfaces.

Computed once per structure (:func:`structure_features`, cached on the loaded file) for every protein
chain of the first model, and read per chain (:meth:`StructureFeatures.chain`).

What is measured
----------------
- ``sasa``: solvent-accessible surface of the residue, A^2, by the Shrake & Rupley 1973 (J Mol Biol
  79:351) dot method as Biopython implements it (``Bio.PDB.SASA.ShrakeRupley``: probe 1.40 A, 100 points
  per atom, its default atomic radii), computed on the whole model as deposited: every chain, the hemes and
  other ligands, but no waters and no hydrogens (X-ray entries rarely carry them, NMR models do, and the
  maximum values below are for heavy atoms), one location per atom (Biopython's selected alternate
  location: the most occupied).
- ``rsa``: ``sasa`` over the residue's maximum accessibility, the theoretical values of Tien et al. 2013
  (PLoS ONE 8:e80635, Gly-X-Gly tripeptides), as Biopython ships them
  (``Bio.Data.PDBData.residue_sasa_scales["Wilke"]``); NaN for residues without a value (UNK, modified
  residues are normalised by their parent: MSE as Met).
- ``burial``: ``core`` below :data:`CORE_BELOW`, ``surface`` from :data:`SURFACE_FROM`, ``boundary``
  between: the three-state cut-offs of Rost & Sander 1994 (Proteins 20:216; 9% and 36%, from memory),
  applied here to the Tien et al. normalisation.
- ``heme_distance``: shortest distance from any atom of the residue to any heme atom (residues named in
  :data:`HEME_NAMES`, any chain); ``heme_contact`` when it is at most :data:`HEME_CONTACT_DISTANCE`.
- ``iron_distance``: shortest distance from any atom of the residue to a heme iron.
- ``partners``: the other chains with a protein atom within :data:`INTERFACE_DISTANCE` of any atom of the
  residue (the chain's subunit interfaces; ligands do not count).

Distances use scipy's k-d tree on the model's coordinate array, one query per kind of partner; nothing loops
over atoms in Python.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from globcons.core.alphabet import THREE_LETTER
from globcons.core.vocabulary import BURIAL_CLASSES
from globcons.errors import InputError
from globcons.structure.read import StructureFile, chain_residues, first_model

__all__ = [
    "CORE_BELOW",
    "SURFACE_FROM",
    "HEME_CONTACT_DISTANCE",
    "INTERFACE_DISTANCE",
    "HEME_NAMES",
    "PROBE_RADIUS",
    "SPHERE_POINTS",
    "ChainFeatures",
    "StructureFeatures",
    "max_accessibility",
    "burial_class",
    "structure_features",
]

#: Relative accessibility below which a residue is ``core`` (Rost & Sander 1994, 9%; from memory).
CORE_BELOW = 0.09
#: Relative accessibility from which a residue is ``surface`` (Rost & Sander 1994, 36%; from memory).
SURFACE_FROM = 0.36
#: A residue with an atom this close to a heme atom (A) is a heme contact. 4 A (close contact) misses the
#: distal pocket's lining: Leu B10 of beta sits 5.2-5.4 A from the heme in deoxy hemoglobin (PDB 2HHB).
HEME_CONTACT_DISTANCE = 5.5
#: A residue with an atom this close to a protein atom of another chain (A) is at that chain's interface
#: (4 A between heavy atoms: common practice for contacts).
INTERFACE_DISTANCE = 4.0
#: Heme groups by their PDB chemical component names: heme b, heme c, heme a, heme b variant (from memory).
HEME_NAMES = frozenset({"HEM", "HEC", "HEA", "HEB"})
#: Probe radius (A) of the accessibility: a water molecule (Shrake & Rupley 1973).
PROBE_RADIUS = 1.40
#: Dots per atom of the Shrake-Rupley sphere (Biopython's default).
SPHERE_POINTS = 100

_WATERS = frozenset({"HOH", "WAT", "H2O", "DOD", "D2O"})
_HYDROGENS = frozenset({"H", "D"})


@functools.cache
def max_accessibility() -> dict[str, float]:
    """Maximum accessibility (A^2) of each residue: Tien et al. 2013 theoretical, from Biopython's table."""
    from Bio.Data.PDBData import residue_sasa_scales

    return dict(residue_sasa_scales["Wilke"])


def burial_class(rsa: np.ndarray) -> np.ndarray:
    """``core`` / ``boundary`` / ``surface`` of relative accessibilities ('' for NaN).

    Examples
    --------
    >>> burial_class(np.array([0.0, 0.2, 0.5, np.nan])).tolist()
    ['core', 'boundary', 'surface', '']
    """
    rsa = np.asarray(rsa, dtype=np.float64)
    core, boundary, surface = BURIAL_CLASSES
    classes = np.where(rsa < CORE_BELOW, core, np.where(rsa < SURFACE_FROM, boundary, surface)).astype(object)
    classes[np.isnan(rsa)] = ""
    return classes


@dataclass(frozen=True, eq=False)
class ChainFeatures:
    """Per-residue features of one protein chain, in file order (see the module notes).

    Attributes
    ----------
    chain
        The chain's identifier.
    sequence
        One-letter codes of its amino-acid residues (as :func:`globcons.structure.read.chain_residues`).
    residues
        (n,) ``"Phe42"``, with the insertion code (``"Gly52A"``): name and author number.
    sasa, rsa
        (n,) float64: accessible surface (A^2) and relative accessibility (NaN without a maximum value).
    burial
        (n,) object: ``core``, ``boundary``, ``surface`` ('' where ``rsa`` is NaN).
    heme_distance, iron_distance
        (n,) float64, A; NaN when the model has no heme (no iron).
    heme_contact
        (n,) bool.
    partners
        Per residue, the other chains it touches (sorted).
    """

    chain: str
    sequence: str
    residues: tuple[str, ...]
    sasa: np.ndarray
    rsa: np.ndarray
    burial: np.ndarray
    heme_distance: np.ndarray
    iron_distance: np.ndarray
    heme_contact: np.ndarray
    partners: tuple[tuple[str, ...], ...]


@dataclass(frozen=True, eq=False)
class StructureFeatures:
    """The features of every protein chain of a structure's first model.

    Attributes
    ----------
    source
        The structure file's name.
    chains
        Chain id -> :class:`ChainFeatures`, in file order.
    models
        Models in the file (only the first is measured).
    hemes
        Heme groups in the first model.
    waters
        Water molecules left out.
    settings
        Every threshold and parameter used (for the outputs' metadata).
    """

    source: str
    chains: Mapping[str, ChainFeatures]
    models: int
    hemes: int
    waters: int
    settings: Mapping[str, object] = field(default_factory=dict)

    def chain(self, chain_id: str) -> ChainFeatures:
        """One chain's features.

        Raises
        ------
        InputError
            The first model has no protein chain of that name (the message lists those it has).
        """
        if chain_id not in self.chains:
            present = ", ".join(repr(c) for c in self.chains) or "none"
            raise InputError(f"has no protein chain {chain_id!r}; protein chains: {present}", source=self.source)
        return self.chains[chain_id]


def _clean_model(model):
    """A copy of the model without waters and hydrogens (the input structure is left as it is)."""
    clean = model.copy()
    for chain in list(clean):
        for residue in list(chain):
            if residue.get_resname().strip().upper() in _WATERS:
                chain.detach_child(residue.id)
                continue
            for atom in list(residue.get_atoms()):
                if atom.element.upper() in _HYDROGENS:
                    residue.detach_child(atom.get_id())
        if not len(chain):
            clean.detach_child(chain.id)
    return clean


def _count_waters(model) -> int:
    return sum(1 for residue in model.get_residues() if residue.get_resname().strip().upper() in _WATERS)


def _nearest(points: np.ndarray, targets: np.ndarray) -> np.ndarray:
    """Distance from each point to the nearest target point (inf when there is none)."""
    from scipy.spatial import cKDTree

    if not len(targets) or not len(points):
        return np.full(len(points), np.inf)
    return cKDTree(targets).query(points, k=1)[0]


def _per_residue_min(values: np.ndarray, owner: np.ndarray, n: int) -> np.ndarray:
    out = np.full(n, np.inf)
    np.minimum.at(out, owner, values)
    return out


@dataclass(frozen=True)
class _Atoms:
    """The clean model's atoms as arrays: coordinates, chain index, protein residue index (-1), kinds."""

    coords: np.ndarray
    sasa: np.ndarray
    chain: np.ndarray
    residue: np.ndarray
    heme: np.ndarray
    iron: np.ndarray


def _atom_arrays(clean, protein: dict[str, list], residue_base: dict[str, int]) -> _Atoms:
    index = {(chain_id, residue.id): residue_base[chain_id] + i
             for chain_id, residues in protein.items() for i, (residue, _) in enumerate(residues)}
    chain_ids = list(protein)
    coords, sasa, chain, owner, heme, iron = [], [], [], [], [], []
    for model_chain in clean:
        chain_index = chain_ids.index(model_chain.id) if model_chain.id in protein else -1
        for residue in model_chain:
            is_heme = residue.get_resname().strip().upper() in HEME_NAMES
            residue_index = index.get((model_chain.id, residue.id), -1)
            for atom in residue.get_atoms():
                coords.append(atom.coord)
                sasa.append(atom.sasa)
                chain.append(chain_index if residue_index >= 0 else -1)
                owner.append(residue_index)
                heme.append(is_heme)
                iron.append(is_heme and atom.element.upper() == "FE")
    return _Atoms(np.asarray(coords, dtype=np.float64).reshape(-1, 3), np.asarray(sasa, dtype=np.float64),
                  np.asarray(chain, dtype=np.int64), np.asarray(owner, dtype=np.int64), np.asarray(heme, dtype=bool),
                  np.asarray(iron, dtype=bool))


def _partners(atoms: _Atoms, n_residues: int, chain_ids: list[str]) -> np.ndarray:
    """(n_residues, n_chains) bool: residue touches a protein atom of that (other) chain."""
    touches = np.zeros((n_residues, len(chain_ids)), dtype=bool)
    protein = atoms.residue >= 0
    for k in range(len(chain_ids)):
        mine = protein & (atoms.chain == k)
        others = protein & (atoms.chain != k)
        distance = _nearest(atoms.coords[others], atoms.coords[mine])
        close = distance <= INTERFACE_DISTANCE
        touches[atoms.residue[others][close], k] = True
    return touches


def _compute(loaded: StructureFile) -> StructureFeatures:
    from Bio.PDB.SASA import ShrakeRupley

    model = first_model(loaded.structure)
    clean = _clean_model(model)
    protein = {chain.id: residues for chain in clean if (residues := chain_residues(clean, chain.id))
               and any(letter != "X" for _, letter in residues)}
    if not protein:
        raise InputError("has no protein chain in its first model", source=loaded.name)
    bases, total = {}, 0
    for chain_id, residues in protein.items():
        bases[chain_id] = total
        total += len(residues)
    ShrakeRupley(probe_radius=PROBE_RADIUS, n_points=SPHERE_POINTS).compute(clean, level="A")
    atoms = _atom_arrays(clean, protein, bases)
    protein_atoms = atoms.residue >= 0
    owner = atoms.residue[protein_atoms]
    sasa = np.bincount(owner, weights=atoms.sasa[protein_atoms], minlength=total)
    heme = _per_residue_min(_nearest(atoms.coords[protein_atoms], atoms.coords[atoms.heme]), owner, total)
    iron = _per_residue_min(_nearest(atoms.coords[protein_atoms], atoms.coords[atoms.iron]), owner, total)
    heme[~np.isfinite(heme)] = np.nan
    iron[~np.isfinite(iron)] = np.nan
    touches = _partners(atoms, total, list(protein))
    maxima = max_accessibility()
    chains = {}
    for k, (chain_id, residues) in enumerate(protein.items()):
        span = slice(bases[chain_id], bases[chain_id] + len(residues))
        names = [THREE_LETTER.get(letter, "").upper() for _, letter in residues]
        maximum = np.array([maxima.get(name, np.nan) for name in names], dtype=np.float64)
        rsa = sasa[span] / maximum
        others = [c for j, c in enumerate(protein) if j != k]
        columns = [j for j in range(len(protein)) if j != k]
        chains[chain_id] = ChainFeatures(
            chain_id, "".join(letter for _, letter in residues), tuple(_residue_name(r) for r, _ in residues),
            sasa[span], rsa, burial_class(rsa), heme[span], iron[span], heme[span] <= HEME_CONTACT_DISTANCE,
            tuple(tuple(c for c, hit in zip(others, row, strict=True) if hit) for row in touches[span][:, columns]))
    hemes = sum(1 for residue in clean.get_residues() if residue.get_resname().strip().upper() in HEME_NAMES)
    return StructureFeatures(loaded.name, chains, len(loaded.structure) if loaded.structure.level == "S" else 1,
                             hemes, _count_waters(model), _settings())


def _residue_name(residue) -> str:
    _, number, icode = residue.id
    return f"{residue.get_resname().strip().capitalize()}{number}{icode.strip()}"


def _settings() -> dict[str, object]:
    return {"accessibility": "Shrake & Rupley 1973 (Bio.PDB.SASA), waters and hydrogens left out",
            "probe_radius": PROBE_RADIUS, "sphere_points": SPHERE_POINTS,
            "max_accessibility": "Tien et al. 2013 PLoS ONE 8:e80635, theoretical",
            "core_below": CORE_BELOW, "surface_from": SURFACE_FROM,
            "heme_contact_distance": HEME_CONTACT_DISTANCE, "interface_distance": INTERFACE_DISTANCE}


_CACHE: dict[int, tuple[StructureFile, StructureFeatures]] = {}


def structure_features(loaded: StructureFile) -> StructureFeatures:
    """The features of every protein chain of a loaded structure, computed once per loaded file.

    Parameters
    ----------
    loaded
        From :func:`globcons.structure.read.load_structure`.

    Returns
    -------
    StructureFeatures

    Raises
    ------
    InputError
        The first model holds no protein chain.
    """
    cached = _CACHE.get(id(loaded))
    if cached is not None and cached[0] is loaded:
        return cached[1]
    features = _compute(loaded)
    _CACHE.clear()  # one structure at a time: a run reads one
    _CACHE[id(loaded)] = (loaded, features)
    return features
