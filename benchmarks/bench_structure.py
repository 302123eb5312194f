"""Time the structural features of ``plan --structure`` on the shipped real structure (PDB 2HHB).

Steps, each timed on its own (median of ``--repeats`` runs, one process, one core): reading the gzip
PDB file; the per-residue features of all four chains (Biopython's Shrake-Rupley accessibility, then
the k-d tree distances to hemes and other chains); the target mapped onto chain B (human beta, built-in
frame); and the whole plan ranked with the structure. The features are computed once per loaded file:
the last line checks that a second call costs nothing.

    python benchmarks/bench_structure.py [--repeats 5]
"""

from __future__ import annotations

import argparse
import statistics
import time
from pathlib import Path

from Bio.PDB.SASA import ShrakeRupley

from globcons.frame.reference import reference_chain
from globcons.mutations.judge import rank_sites
from globcons.mutations.target import prepare_target
from globcons.structure.context import target_context
from globcons.structure.features import structure_features
from globcons.structure.read import load_structure

HHB = Path(__file__).resolve().parents[1] / "data_examples" / "2hhb.pdb.gz"


def timed(step, repeats: int) -> tuple[float, object]:
    times, result = [], None
    for _ in range(repeats):
        start = time.perf_counter()
        result = step()
        times.append(time.perf_counter() - start)
    return statistics.median(times), result


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    target = prepare_target(reference_chain("human_hemoglobin_beta").full_sequence, "beta", numbering="mature")
    read_s, loaded = timed(lambda: load_structure(HHB), args.repeats)
    atoms = sum(1 for _ in loaded.structure.get_atoms())
    features_s, _ = timed(lambda: structure_features(load_structure(HHB)), args.repeats)
    features_s -= read_s
    sasa_s, _ = timed(lambda: ShrakeRupley().compute(load_structure(HHB).structure[0], level="A"), args.repeats)
    sasa_s -= read_s
    features = structure_features(loaded)
    map_s, context = timed(lambda: target_context(target, features, "B"), args.repeats)
    plan_s, _ = timed(lambda: rank_sites(target, context=context), args.repeats)
    cached_s, _ = timed(lambda: structure_features(loaded), args.repeats)
    print(f"2HHB: {atoms} atoms, {sum(len(c.sequence) for c in features.chains.values())} protein residues")
    print(f"read {read_s:.3f} s; features {features_s:.3f} s (Biopython's Shrake-Rupley alone, waters included: "
          f"{sasa_s:.3f} s); map beta onto chain B {map_s:.3f} s; "
          f"plan {plan_s:.3f} s; features again (cached) {cached_s * 1e6:.0f} us")


if __name__ == "__main__":
    main()
