"""Make the example files the README's commands name (family.fasta, beta.fasta, groups.tsv, 2hhb.pdb, ...).

Everything but two files is SYNTHETIC and derived, deterministically, from the demo data beside this
script (made by make_demo.py: a simulated myoglobin family of a fictional survey, ids KBM-S<site>-<n>).
The two real ones carry their provenance in data_examples/README.md:

- beta.fasta / beta_mature.fasta: human hemoglobin beta (UniProt P68871), copied from the package's
  reference chains (src/globcons/data/frame/reference_chains.fasta, provenance there), with and without
  the initiator Met;
- 2hhb.pdb: PDB entry 2HHB, copied unchanged from the project's shared reference structures.

Run from the repository root: ``python data_examples/make_examples.py [--structure PATH]``. Rerunning
gives byte-identical files (gzip without a time stamp); tests/test_readme_examples.py checks that.
"""

from __future__ import annotations

import argparse
import gzip
import re
import shutil
from pathlib import Path

HERE = Path(__file__).resolve().parent
REFERENCE_CHAINS = HERE.parent / "src" / "globcons" / "data" / "frame" / "reference_chains.fasta"
SHARED_STRUCTURE = Path("/work/shared/reference/structures/2hhb.pdb")
#: Alignment columns (1-based) of the demo family's three-residue insertion after CD5: insert states in A2M.
INSERT_COLUMNS = (48, 49, 50)
WIDTH = 60
SYNTHETIC = "synthetic; derived from the globcons demo family (fictional KBM survey)"


def read_fasta(path: Path) -> list[tuple[str, str]]:
    """(header without '>', sequence) pairs of a FASTA file."""
    records: list[tuple[str, list[str]]] = []
    for line in path.read_text(encoding="utf-8").splitlines():
        if line.startswith(">"):
            records.append((line[1:], []))
        elif line.strip():
            records[-1][1].append(line.strip())
    return [(header, "".join(parts)) for header, parts in records]


def fasta_text(records: list[tuple[str, str]]) -> str:
    lines = []
    for header, sequence in records:
        lines.append(f">{header}")
        lines.extend(sequence[i:i + WIDTH] for i in range(0, len(sequence), WIDTH))
    return "\n".join(lines) + "\n"


def stockholm_text(records: list[tuple[str, str]]) -> str:
    ids = [header.split()[0] for header, _ in records]
    pad = max(len(i) for i in ids) + 1
    lines = ["# STOCKHOLM 1.0", f"#=GF CC {SYNTHETIC}"]
    lines += [f"{i.ljust(pad)}{sequence}" for i, (_, sequence) in zip(ids, records, strict=True)]
    return "\n".join(lines + ["//"]) + "\n"


def a2m_row(sequence: str) -> str:
    """A2M: the insertion columns as insert states (lower case, '.' for a gap), the others match states."""
    inserts = {c - 1 for c in INSERT_COLUMNS}
    return "".join((c.lower() if c != "-" else ".") if i in inserts else c for i, c in enumerate(sequence))


def gzip_bytes(text: str) -> bytes:
    return gzip.compress(text.encode("utf-8"), mtime=0)


def human_beta() -> tuple[str, str]:
    """(header, sequence with Met) of human hemoglobin beta from the package's reference chains."""
    for header, sequence in read_fasta(REFERENCE_CHAINS):
        if header.split()[0] == "human_hemoglobin_beta":
            accession = re.search(r"accession=UniProt (\S+)", header).group(1)
            return accession, sequence
    raise SystemExit("human_hemoglobin_beta not found in the reference chains")


def example_files(structure: Path) -> dict[str, bytes]:
    """Name -> bytes of every example file."""
    family = read_fasta(HERE / "demo_family.fasta")
    queries_text = (HERE / "demo_queries.fasta").read_text(encoding="utf-8")
    family_text = (HERE / "demo_family.fasta").read_text(encoding="utf-8")
    unaligned = [(header, sequence.replace("-", "")) for header, sequence in family]
    accession, beta = human_beta()
    real = f"real; UniProt {accession}, from the globcons reference chains"
    files = {
        "family.fasta": family_text.encode("utf-8"),
        "family.sto": stockholm_text(family).encode("utf-8"),
        "family.a2m": fasta_text([(h, a2m_row(s)) for h, s in family]).encode("utf-8"),
        "big.fasta.gz": gzip_bytes(family_text),
        "globins.fasta": fasta_text(unaligned).encode("utf-8"),
        "new_globins.fasta": queries_text.encode("utf-8"),
        "new.fasta": queries_text.encode("utf-8"),
        "metagenome_hits.fa.gz": gzip_bytes(queries_text),
        "target.fasta": (HERE / "demo_target.fasta").read_bytes(),
        "proposals.txt": (HERE / "demo_mutations.txt").read_bytes(),
        "groups.tsv": ("id\tgroup\n" + "".join(
            f"{h.split()[0]}\t{h.split()[0].split('-')[1]}\n" for h, _ in family)).encode("utf-8"),
        "beta.fasta": fasta_text([(f"human_hemoglobin_beta {real}, with the initiator Met", beta)]).encode(),
        "beta_mature.fasta": fasta_text([(f"human_hemoglobin_beta_mature {real}, initiator Met removed",
                                          beta[1:])]).encode(),
        "2hhb.pdb": structure.read_bytes(),
    }
    return files


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--structure", type=Path, default=None,
                        help="2hhb.pdb to copy (default: the shipped copy, else the shared reference one)")
    parser.add_argument("--out", type=Path, default=HERE, help="folder to write into (default: data_examples/)")
    args = parser.parse_args()
    structure = args.structure or (HERE / "2hhb.pdb" if (HERE / "2hhb.pdb").exists() else SHARED_STRUCTURE)
    files = example_files(structure)
    args.out.mkdir(parents=True, exist_ok=True)
    for name, data in files.items():
        target = args.out / name
        if target.resolve() == structure.resolve():
            continue
        temporary = target.with_name(f".{name}.part")
        temporary.write_bytes(data)
        shutil.move(temporary, target)
    print(f"wrote {len(files)} example files in {args.out}")


if __name__ == "__main__":
    main()
