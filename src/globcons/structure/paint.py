"""Column scores painted onto a protein structure, in the B-factor field of its atoms.

A chain of a PDB or mmCIF file is read with Biopython's ``Bio.PDB``, its residues are placed on the
alignment's columns (the chain's sequence aligned to the family profile of the alignment, as a scanned
sequence is), and one score of the column table is written into the B-factor of every atom of each
placed residue, so that any molecular viewer can colour the structure by it.

What the B-factor holds
-----------------------
- Every atom of a residue placed on a column holds that column's score: all atoms alike, every
  alternate location included.
- Every other atom holds the sentinel :data:`SENTINEL` (``-1.0``, written ``-1.00`` in PDB): residues
  of the chain that fall outside the aligned region or between two columns, residues placed on a
  column whose score is undefined (NaN: a column without residues), the other chains, waters and
  ligands. No score can be negative (see :data:`SCORES`), so the sentinel never passes for one, and
  no original B-factor is left behind to be mistaken for a score.

Scores
------
The scores the profile shows (:data:`SCORES`, from the column table): ``conservation`` (the default:
``(1 - entropy / log2 20) x (1 - gap fraction)``, 1 for an invariant, filled column), ``property_conservation``,
``jsd`` and ``n_eff``; each is higher where a column is more conserved, and gaps lower it, so a colour
ramp from variable to conserved never paints a gappy column as conserved. PDB output keeps two decimals
(values of 1000 or more lose them: use mmCIF for ``n_eff`` of very large alignments); mmCIF output keeps
full precision.

Formats
-------
The input is read by :mod:`globcons.structure.read` (format from the content, gzip too). The output
format follows the output's extension: ``.pdb`` and ``.ent`` write PDB, ``.cif`` and ``.mmcif`` write mmCIF. From an
mmCIF input to an mmCIF output every category of the input is kept and only
``_atom_site.B_iso_or_equiv`` is replaced.

Models
------
The chain of the first model is placed on the alignment; in a file with several models (an NMR
ensemble) the same residues are painted in every model.
"""

from __future__ import annotations

import io
import math
import os
import warnings
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from globcons.analysis.columns import SCORE_COLUMNS, SHOWN_SCORES
from globcons.analysis.family import family_from_alignment
from globcons.core.alignment import Alignment
from globcons.errors import InputWarning, OptionError, OutputError
from globcons.io.atomic import atomic_output
from globcons.structure.read import load_structure, pick_chain

__all__ = [
    "SENTINEL",
    "SCORES",
    "STRUCTURE_FORMATS",
    "LOW_IDENTITY",
    "LOW_MAPPED",
    "MappingStats",
    "PaintResult",
    "map_chain_to_alignment",
    "mapping_stats",
    "score_values",
    "structure_format_for",
    "paint_structure",
]

#: B-factor of every atom that carries no score (written ``-1.00`` in PDB). No score is negative.
SENTINEL = -1.0

#: Scores that can be painted: the same as the profile's (higher = more conserved, gaps lower them; ``rates``
#: is the posterior mean rate, lower = more conserved).
SCORES: dict[str, str] = dict(SHOWN_SCORES)

#: Output formats by extension.
STRUCTURE_FORMATS: dict[str, str] = {".pdb": "pdb", ".ent": "pdb", ".cif": "mmcif", ".mmcif": "mmcif"}

#: Below this identity of the placed residues to the alignment's consensus, the chain is probably
#: not a member of the family (or the wrong chain), and a warning says so.
LOW_IDENTITY = 0.2
#: When fewer than this share of the chain's residues map, a warning says so (another domain, or
#: not a member of the family).
LOW_MAPPED = 0.5

# The PDB format's B-factor field is 6 characters wide.
_PDB_B_RANGE = (-999.99, 9999.99)


# ---------------------------------------------------------------------------------------------------
# Mapping


def _check_table(alignment: Alignment, table: pd.DataFrame) -> None:
    if len(table) != alignment.n_columns or "frame_label" not in table.columns:
        raise ValueError(f"the column table ({len(table)} rows) does not belong to the alignment "
                         f"({alignment.n_columns} columns); make it with score_columns(alignment)")


def map_chain_to_alignment(sequence: str, alignment: Alignment, table: pd.DataFrame) -> np.ndarray:
    """Place each residue of a chain on a column of the alignment.

    The sequence is aligned (glocal, affine gaps; :meth:`globcons.analysis.family.Family.columns_of`, the
    mapping ``plan --structure`` uses too) to the profile of the alignment's family, built with the frame
    labels of the column table so that gaps inside helices cost more than in loops.

    Parameters
    ----------
    sequence
        The chain's one-letter sequence (from :func:`chain_residues`).
    alignment
        The alignment the column table was computed from.
    table
        Its column table (:func:`globcons.analysis.columns.score_columns`), one row per column in order.

    Returns
    -------
    numpy.ndarray
        ``int64``, shape (len(sequence),): the 1-based alignment column of each residue, 0 for a
        residue outside the aligned region or inserted between two columns.
        :func:`mapping_stats` summarises it.
    """
    _check_table(alignment, table)
    if not sequence:
        return np.zeros(0, dtype=np.int64)
    family = family_from_alignment(alignment, labels=tuple(str(label) for label in table["frame_label"]))
    columns = family.columns_of(sequence)
    return np.where(columns >= 0, columns + 1, 0)


@dataclass(frozen=True)
class MappingStats:
    """How a chain's residues fell on the alignment's columns.

    Attributes
    ----------
    residues
        Amino-acid residues of the chain.
    mapped
        Residues placed on a column.
    identical
        Mapped residues equal to their column's consensus residue.
    first_column, last_column
        1-based range of the columns used (0 when nothing is mapped).
    first_label, last_label
        Frame labels of those columns ('' where none).
    """

    residues: int
    mapped: int
    identical: int
    first_column: int
    last_column: int
    first_label: str = ""
    last_label: str = ""

    @property
    def unmapped(self) -> int:
        """Residues not placed on a column."""
        return self.residues - self.mapped

    @property
    def identity(self) -> float:
        """Share of the mapped residues equal to their column's consensus (NaN when none is mapped)."""
        return self.identical / self.mapped if self.mapped else math.nan


def mapping_stats(sequence: str, columns: np.ndarray, table: pd.DataFrame) -> MappingStats:
    """Counts of a mapping from :func:`map_chain_to_alignment`.

    Parameters
    ----------
    sequence
        The chain's one-letter sequence.
    columns
        Its 1-based columns (0 unmapped).
    table
        The column table (its ``consensus`` and ``frame_label`` columns are read).
    """
    columns = np.asarray(columns, dtype=np.int64)
    placed = np.flatnonzero(columns > 0)
    consensus = table["consensus"].astype(str).to_numpy() if "consensus" in table.columns else None
    labels = table["frame_label"].astype(str).to_numpy()
    identical = 0
    if consensus is not None:
        identical = sum(1 for i in placed if sequence[i].upper() == consensus[columns[i] - 1])
    if placed.size:
        first, last = int(columns[placed].min()), int(columns[placed].max())
        return MappingStats(len(sequence), int(placed.size), identical, first, last, labels[first - 1],
                            labels[last - 1])
    return MappingStats(len(sequence), 0, 0, 0, 0)


def score_values(table: pd.DataFrame, score: str) -> np.ndarray:
    """The per-column values of a paintable score (see :data:`SCORES`), ``float64``, NaN kept.

    Raises
    ------
    OptionError
        ``score`` is not one of :data:`SCORES`.
    """
    if score not in SCORES:
        raise OptionError(f"unknown score {score!r}; choose one of {', '.join(SCORES)}")
    column = SCORE_COLUMNS.get(score, score)
    if column not in table.columns:
        raise OptionError(f"the column table has no {column!r} column")
    return table[column].to_numpy(dtype=np.float64)


# ---------------------------------------------------------------------------------------------------
# Painting


@dataclass(frozen=True)
class PaintResult:
    """What :func:`paint_structure` did.

    Attributes
    ----------
    structure
        The input structure file.
    output
        Where the painted structure was written.
    output_format
        ``"pdb"`` or ``"mmcif"``.
    chain
        The painted chain.
    residues, mapped, unmapped
        Amino-acid residues of the chain; those placed on a column; the others.
    painted
        Mapped residues whose column has a defined score (the others carry the sentinel too).
    score
        The painted score's name.
    sentinel
        The B-factor of every atom that carries no score.
    identity
        Share of the mapped residues equal to the alignment's consensus at their column (NaN if none).
    first_column, last_column, first_label, last_label
        The columns (1-based) and frame labels the chain spans.
    models
        Models painted.
    """

    structure: str
    output: str
    output_format: str
    chain: str
    residues: int
    mapped: int
    unmapped: int
    painted: int
    score: str
    sentinel: float
    identity: float
    first_column: int
    last_column: int
    first_label: str = ""
    last_label: str = ""
    models: int = 1

    def describe(self) -> str:
        """One line: chain, residues mapped, the columns spanned, identity, score and sentinel."""
        if self.mapped:
            span = f"columns {self.first_column}-{self.last_column}"
            if self.first_label or self.last_label:
                span += f" ({self.first_label or '?'}..{self.last_label or '?'})"
            line = (f"chain {self.chain}: {self.mapped} of {self.residues} residues mapped to {span}, "
                    f"{self.identity:.0%} identical to the consensus")
        else:
            line = f"chain {self.chain}: none of {self.residues} residues mapped"
        if self.painted < self.mapped:
            line += f"; {self.mapped - self.painted} on columns without a score"
        line += f"; B-factors hold {self.score}, {self.sentinel:.2f} where no score"
        if self.models > 1:
            line += f" (all {self.models} models)"
        return line


def structure_format_for(path: str | os.PathLike) -> str:
    """The output format named by a path's extension (``.pdb``/``.ent`` PDB, ``.cif``/``.mmcif`` mmCIF).

    Raises
    ------
    OptionError
        The extension names neither.
    """
    suffix = Path(str(path)).suffix.lower()
    if suffix not in STRUCTURE_FORMATS:
        raise OptionError(f"cannot tell the structure format of {path!s} from its extension; "
                          f"use one of {', '.join(STRUCTURE_FORMATS)}")
    return STRUCTURE_FORMATS[suffix]


def _residue_copies(residue) -> Iterator:
    """A residue and, for a point mutation modelled as alternatives, every alternative residue."""
    if residue.is_disordered() == 2:  # DisorderedResidue: one Residue per alternative residue name
        yield from residue.disordered_get_list()
    else:
        yield residue


def _residue_keys(chain_id: str, residue) -> Iterator[tuple]:
    for copy in _residue_copies(residue):
        yield (chain_id, copy.id, copy.get_resname())


def _check_sentinel(value: float, fmt: str) -> float:
    value = float(value)
    if not math.isfinite(value):
        raise OptionError(f"the value for unmapped residues must be a finite number, got {value}")
    if fmt == "pdb" and not (_PDB_B_RANGE[0] <= value <= _PDB_B_RANGE[1]):
        raise OptionError(f"the value for unmapped residues ({value:g}) does not fit the PDB B-factor field "
                          f"({_PDB_B_RANGE[0]:g} to {_PDB_B_RANGE[1]:g}); use another value or write mmCIF")
    return value


def _format_cif_number(value: float) -> str:
    return repr(float(value))


def _cif_row_keys(data: dict) -> Iterator[tuple | None]:
    """The residue key of every ``_atom_site`` row, as ``MMCIFParser`` (author ids) builds residues."""
    names = data["_atom_site.label_comp_id"]
    chains = data.get("_atom_site.auth_asym_id") or data["_atom_site.label_asym_id"]
    numbers = data.get("_atom_site.auth_seq_id") or data["_atom_site.label_seq_id"]
    icodes = data.get("_atom_site.pdbx_PDB_ins_code") or ["?"] * len(names)
    groups = data.get("_atom_site.group_PDB") or ["ATOM"] * len(names)
    for name, chain, number, icode, group in zip(names, chains, numbers, icodes, groups, strict=True):
        try:
            resseq = int(number)
        except ValueError:
            yield None
            continue
        icode = " " if icode in (".", "?") else icode
        if group == "HETATM":
            field = "W" if name in ("HOH", "WAT") else f"H_{name}"
        else:
            field = " "
        yield (chain, (field, resseq, icode), name)


def _write_cif_dict(text: str, values: dict[tuple, float], sentinel: float, stream) -> None:
    from Bio.PDB import MMCIFIO
    from Bio.PDB.MMCIF2Dict import MMCIF2Dict

    data = MMCIF2Dict(io.StringIO(text))
    data["_atom_site.B_iso_or_equiv"] = [_format_cif_number(values.get(key, sentinel) if key else sentinel)
                                         for key in _cif_row_keys(data)]
    writer = MMCIFIO()
    writer.set_dict(data)
    buffer = io.StringIO()
    writer.save(buffer)
    stream.write(buffer.getvalue())


def paint_structure(structure_path: str | os.PathLike, alignment: Alignment, table: pd.DataFrame,
                    out_path: str | os.PathLike, chain: str | None = None, score: str = "conservation",
                    unmapped: float = SENTINEL, inputs: Iterable = (),
                    out_format: str | None = None) -> PaintResult:
    """Write a column score into the B-factors of a structure's chain.

    Parameters
    ----------
    structure_path
        A PDB or mmCIF file (format read from the content; ``.gz`` files are decompressed).
    alignment
        The family alignment.
    table
        Its column table (:func:`globcons.analysis.columns.score_columns`).
    out_path
        The painted structure: ``.pdb``/``.ent`` for PDB, ``.cif``/``.mmcif`` for mmCIF; ``"-"`` writes
        to standard output in ``out_format`` or, by default, the input's format. Written atomically.
    chain
        The chain to paint (default: the first chain, in file order, with protein residues).
    score
        One of :data:`SCORES` (default ``conservation``).
    unmapped
        The B-factor of every atom that carries no score (default :data:`SENTINEL`, ``-1.0``): residues
        not placed on a column or placed on a column without a score (NaN), other chains, waters and
        ligands. It must be finite, and fit the PDB field for PDB output.
    inputs
        Further input paths the output must not overwrite (the structure is always one).
    out_format
        ``"pdb"`` or ``"mmcif"``, overriding the output's extension.

    Returns
    -------
    PaintResult

    Raises
    ------
    InputError
        The structure cannot be read, holds no protein chain, or lacks the requested chain (the message
        lists the chains present).
    OptionError
        Unknown score, unknown output extension, or an unusable ``unmapped`` value.
    OutputError
        The output cannot be written (or would overwrite an input).

    Warns
    -----
    InputWarning
        The mapped residues agree with the consensus at fewer than :data:`LOW_IDENTITY` of their
        columns (probably not a member of the family), or PDB output loses decimals (values >= 1000).
    """
    source = Path(structure_path)
    values_by_column = score_values(table, score)
    _check_table(alignment, table)
    to_stdout = str(out_path) == "-"
    if out_format is not None and out_format not in ("pdb", "mmcif"):
        raise OptionError(f"unknown structure format {out_format!r}; choose pdb or mmcif")
    loaded = load_structure(source)
    structure, in_format = loaded.structure, loaded.format
    fmt = out_format or (in_format if to_stdout else structure_format_for(out_path))
    sentinel = _check_sentinel(unmapped, fmt)
    chain_id, residues = pick_chain(structure, chain, str(source))
    sequence = "".join(letter for _, letter in residues)
    columns = map_chain_to_alignment(sequence, alignment, table)
    stats = mapping_stats(sequence, columns, table)

    # Score of each residue (by its id in the chain), then every atom of the structure.
    values: dict[tuple, float] = {}
    painted = 0
    for (residue, _), column in zip(residues, columns, strict=True):
        if column <= 0:
            continue
        value = float(values_by_column[column - 1])
        if not math.isfinite(value):
            continue
        painted += 1
        for key in _residue_keys(chain_id, residue):
            values[key] = value
    models = list(structure)
    for model in models:
        for model_chain in model:
            for residue in model_chain:
                for copy in _residue_copies(residue):
                    value = values.get((model_chain.id, copy.id, copy.get_resname()), sentinel)
                    for atom in copy.get_unpacked_list():
                        atom.set_bfactor(value)

    if fmt == "pdb" and any(abs(v) >= 1000 for v in values.values()):
        warnings.warn(f"{score} values of 1000 or more lose their decimals in PDB; write mmCIF (.cif) to keep "
                      "them", InputWarning, stacklevel=2)
    if stats.mapped and stats.identity < LOW_IDENTITY:
        warnings.warn(f"chain {chain_id} of {source}: only {stats.identity:.0%} of its {stats.mapped} mapped "
                      "residues match the alignment's consensus; is it a member of this family?",
                      InputWarning, stacklevel=2)
    elif stats.mapped < LOW_MAPPED * stats.residues:
        warnings.warn(f"chain {chain_id} of {source}: only {stats.mapped} of its {stats.residues} residues map "
                      "onto the alignment; a chain with other domains, or not a member of this family?",
                      InputWarning, stacklevel=2)

    all_inputs = [source, *inputs]
    if fmt == "mmcif" and in_format == "mmcif":
        with atomic_output(None if to_stdout else out_path, all_inputs) as stream:
            _write_cif_dict(loaded.text, values, sentinel, stream)
    else:
        _write_structure(structure, fmt, None if to_stdout else out_path, all_inputs)
    return PaintResult(str(source), str(out_path), fmt, chain_id, stats.residues, stats.mapped, stats.unmapped,
                       painted, score, sentinel, stats.identity, stats.first_column, stats.last_column,
                       stats.first_label, stats.last_label, len(models))


def _write_structure(structure, fmt: str, out_path, inputs: list) -> None:
    from Bio.PDB import MMCIFIO, PDBIO
    from Bio.PDB.PDBExceptions import PDBIOException

    writer = PDBIO() if fmt == "pdb" else MMCIFIO()
    writer.set_structure(structure)
    buffer = io.StringIO()  # PDBIO asks its handle for tell(), which a pipe cannot answer
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # values are checked above; Biopython's notes add nothing
            writer.save(buffer)
    except (PDBIOException, TypeError, ValueError) as exc:
        hint = "; write mmCIF (.cif) instead" if fmt == "pdb" else ""
        raise OutputError(f"cannot be written as {'PDB' if fmt == 'pdb' else 'mmCIF'} ({exc}){hint}",
                          source=str(out_path or "<stdout>")) from None
    with atomic_output(out_path, inputs) as stream:
        stream.write(buffer.getvalue())
