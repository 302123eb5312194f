"""Time the per-column evolutionary rates (``globcons columns --rates``'s computation) and check what they find.

Synthetic alignments only (no real data): sequences evolved under LG along a random coalescent-like tree
(root depth 1 substitution per site) with per-column rates drawn from a gamma(0.8) distribution, by a
small vectorised simulator in this script (a child's residues are drawn from the rows of the model's
P(r t) of its parent's residues, all columns at once). For each size the script times the phases of
:func:`globcons.phylo.rates.column_rates` (model distances and neighbour joining, the three fitting steps,
the posterior) and prints the Spearman correlation of the estimated with the true rates. Above
``--max-rows`` (default 500, the library's exact limit) the rates use a representative subset; ``--exact``
also runs the largest size on every row. Usage:

    python benchmarks/bench_rates.py [--rows 100,500,2000] [--columns 300] [--exact]
"""

from __future__ import annotations

import argparse
import resource
import time

import numpy as np
from machine import machine_line
from scipy.stats import spearmanr

from globcons.core.alignment import Alignment
from globcons.phylo import building, fit, rates
from globcons.phylo.models import load_model
from globcons.phylo.rates import EXACT_MAX_ROWS, RateOptions, column_rates
from globcons.phylo.tree import tree_from_links


def random_tree(n: int, rng: np.random.Generator, depth: float = 1.0):
    """Parent links of a random coalescent-like tree (leaves 0..n-1), lengths scaled to root depth ``depth``."""
    active, heights = list(range(n)), [0.0] * n
    parent, lengths, height = [-1] * n, [0.0] * n, 0.0
    node_height = [0.0] * n
    while len(active) > 1:
        k = len(active)
        height += rng.exponential(2.0 / (k * (k - 1)))
        i, j = sorted(rng.choice(k, 2, replace=False), reverse=True)
        new = len(parent)
        parent.append(-1)
        lengths.append(0.0)
        node_height.append(height)
        for gone in (i, j):
            child = active.pop(gone)
            heights.pop(gone)
            parent[child], lengths[child] = new, height - node_height[child]
        active.append(new)
        heights.append(height)
    scale = depth / height
    return parent, [x * scale for x in lengths]


def simulate(n: int, columns: int, seed: int) -> tuple[Alignment, np.ndarray]:
    """An alignment of ``n`` sequences evolved along a random tree, and the true rate of every column."""
    rng = np.random.default_rng(seed)
    parent, lengths = random_tree(n, rng)
    model = load_model("LG")
    eigen = model.eigen()
    true_rates = rng.gamma(0.8, 1 / 0.8, columns)
    states = np.empty((len(parent), columns), dtype=np.intp)
    root = len(parent) - 1
    states[root] = rng.choice(20, columns, p=model.frequencies)
    for node in range(root - 1, -1, -1):  # parents have larger indices: a pre-order
        p = eigen.transition(lengths[node] * true_rates)  # (L, 20, 20)
        rows = p[np.arange(columns), states[parent[node]]]  # (L, 20)
        cumulative = np.cumsum(rows, axis=1)
        draw = rng.random(columns)[:, None] * cumulative[:, -1:]
        states[node] = np.minimum((cumulative < draw).sum(axis=1), 19)
    ids = tuple(f"sim{i:05d}" for i in range(n))
    return Alignment(ids, states[:n].astype(np.uint8)), true_rates


class PhaseTimer:
    """Wraps the phases of column_rates with timers (monkey-patched names, restored afterwards)."""

    PHASES = [(building, "model_distances"), (building, "neighbour_joining_tree"), (fit, "_scale_and_alpha"),
              (fit, "_branches"), (fit, "_alpha"), (rates, "posterior_rates")]

    def __enter__(self):
        self.times, self.saved = {}, []
        for module, name in self.PHASES:
            original = getattr(module, name)
            self.saved.append((module, name, original))
            setattr(module, name, self._wrap(name, original))
            if module is building:
                setattr(rates, name, getattr(module, name))
        return self

    def _wrap(self, name, original):
        def timed(*args, **kwargs):
            start = time.perf_counter()
            result = original(*args, **kwargs)
            self.times[name] = self.times.get(name, 0.0) + time.perf_counter() - start
            return result
        return timed

    def __exit__(self, *exc):
        for module, name, original in self.saved:
            setattr(module, name, original)
            if module is building:
                setattr(rates, name, original)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", default="100,500,2000")
    parser.add_argument("--columns", type=int, default=300)
    parser.add_argument("--max-rows", type=int, default=EXACT_MAX_ROWS)
    parser.add_argument("--exact", action="store_true", help="also run the largest size on every row")
    args = parser.parse_args()
    print(machine_line(' (shared)'))
    print("| rows x columns | rows used | distances + NJ s | scale+alpha s | branches s (iterations) | alpha s | "
          "posterior s | total s | peak MB | Spearman with true rates |")
    print("|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|")
    sizes = [int(x) for x in args.rows.split(",")]
    runs = [(n, args.max_rows) for n in sizes] + ([(sizes[-1], sizes[-1])] if args.exact else [])
    for n, max_rows in runs:
        alignment, true_rates = simulate(n, args.columns, seed=n)
        tree_from_links([-1, 0, 0], [0, 1, 1], ["", "a", "b"])  # warm the imports
        with PhaseTimer() as timer:
            start = time.perf_counter()
            result = column_rates(alignment, RateOptions(max_rows=max_rows))
            total = time.perf_counter() - start
        t = timer.times
        peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
        rho = spearmanr(result.rate, true_rates)[0]
        print(f"| {n:,} x {args.columns} | {result.rows.size:,}{' (subset)' if result.subset else ''} | "
              f"{t['model_distances'] + t['neighbour_joining_tree']:.2f} | {t['_scale_and_alpha']:.2f} | "
              f"{t['_branches']:.2f} ({result.fit.iterations}) | {t['_alpha']:.2f} | {t['posterior_rates']:.2f} | "
              f"{total:.2f} | {peak:.0f} | {rho:.3f} |", flush=True)


if __name__ == "__main__":
    main()
