"""Time placement on the globin frame (`globcons.align.placement.place_many`) on synthetic globin-like queries.

Queries are the four reference chains with 30% of their residues replaced at random (fixed seed;
synthetic, no real data beyond the packaged reference chains). Reports queries per second with the
default significance (12 shuffles per query) and without it (shuffles=0). One process, one core.

    python benchmarks/bench_place.py [--queries 2000]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from globcons.align.placement import place_many
from globcons.align.significance import DEFAULT_SHUFFLES
from globcons.frame.reference import reference_chains


def queries(count: int, seed: int = 1) -> list[tuple[str, str]]:
    rng = np.random.default_rng(seed)
    letters = np.array(list("ACDEFGHIKLMNPQRSTVWY"))
    chains = [np.array(list(c.mature_sequence)) for c in reference_chains()]
    result = []
    for index in range(count):
        sequence = chains[index % len(chains)].copy()
        changed = rng.random(sequence.size) < 0.3
        sequence[changed] = rng.choice(letters, changed.sum())
        result.append((f"q{index}", "".join(sequence)))
    return result


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--queries", type=int, default=2000)
    args = parser.parse_args()
    batch = queries(args.queries)
    place_many(batch[:8])  # warm the caches (profile, calibration)
    for shuffles in (DEFAULT_SHUFFLES, 0):
        start = time.perf_counter()
        placed = place_many(batch, shuffles=shuffles)
        seconds = time.perf_counter() - start
        called = sum(p.is_globin for p in placed) if shuffles else "-"
        print(f"{args.queries} queries, {shuffles} shuffles: {seconds:.2f} s, {args.queries / seconds:.0f} "
              f"queries/s, called globins: {called}")


if __name__ == "__main__":
    main()
