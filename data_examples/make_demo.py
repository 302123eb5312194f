"""Make the embedded demo data: a SYNTHETIC myoglobin family from a fictional survey.

Scenario (made up for the demo, no real lab or survey): the Kelpie Bay Marine Station sequenced
myoglobins of diving mammals at four survey sites. The sequences are simulated, not sequenced: each
descends from the mature sperm whale myoglobin chain (UniProt P02185, residues 2-154 of the entry) by
random substitution along a two-level tree (site ancestors, then individuals), with

- the classic functional positions held fixed (they come out invariant),
- "conservative" positions drawn only inside a BLOSUM62-compatible residue group,
- the rest free to change to any residue,
- N- and C-terminal fragments and an insertion in the CD corner (gap-rich columns),
- a few unknown residues (X), as sequencing leaves them.

Run from the repository root: ``python data_examples/make_demo.py``. It is deterministic (fixed seed)
and writes data_examples/demo_family.fasta and the packaged copy src/globcons/data/demo/.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import numpy as np

SEED = 20261201
STANDARD = "ACDEFGHIKLMNPQRSTVWY"
# Mature sperm whale myoglobin (UniProt P02185 without the initiator Met), 153 residues.
SPERM_WHALE_MB = ("VLSEGEWQLVLHVWAKVEADVAGHGQDILIRLFKSHPETLEKFDRFKHLKTEAEMKASEDLKKHGVTVLTALGAILKKKGHHEAE"
                  "LKPLAQSHATKHKIPIKYLEFISEAIIHVLHSRHPGDFGADAQGAMNKALELFRKDIAAKYKELGYQG")
# Mature positions (1-based) held fixed: B6 Gly25, B10 Leu29, C2 Pro37, CD1 Phe43, CD4 Phe46, E7 His64,
# E8 Gly65, E11 Val68, F4 Leu89, F8 His93, G8 Ile107 (helix labels from the standard globin nomenclature).
FIXED = {25, 29, 37, 43, 46, 64, 65, 68, 89, 93, 107}
# Residue groups whose members all score > 0 with each other in BLOSUM62.
DRIFT_GROUP = {
    "I": "ILVM", "L": "ILVM", "V": "ILVM", "M": "ILVM", "F": "FYW", "Y": "FYW", "W": "FYW",
    "K": "KR", "R": "KR", "E": "ED", "D": "DE", "Q": "QE", "N": "ND", "S": "ST", "T": "TS",
    "A": "AS", "H": "HY", "G": "G", "P": "P", "C": "C",
}
SITES = 4
PER_SITE = 12
INSERT_AFTER = 47  # an insertion of three residues after CD5 (mature 47), present in a few sequences


def simulate(rng: np.random.Generator) -> list[tuple[str, str, str]]:
    base = list(SPERM_WHALE_MB)
    n = len(base)
    kinds = np.where(rng.random(n) < 0.45, "conservative", "free")
    for position in FIXED:
        kinds[position - 1] = "fixed"

    def mutate(sequence: list[str], rate: float) -> list[str]:
        result = list(sequence)
        for index in np.flatnonzero(rng.random(n) < rate):
            if kinds[index] == "fixed":
                continue
            if kinds[index] == "conservative":
                result[index] = rng.choice(list(DRIFT_GROUP[base[index]]))
            else:
                result[index] = STANDARD[rng.integers(20)]
        return result

    records = []
    for site in range(1, SITES + 1):
        ancestor = mutate(base, 0.25)
        for member in range(1, PER_SITE + 1):
            sequence = mutate(ancestor, 0.12)
            insert = "".join(rng.choice(list("GSDNKE"), 3)) if rng.random() < 0.15 else "---"
            row = sequence[:INSERT_AFTER] + list(insert) + sequence[INSERT_AFTER:]
            if rng.random() < 0.6:  # N-terminal fragment: the first residues were not sequenced
                cut = int(rng.integers(2, 5))
                row[:cut] = ["-"] * cut
            if rng.random() < 0.6:
                cut = int(rng.integers(3, 7))
                row[-cut:] = ["-"] * cut
            if rng.random() < 0.1:
                row[int(rng.integers(60, 140))] = "X"
            identifier = f"KBM-S{site}-{member:02d}"
            description = (f"synthetic myoglobin, survey site {site} "
                           "(fictional Kelpie Bay Marine Station survey; simulated sequence)")
            records.append((identifier, description, "".join(row)))
    return records


def write_fasta(records: list[tuple[str, str, str]], path: Path, width: int = 60) -> None:
    with open(path, "w", encoding="ascii", newline="\n") as stream:
        for identifier, description, sequence in records:
            stream.write(f">{identifier} {description}\n")
            for start in range(0, len(sequence), width):
                stream.write(sequence[start:start + width] + "\n")


def main() -> None:
    root = Path(__file__).resolve().parent.parent
    rng = np.random.default_rng(SEED)
    records = simulate(rng)
    target = root / "data_examples" / "demo_family.fasta"
    write_fasta(records, target)
    packaged = root / "src" / "globcons" / "data" / "demo"
    packaged.mkdir(parents=True, exist_ok=True)
    shutil.copyfile(target, packaged / "demo_family.fasta")
    print(f"wrote {len(records)} sequences to {target} and {packaged}")


if __name__ == "__main__":
    main()
