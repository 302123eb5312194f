"""Time `globcons scan` end to end (1 and 2 workers) and its alignment kernels (numpy and compiled), side by side.

Queries are the packaged reference chains with 30% of residues replaced at random (fixed seed; synthetic).
Four parts, in one run:

1. the dynamic programming of the scan in one process: the shuffled copies (scores only) and the
   placements (traceback) of a sample of the queries, through the numpy path and the compiled kernels
   (numba, when installed), in ns per cell, with a check that both give identical results;
2. the compiled kernels' start-up in a fresh process: cold (an empty numba cache: import and compile) and
   warm (the same cache again: import and load);
3. a small run (the demo's six queries) with the automatic choice and with the numpy path forced: the
   compiler must not make it slower (the automatic choice does not load numba for it);
4. `globcons scan` on all queries in a fresh process, summary and per-residue tables written, for each
   `--jobs`, and once with the numpy path forced (`GLOBCONS_DP_KERNEL=numpy`): every output must be
   byte-identical.

Every timing is repeated (`--repeats`) and reported as the best and the spread (max - min), because the
machine is shared: other people's jobs on the same cores inflate single timings.

    python benchmarks/bench_scan.py [--queries 10000] [--jobs 1,2] [--repeats 3] [--sample 300]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_place import queries  # noqa: E402

from globcons.align.dp import align, align_scores, compiled_kernels  # noqa: E402
from globcons.align.scoring_profile import frame_profile, query_codes  # noqa: E402
from globcons.align.significance import DEFAULT_SHUFFLES, shuffled  # noqa: E402
from globcons.demo import demo_file  # noqa: E402

COLD_START = """
import time
start = time.perf_counter()
import numpy as np
from globcons.align.dp import GapCosts, align, align_scores
scores = np.zeros((5, 25)); gaps = GapCosts.constant(5, 3.0, 1.0); query = [np.zeros(4, np.uint8)]
align_scores(scores, gaps, query, kernel="compiled"); align(scores, gaps, query, kernel="compiled")
print(time.perf_counter() - start)
"""


def spread(values: list[float]) -> str:
    """Best, median and spread of repeated timings."""
    return f"best {min(values):.3f}, median {statistics.median(values):.3f}, spread {max(values) - min(values):.3f}"


def kernel_timings(sample: list[tuple[str, str]], repeats: int) -> None:
    profile = frame_profile()
    codes = [query_codes(sequence) for _, sequence in sample]
    copies = shuffled(codes, DEFAULT_SHUFFLES)
    work = {"shuffles, scores only": (align_scores, copies), "placements, traceback": (align, codes)}
    kernels = ["numpy"] + (["compiled"] if compiled_kernels() is not None else [])
    print(f"\n1. dynamic programming of {len(sample)} queries ({DEFAULT_SHUFFLES} shuffles each) on the frame "
          f"profile ({profile.n_columns} columns), one process, {repeats} repeats, ns per cell")
    if len(kernels) == 1:
        print("   numba is not installed (pip install 'globcons[fast]'): numpy path only")
    for name, (function, batch) in work.items():
        cells = sum(c.shape[0] for c in batch) * profile.n_columns
        results, best, line = {}, {}, []
        for kernel in kernels:
            function(profile.scores, profile.gaps, batch[:2], kernel=kernel)  # compiled: load outside the timing
            times = []
            for _ in range(repeats):
                start = time.perf_counter()
                results[kernel] = function(profile.scores, profile.gaps, batch, kernel=kernel)
                times.append(time.perf_counter() - start)
            best[kernel] = min(times) / cells * 1e9
            line.append(f"{kernel} {best[kernel]:.2f} (spread {(max(times) - min(times)) / cells * 1e9:.2f})")
        if len(kernels) == 2:
            a, b = results["numpy"], results["compiled"]
            same = np.array_equal(a, b) if isinstance(a, np.ndarray) else all(
                x.score == y.score and np.array_equal(x.column_of_residue, y.column_of_residue)
                and x.query_start == y.query_start and x.profile_start == y.profile_start
                for x, y in zip(a, b, strict=True))
            line.append(f"compiled {best['numpy'] / best['compiled']:.1f}x faster, identical: {same}")
        print(f"   {name} ({cells / 1e6:.0f} M cells): " + "; ".join(line))


def start_up(repeats: int) -> None:
    if compiled_kernels() is None:
        return
    print("\n2. compiled kernels' start-up in a fresh process (import numba, compile or load both kernels), s")
    cold, warm = [], []
    for _ in range(repeats):
        with tempfile.TemporaryDirectory(prefix="globcons-numba-") as cache:
            env = dict(os.environ, NUMBA_CACHE_DIR=cache)
            run = [sys.executable, "-c", COLD_START]
            cold.append(float(subprocess.run(run, env=env, check=True, capture_output=True, text=True).stdout))
            warm.append(float(subprocess.run(run, env=env, check=True, capture_output=True, text=True).stdout))
    print(f"   cold (empty cache): {spread(cold)}\n   warm (cached):      {spread(warm)}")


def timed_scan(fasta: Path, folder: Path, tag: str, jobs: int, env: dict[str, str]) -> tuple[float, bytes, bytes]:
    summary, residues = folder / f"summary_{tag}.tsv", folder / f"residues_{tag}.tsv"
    start = time.perf_counter()
    subprocess.run([sys.executable, "-m", "globcons", "scan", str(fasta), "-o", str(summary), "--residues",
                    str(residues), "--jobs", str(jobs), "--quiet"], check=True, env=env, capture_output=True)
    seconds = time.perf_counter() - start
    return seconds, summary.read_bytes(), residues.read_bytes()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--queries", type=int, default=10000)
    parser.add_argument("--jobs", default="1,2")
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--sample", type=int, default=300, help="queries of the in-process kernel timings")
    args = parser.parse_args()
    batch = queries(args.queries)
    print(f"{args.queries} queries, {os.cpu_count()} cores (shared: timings vary with other people's jobs)")
    kernel_timings(batch[:args.sample], args.repeats)
    start_up(args.repeats)

    folder = Path(tempfile.mkdtemp(prefix="globcons-scan-"))
    env = {k: v for k, v in os.environ.items() if k != "GLOBCONS_DP_KERNEL"}
    print(f"\n3. a small run: the demo's six queries, {args.repeats} repeats, s")
    demo = demo_file("demo_queries.fasta")
    small = {}
    for kernel in ("auto", "numpy"):
        runs = [timed_scan(demo, folder, f"demo_{kernel}", 1, dict(env, GLOBCONS_DP_KERNEL=kernel))
                for _ in range(args.repeats)]
        small[kernel] = runs[0][1:]
        print(f"   {kernel:5}: {spread([r[0] for r in runs])}")
    print(f"   outputs identical: {small['auto'] == small['numpy']}")

    fasta = folder / "queries.fasta"
    fasta.write_text("".join(f">{name} synthetic\n{sequence}\n" for name, sequence in batch))
    print(f"\n4. globcons scan of {args.queries} queries, end to end in a fresh process, {args.repeats} repeats")
    outputs = []
    for jobs in (int(j) for j in args.jobs.split(",")):
        runs = [timed_scan(fasta, folder, f"jobs{jobs}", jobs, env) for _ in range(args.repeats)]
        seconds = [r[0] for r in runs]
        outputs += [r[1:] for r in runs]
        print(f"   --jobs {jobs}: {args.queries / min(seconds):.0f} queries/s at best; s: {spread(seconds)}")
    seconds, *numpy_output = timed_scan(fasta, folder, "numpy", 2, dict(env, GLOBCONS_DP_KERNEL="numpy"))
    print(f"   --jobs 2 with the numpy path (GLOBCONS_DP_KERNEL=numpy): {args.queries / seconds:.0f} queries/s, "
          f"{seconds:.1f} s (one run)")
    print("   outputs identical across runs, --jobs and kernels:",
          all(o == outputs[0] for o in outputs) and tuple(numpy_output) == outputs[0])
    for path in folder.iterdir():
        path.unlink()
    folder.rmdir()


if __name__ == "__main__":
    main()
