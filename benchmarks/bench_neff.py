"""Time the effective number of sequences (clusters at 80% identity) and measure the sampled estimate's error.

Synthetic alignments of 300 columns (no real data), in two shapes:

- ``diverse``: random residues around one ancestor (30% changed per row, as bench_columns.py makes them):
  nearly every row is its own cluster;
- ``clustered``: 40% of the rows are near-copies (one substitution in 100 columns) of a few hundred
  parents, the rest diverse: the case the effective number exists for.

For each size the script times the exact count (every pair, :func:`globcons.core.neighbours.exact_neighbours`)
where it is affordable, the ``estimated`` effective number of the column table (a fixed sample of rows, each
compared with every row: unbiased, with its standard error) and the per-row ``sampled`` counts behind
``--weights cluster`` (every row against a fixed sample); where the exact count runs, it prints each
estimate's relative error on the total. Timings are of the counting alone (the alignment is built in
memory first). Usage:

    python benchmarks/bench_neff.py [--rows 5000,20000,50000,200000] [--exact-max 20000] [--queries 128]
        [--sample 2000] [--no-per-row]
"""

from __future__ import annotations

import argparse
import time

import numpy as np
from machine import machine_line

from globcons.core.neighbours import NEFF_QUERY_ROWS, NEFF_SAMPLE_ROWS, estimate_neighbours, neighbour_counts


def make_codes(rows: int, columns: int, shape: str, seed: int = 7) -> np.ndarray:
    rng = np.random.default_rng(seed)
    ancestor = rng.integers(0, 20, columns)
    codes = np.where(rng.random((rows, columns)) < 0.3, rng.integers(0, 20, (rows, columns)), ancestor)
    if shape == "clustered":
        copies = int(0.4 * rows)
        parents = rng.integers(copies, rows, max(1, copies // 20))  # clusters of about 20 near-copies
        chosen = codes[rng.choice(parents, copies)].copy()
        mutate = rng.random(chosen.shape) < 0.01
        chosen[mutate] = rng.integers(0, 20, int(mutate.sum()))
        codes[:copies] = chosen
    return codes.astype(np.uint8)


def timed(function, *args, **kwargs):
    start = time.perf_counter()
    result = function(*args, **kwargs)
    return result, time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", default="5000,20000,50000,200000")
    parser.add_argument("--columns", type=int, default=300)
    parser.add_argument("--exact-max", type=int, default=20000, help="time the exact count up to this many rows")
    parser.add_argument("--queries", type=int, default=NEFF_QUERY_ROWS)
    parser.add_argument("--sample", type=int, default=NEFF_SAMPLE_ROWS)
    parser.add_argument("--no-per-row", action="store_true", help="skip the per-row sampled counts")
    args = parser.parse_args()
    print(machine_line())
    print(f"| rows x columns | shape | exact s | exact n_eff | estimated s ({args.queries} rows) | estimated n_eff "
          f"(± s.e.) | error | per-row sampled s ({args.sample:,} rows) | sampled n_eff | error |")
    print("|---:|---|---:|---:|---:|---:|---:|---:|---:|---:|")
    for rows in (int(r) for r in args.rows.split(",")):
        for shape in ("diverse", "clustered"):
            codes = make_codes(rows, args.columns, shape)
            exact, exact_s = (timed(neighbour_counts, codes, exact_max_rows=rows) if rows <= args.exact_max
                              else (None, float("nan")))
            estimated, estimated_s = timed(estimate_neighbours, codes, exact_max_rows=0, query_rows=args.queries)
            exact_text = f"{exact_s:.2f} | {exact.n_eff:,.0f}" if exact else "- | -"
            line = (f"| {rows:,} x {args.columns} | {shape} | {exact_text} | {estimated_s:.2f} | "
                    f"{estimated.n_eff:,.0f} ± {estimated.standard_error:,.0f} | {_error(estimated, exact)} |")
            if args.no_per_row:
                line += " - | - | - |"
            else:
                sampled, sampled_s = timed(neighbour_counts, codes, exact_max_rows=0, sample_size=args.sample)
                line += f" {sampled_s:.2f} | {sampled.n_eff:,.0f} | {_error(sampled, exact)} |"
            print(line, flush=True)


def _error(estimate, exact) -> str:
    return f"{estimate.n_eff / exact.n_eff - 1:+.1%}" if exact else "-"


if __name__ == "__main__":
    main()
