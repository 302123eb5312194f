"""Time the batched profile alignment of globcons.align.dp on synthetic queries (not a test).

A random profile of M columns (scores drawn around a random consensus, position-specific gap costs)
and N random queries whose lengths are drawn around a mean length: half are mutated copies of the
consensus with random insertions and deletions, half are shuffled residues (as significance
estimates would score). Everything comes from a fixed seed; no real data. Prints the time of
``align_scores`` (scores only) and ``align`` (with traceback) for the numpy path and the compiled kernels
(numba, when installed; their loading is not timed), and their agreement. Usage:

    python benchmarks/bench_dp.py [--queries 10000] [--columns 155] [--length 150] [--chunk-cells N]
                                  [--kernel numpy,compiled]
"""

from __future__ import annotations

import argparse
import platform
import time

import numpy as np

from globcons.align.dp import SCORE_CHUNK_CELLS, GapCosts, align, align_scores, compiled_kernels

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
    parser.add_argument("--kernel", default="numpy,compiled", help="kernels to time, comma-separated")
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

    kernels = [k for k in args.kernel.split(",") if k != "compiled" or compiled_kernels() is not None]
    if kernels != args.kernel.split(","):
        print("numba is not installed (pip install 'globcons[fast]'): numpy path only")
    first = None
    for kernel in kernels:
        align_scores(scores, gaps, queries[:2], kernel=kernel)  # compiled: loaded outside the timing
        align(scores, gaps, queries[:2], kernel=kernel)
        t0 = time.perf_counter()
        fast = align_scores(scores, gaps, queries, chunk_cells=args.chunk_cells, kernel=kernel)
        t1 = time.perf_counter()
        placed = align(scores, gaps, queries, kernel=kernel)
        t2 = time.perf_counter()
        agree = np.array_equal(fast, np.array([p.score for p in placed]))
        print(f"{kernel}: align_scores {t1 - t0:7.2f} s ({(t1 - t0) / cells * 1e9:.2f} ns/cell), "
              f"align {t2 - t1:7.2f} s ({(t2 - t1) / cells * 1e9:.2f} ns/cell); scores agree: {agree}")
        if first is None:
            first = (fast, placed)
        else:
            same = np.array_equal(first[0], fast) and all(
                np.array_equal(a.column_of_residue, b.column_of_residue) for a, b in zip(first[1], placed, strict=True))
            print(f"identical to {kernels[0]}: {same}")

if __name__ == "__main__":
    main()
