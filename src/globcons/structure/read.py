"""Reading protein structures (PDB or mmCIF, gzip too) with Biopython's ``Bio.PDB``, and their protein chains.

The file is read once, through the package's one opener (:class:`globcons.io.opening.InputSource`), so a
pipe or FIFO works as well as a file; its format is read from the content (an mmCIF file begins with a
``data_`` block), so a misnamed file still reads.
"""

from __future__ import annotations

import io
import os
import warnings
from dataclasses import dataclass
from pathlib import Path

from globcons.errors import InputError
from globcons.io.opening import InputSource

__all__ = ["StructureFile", "load_structure", "read_structure", "chain_residues", "first_model", "pick_chain"]

_WATERS = frozenset({"HOH", "WAT", "H2O", "DOD", "D2O"})


@dataclass(frozen=True, eq=False)
class StructureFile:
    """A structure as read: its name, text, format (``"pdb"`` or ``"mmcif"``) and ``Bio.PDB`` structure."""

    name: str
    text: str
    format: str
    structure: object


def _sniff_format(text: str, name: str) -> str:
    """``"mmcif"`` when the first meaningful line opens a ``data_`` block, else ``"pdb"``."""
    for line in text.splitlines():
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        return "mmcif" if stripped.lower().startswith("data_") else "pdb"
    raise InputError("is empty; expected a PDB or mmCIF structure", source=name)


def load_structure(path: str | os.PathLike) -> StructureFile:
    """Read a PDB or mmCIF file (gzip-compressed too) once: its text, format and ``Bio.PDB`` structure.

    Raises
    ------
    InputError
        The file is missing, not text, or cannot be parsed, or holds no atoms.
    """
    from Bio.PDB import MMCIFParser, PDBParser

    source = InputSource(path)
    if source.path is not None and source.path.is_dir():
        raise InputError("is a folder; give a PDB or mmCIF file", source=source.name)
    data = source.read_bytes()
    try:
        text = bytes(data).decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"is not a text PDB or mmCIF file ({exc})", source=source.name) from None
    fmt = _sniff_format(text, source.name)
    parser = MMCIFParser(QUIET=True) if fmt == "mmcif" else PDBParser(QUIET=True)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            structure = parser.get_structure(Path(source.name).stem, io.StringIO(text))
    except Exception as exc:  # the parsers raise ValueError, KeyError, PDBConstructionException, ...
        kind = "mmCIF" if fmt == "mmcif" else "PDB"
        raise InputError(f"cannot be read as {kind} ({type(exc).__name__}: {exc})", source=source.name) from None
    if not any(True for _ in structure.get_atoms()):
        raise InputError("holds no atoms; expected a PDB or mmCIF structure", source=source.name)
    return StructureFile(source.name, text, fmt, structure)


def read_structure(path: str | os.PathLike):
    """Read a PDB or mmCIF file (gzip-compressed too) into a ``Bio.PDB`` structure.

    Returns
    -------
    tuple of (Bio.PDB.Structure.Structure, str)
        The structure and its format, ``"pdb"`` or ``"mmcif"``.

    Raises
    ------
    InputError
        The file is missing, not text, or cannot be parsed, or holds no atoms.
    """
    loaded = load_structure(path)
    return loaded.structure, loaded.format


def _letter(residue) -> str | None:
    """One-letter code of a residue of the protein chain, or None for anything else."""
    from Bio.PDB.Polypeptide import is_nucleic, protein_letters_3to1_extended

    name = residue.get_resname().strip().upper()
    if name in _WATERS:
        return None
    letter = protein_letters_3to1_extended.get(name)
    if letter is not None:
        return letter
    if residue.id[0] == " " and not is_nucleic(name):
        return "X"  # an ATOM record of an unknown residue (UNK, or a name Biopython does not know)
    return None


def chain_residues(structure, chain_id: str) -> list[tuple[object, str]]:
    """The amino-acid residues of one chain, in file order, with their one-letter codes.

    Parameters
    ----------
    structure
        A ``Bio.PDB`` structure (or one of its models); the chain is taken from the first model.
    chain_id
        The chain's identifier.

    Returns
    -------
    list of (Bio.PDB.Residue.Residue, str)
        Standard residues by their letter; modified residues by their parent's letter (MSE as M, SEP
        as S, from ``Bio.PDB.Polypeptide.protein_letters_3to1_extended``); residues of ATOM records
        with an unknown name as X. Waters, ligands (HEM, ions, ...) and nucleotides are left out.

    Raises
    ------
    KeyError
        The chain is not in the structure.
    """
    model = first_model(structure)
    chain = model[chain_id]
    result = []
    for residue in chain:
        letter = _letter(residue)
        if letter is not None:
            result.append((residue, letter))
    return result


def first_model(structure):
    """The structure's first model (a model passes through)."""
    if structure.level == "M":
        return structure
    models = list(structure)
    if not models:
        raise KeyError("the structure has no model")
    return models[0]


def _is_protein(residues: list[tuple[object, str]]) -> bool:
    return any(letter != "X" for _, letter in residues)


def _chain_summary(model) -> str:
    parts = []
    for chain in model:
        residues = chain_residues(model, chain.id)
        kind = f"{len(residues)} protein residues" if _is_protein(residues) else "no protein"
        parts.append(f"{chain.id!r} ({kind})")
    return ", ".join(parts) if parts else "none"


def pick_chain(structure, chain: str | None, source: str) -> tuple[str, list[tuple[object, str]]]:
    """The chain to use and its residues: ``chain``, or the first chain with protein residues."""
    model = first_model(structure)
    if chain is None:
        for candidate in model:
            residues = chain_residues(model, candidate.id)
            if _is_protein(residues):
                return candidate.id, residues
        raise InputError(f"has no protein chain (chains: {_chain_summary(model)})", source=source)
    ids = [c.id for c in model]
    if chain not in ids:
        raise InputError(f"has no chain {chain!r}; chains present: {_chain_summary(model)}", source=source)
    residues = chain_residues(model, chain)
    if not _is_protein(residues):
        protein = [c for c in ids if _is_protein(chain_residues(model, c))]
        choice = (f"protein chains: {', '.join(repr(c) for c in protein)}" if protein
                  else "the file has no protein chain")
        raise InputError(f"chain {chain!r} holds no protein residues; {choice}", source=source)
    return chain, residues

