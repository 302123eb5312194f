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

It also writes the survey's "new" sequences to scan (demo_queries.fasta, simulated the same way with
planted defects: a lost proximal His, a truncation, an internal stop, a scrambled non-globin) and a list
of proposed mutations for one of them (demo_mutations.txt).

Run from the repository root: ``python data_examples/make_demo.py``. It is deterministic (fixed seeds)
and writes data_examples/ and the packaged copy src/globcons/data/demo/.
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
# Substitution rates: of each site's ancestor from the base chain, of each individual from its site's
# ancestor. Individuals of one site stay below 80% identity to each other, so the family holds about as
# many effective sequences (clusters at 80% identity) as sequences, as a survey of distinct animals would.
SITE_RATE = 0.3
MEMBER_RATE = 0.2
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
        ancestor = mutate(base, SITE_RATE)
        for member in range(1, PER_SITE + 1):
            sequence = mutate(ancestor, MEMBER_RATE)
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


QUERY_SEED = 20261202


def simulate_queries(rng: np.random.Generator) -> list[tuple[str, str, str]]:
    """New sequences from a fifth (fictional) survey site, some with planted defects."""
    base = SPERM_WHALE_MB

    def drift(sequence: str, rate: float) -> str:
        letters = list(sequence)
        for index in np.flatnonzero(rng.random(len(letters)) < rate):
            if index + 1 in FIXED:
                continue
            letters[index] = rng.choice(list(DRIFT_GROUP[letters[index]]))
        return "".join(letters)

    normal_a = drift(base, 0.2)
    normal_b = drift(base, 0.3)
    lost_his = drift(base, 0.2)
    lost_his = lost_his[:92] + "Q" + lost_his[93:]  # F8 His93 -> Gln
    truncated = drift(base, 0.2)[35:]  # starts at C1: helices A and B missing
    stopped = drift(base, 0.2)
    stopped = stopped[:100] + "*" + stopped[101:]
    scrambled = "".join(rng.permutation(list(base)))
    note = "synthetic; fictional Kelpie Bay Marine Station survey, site 5"
    return [
        ("KBM-S5-01", f"{note}; full length", normal_a),
        ("KBM-S5-02", f"{note}; full length", normal_b),
        ("KBM-S5-03", f"{note}; proximal His replaced (planted)", lost_his),
        ("KBM-S5-04", f"{note}; N-terminal truncation (planted)", truncated),
        ("KBM-S5-05", f"{note}; internal stop (planted)", stopped),
        ("KBM-S5-06", f"{note}; scrambled, not a globin (planted)", scrambled),
    ]


DEMO_MUTATIONS = """# Proposed mutations of KBM-S5-01 (synthetic demo; mature numbering, no initiator Met)
H93Q
H64L
L29F
V68A
A71P
K78E
E4:D
"""


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
    queries = simulate_queries(np.random.default_rng(QUERY_SEED))
    write_fasta(queries, root / "data_examples" / "demo_queries.fasta")
    target_record = [queries[0]]
    write_fasta(target_record, root / "data_examples" / "demo_target.fasta")
    (root / "data_examples" / "demo_mutations.txt").write_text(DEMO_MUTATIONS, encoding="ascii")
    packaged = root / "src" / "globcons" / "data" / "demo"
    packaged.mkdir(parents=True, exist_ok=True)
    for name in ("demo_family.fasta", "demo_queries.fasta", "demo_target.fasta", "demo_mutations.txt"):
        shutil.copyfile(root / "data_examples" / name, packaged / name)
    print(f"wrote {len(records)} family sequences, {len(queries)} queries and the mutation list to "
          f"{root / 'data_examples'} and {packaged}")


if __name__ == "__main__":
    main()
