"""Time the batched profile alignment of globcons.align.dp on synthetic queries (not a test).

A random profile of M columns (scores drawn around a random consensus, position-specific gap costs)
and N random queries whose lengths are drawn around a mean length: half are mutated copies of the
consensus with random insertions and deletions, half are shuffled residues (as significance
estimates would score). Everything comes from a fixed seed; no real data. Prints the time of
``align_scores`` (scores only) and ``align`` (with traceback), and their agreement. Usage:

    python benchmarks/bench_dp.py [--queries 10000] [--columns 155] [--length 150] [--chunk-cells N]
"""

from __future__ import annotations

import argparse
import platform
import time

import numpy as np

from globcons.align.dp import SCORE_CHUNK_CELLS, GapCosts, align, align_scores

N_CODES = 24


def make_profile(rng: np.random.Generator, columns: int) -> tuple[np.ndarray, GapCosts, np.ndarray]:
    consensus = rng.integers(0, 20, columns)
    scores = rng.normal(-1.0, 1.5, (columns, N_CODES))
    scores[np.arange(columns), consensus] += 6.0
    scores[:, 23] = -5.0
    gaps = GapCosts(rng.uniform(8, 12, columns), rng.uniform(0.5, 1.5, columns),
                    rng.uniform(8, 12, columns + 1), rng.uniform(0.5, 1.5, columns + 1))
    return scores, gaps, consensus


def make_queries(rng: np.random.Generator, consensus: np.ndarray, n: int, length: int) -> list[np.ndarray]:
    queries = []
    for q in range(n):
        size = int(np.clip(rng.normal(length, length * 0.1), 1, None))
        if q % 2:
            queries.append(rng.integers(0, 20, size).astype(np.uint8))
            continue
        seq = consensus.copy()
        mutate = rng.random(seq.shape[0]) < 0.3
        seq[mutate] = rng.integers(0, 20, int(mutate.sum()))
        keep = rng.random(seq.shape[0]) > 0.03
        seq = seq[keep]
        for _ in range(rng.poisson(2)):
            at = int(rng.integers(0, seq.shape[0] + 1))
            seq = np.insert(seq, at, rng.integers(0, 20, int(rng.integers(1, 6))))
        seq = np.resize(seq, size) if seq.shape[0] < size else seq[:size]  # the drawn length, either way
        queries.append(seq.astype(np.uint8))
    return queries


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--queries", type=int, default=10_000)
    parser.add_argument("--columns", type=int, default=155)
    parser.add_argument("--length", type=int, default=150)
    parser.add_argument("--chunk-cells", type=int, default=SCORE_CHUNK_CELLS)
    parser.add_argument("--seed", type=int, default=7)
    args = parser.parse_args()

    rng = np.random.default_rng(args.seed)
    scores, gaps, consensus = make_profile(rng, args.columns)
    queries = make_queries(rng, consensus, args.queries, args.length)
    cells = sum(q.shape[0] for q in queries) * args.columns
    machine = platform.processor() or platform.machine()
    print(f"python {platform.python_version()}, numpy {np.__version__}, {machine}, one thread")
    mean = cells / args.columns / args.queries
    print(f"{args.queries} queries (mean length {mean:.1f}) x {args.columns} columns"
          f" = {cells / 1e6:.1f} M cells")

    t0 = time.perf_counter()
    fast = align_scores(scores, gaps, queries, chunk_cells=args.chunk_cells)
    t1 = time.perf_counter()
    placed = align(scores, gaps, queries)
    t2 = time.perf_counter()
    agree = np.array_equal(fast, np.array([p.score for p in placed]))
    print(f"align_scores: {t1 - t0:7.2f} s  ({(t1 - t0) / cells * 1e9:.2f} ns/cell)")
    print(f"align:        {t2 - t1:7.2f} s  ({(t2 - t1) / cells * 1e9:.2f} ns/cell)")
    print(f"align scores identical to align_scores: {agree}")


if __name__ == "__main__":
    main()
