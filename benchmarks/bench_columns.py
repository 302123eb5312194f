"""Time `globcons columns` end to end against a floor and a naive baseline, on synthetic alignments.

For each size (rows x 300 columns) the script writes a synthetic aligned FASTA (random residues around
a random ancestor, 10% gaps; no real data), then measures in the same run:

- floor, done right and without the package: read the file, split it into lines, translate the sequence
  lines with a 256-entry table, one weighted np.bincount per column in reused blocks (the least any
  column analysis must do);
- globcons in memory: the `globcons columns` command in a fresh process (read, Henikoff weights, all
  scores, classes, tsv written to a file);
- globcons streaming: the same with `--chunk-rows` (two passes over the file in chunks); its tsv must be
  byte-identical to the in-memory one (the table says DIFFERS otherwise);
- naive (small sizes only): a plain per-column Python loop over the sequences' letters with
  collections.Counter, the approach the package avoids.

Peak memory is the measured process's maximum resident set size (each run under a wrapper process of
its own, read with getrusage(RUSAGE_CHILDREN)).

With ``--goals`` it measures the project's speed goals instead, side by side in one run: tool / floor at
200,000 x 300; the cost per cell at 3,000 columns against 300; a hand-written Biopython + Counter script
against the tool at 20,000 x 300 (both including process start-up); the tool's peak memory at 1,000,000
x 300. Usage:

    python benchmarks/bench_columns.py [--rows 10000,100000,200000,1000000] [--columns 300]
        [--chunk-rows 100000] [--keep]
    python benchmarks/bench_columns.py --goals [--repeats 3]
"""

from __future__ import annotations

import argparse
import math
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
from machine import machine_line

STANDARD = np.frombuffer(b"ACDEFGHIKLMNPQRSTVWY", dtype=np.uint8)


def make_alignment(path: Path, rows: int, columns: int, seed: int = 11, block: int = 20000) -> None:
    rng = np.random.default_rng(seed)
    ancestor = rng.integers(0, 20, columns)
    with open(path, "wb") as stream:
        for start in range(0, rows, block):
            n = min(block, rows - start)
            codes = np.where(rng.random((n, columns)) < 0.3, rng.integers(0, 20, (n, columns)), ancestor)
            letters = STANDARD[codes]
            letters[rng.random((n, columns)) < 0.1] = ord("-")
            lines = np.full((n, columns + 1), ord("\n"), dtype=np.uint8)
            lines[:, :columns] = letters
            body = lines.tobytes().split(b"\n")
            stream.write(b"".join(b">seq%d synthetic\n%s\n" % (start + i, body[i]) for i in range(n)))


WRAPPER = """
import resource, subprocess, sys, time
start = time.perf_counter()
subprocess.run(sys.argv[1:], check=True, stdout=subprocess.DEVNULL)
print(time.perf_counter() - start, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)
"""


def measured(argv: list[str]) -> tuple[float, float]:
    """Run ``argv`` under a fresh wrapper process; return (wall seconds, peak RSS of ``argv`` in MB).

    RUSAGE_CHILDREN's ru_maxrss is the largest over all children waited for, so each measurement gets a
    wrapper of its own whose only child is the measured process.
    """
    out = subprocess.run([sys.executable, "-c", WRAPPER, *argv], capture_output=True, text=True, check=True).stdout
    seconds, rss_kb = out.split()[-2:]
    return float(seconds), float(rss_kb) / 1024


def child(code: str) -> tuple[float, float]:
    """Run python code in a fresh process; return (wall seconds, peak RSS in MB)."""
    return measured([sys.executable, "-c", code])


def command(path: Path, out: Path, *extra: str) -> tuple[float, float]:
    """`globcons columns` end to end in a fresh process: (wall seconds, peak RSS in MB)."""
    return measured([sys.executable, "-m", "globcons", "columns", str(path), "-o", str(out), "--quiet", *extra])


FLOOR = """
import numpy as np
# The floor done right, written without the package: read the file, split it into lines, translate the
# sequence lines with a 256-entry table, then one weighted bincount per column, in reused blocks.
TABLE = np.full(256, 25, np.uint8)
for i, c in enumerate(b"ACDEFGHIKLMNPQRSTVWY"):
    TABLE[c] = TABLE[c + 32] = i
TABLE[ord("-")] = TABLE[ord(".")] = 23
data = open({path!r}, "rb").read()
lines = data.split(b"\\n")
if not lines[-1]:
    lines.pop()
ids = [h[1:].split(None, 1)[0] for h in lines[0::2]]
joined = b"".join(lines[1::2])
del lines
n = len(ids)
codes = TABLE[np.frombuffer(joined, np.uint8)].reshape(n, len(joined) // n)
weights = np.ones(n)
counts = np.zeros((codes.shape[1], 24))
step = max(1, 2 ** 19 // codes.shape[1])
for start in range(0, n, step):
    block, w = np.ascontiguousarray(codes[start:start + step].T), weights[start:start + step]
    for j in range(codes.shape[1]):
        counts[j] += np.bincount(block[j], weights=w, minlength=24)
"""

NAIVE = """
import collections
records, current = [], []
for line in open({path!r}):
    if line.startswith('>'):
        if current: records.append(''.join(current))
        current = []
    else:
        current.append(line.strip())
records.append(''.join(current))
columns = [collections.Counter(seq[j] for seq in records) for j in range(len(records[0]))]
"""

# What a practitioner would write by hand with Biopython: read the alignment, count every column with a
# Counter, entropy and gap fraction per column, write a table.
HANDWRITTEN = """
import collections, math
from Bio import AlignIO
alignment = AlignIO.read({path!r}, "fasta")
with open({out!r}, "w") as out:
    out.write("column\\tentropy\\tgap_fraction\\n")
    for j in range(alignment.get_alignment_length()):
        counts = collections.Counter(alignment[:, j])
        gaps = counts.pop("-", 0)
        total = sum(counts.values())
        entropy = -sum(c / total * math.log2(c / total) for c in counts.values()) if total else 0.0
        out.write(f"{{j + 1}}\\t{{entropy:.4f}}\\t{{gaps / len(alignment):.4f}}\\n")
"""


def best_of(repeats: int, run) -> tuple[float, float]:
    """The fastest of ``repeats`` runs (wall seconds) and the largest peak RSS seen (MB)."""
    results = [run() for _ in range(repeats)]
    return min(r[0] for r in results), max(r[1] for r in results)


def goals(folder: Path, repeats: int) -> None:
    """The speed goals of the project, measured side by side in this run (each the best of ``repeats``)."""
    print(f"\nGoals (best of {repeats} runs each; wall seconds including process start-up):")
    print("| goal | measured | target | met |")
    print("|---|---:|---:|---|")

    def row(goal: str, value: float, target: str, met: bool, unit: str = "") -> None:
        print(f"| {goal} | {value:.2f}{unit} | {target} | {'yes' if met else 'NO'} |", flush=True)

    medium = folder / "goal_200000x300.fasta"
    make_alignment(medium, 200_000, 300)
    floor, _ = best_of(repeats, lambda: child(FLOOR.format(path=str(medium))))
    tool, _ = best_of(repeats, lambda: command(medium, folder / "goal_medium.tsv"))
    row(f"tool / floor at 200,000 x 300 (tool {tool:.2f} s, floor {floor:.2f} s)", tool / floor, "<= 2.0",
        tool / floor <= 2.0)
    wide = folder / "goal_20000x3000.fasta"
    make_alignment(wide, 20_000, 3000)
    wide_tool, _ = best_of(repeats, lambda: command(wide, folder / "goal_wide.tsv"))
    per_cell = wide_tool / tool  # the same number of cells
    row(f"cost per cell at 3,000 columns / at 300 (20,000 x 3,000: {wide_tool:.2f} s)", per_cell, "<= 1.5",
        per_cell <= 1.5)
    wide.unlink()
    medium.unlink()
    small = folder / "goal_20000x300.fasta"
    make_alignment(small, 20_000, 300)
    small_tool, _ = best_of(repeats, lambda: command(small, folder / "goal_small.tsv"))
    script, _ = best_of(1, lambda: child(HANDWRITTEN.format(path=str(small), out=str(folder / "script.tsv"))))
    row(f"hand-written Biopython script / tool at 20,000 x 300 (script {script:.2f} s, tool {small_tool:.2f} s)",
        script / small_tool, ">= 20", script / small_tool >= 20)
    small.unlink()
    large = folder / "goal_1000000x300.fasta"
    make_alignment(large, 1_000_000, 300)
    _, peak = best_of(1, lambda: command(large, folder / "goal_large.tsv"))
    row("peak memory of the tool in memory at 1,000,000 x 300", peak, "< 600 MB", peak < 600, " MB")
    large.unlink()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", default="10000,100000,200000,1000000")
    parser.add_argument("--columns", type=int, default=300)
    parser.add_argument("--chunk-rows", type=int, default=100000, help="rows per chunk of the streaming runs")
    parser.add_argument("--naive-max", type=int, default=100000, help="skip the naive baseline above this")
    parser.add_argument("--keep", action="store_true", help="keep the generated files")
    parser.add_argument("--goals", action="store_true", help="measure the speed goals only (see goals())")
    parser.add_argument("--repeats", type=int, default=3, help="runs per goal measurement (the best counts)")
    args = parser.parse_args()
    folder = Path(tempfile.mkdtemp(prefix="globcons-bench-"))
    print(machine_line())
    if args.goals:
        goals(folder, args.repeats)
        for leftover in folder.iterdir():
            leftover.unlink()
        folder.rmdir()
        return
    print("| rows x columns | file MB | code matrix MB | floor s | in memory s | ratio | MB/s | peak MB | "
          f"streaming s (--chunk-rows {args.chunk_rows:,}) | ratio | peak MB | naive s |")
    print("|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|")
    for rows in (int(r) for r in args.rows.split(",")):
        path = folder / f"aln_{rows}.fasta"
        make_alignment(path, rows, args.columns)
        size_mb = path.stat().st_size / 1e6
        floor, _ = child(FLOOR.format(path=str(path)))
        ours, peak = command(path, folder / f"out_{rows}.tsv")
        streamed, stream_peak = command(path, folder / f"stream_{rows}.tsv", "--chunk-rows", str(args.chunk_rows))
        same = (folder / f"out_{rows}.tsv").read_bytes() == (folder / f"stream_{rows}.tsv").read_bytes()
        naive = child(NAIVE.format(path=str(path)))[0] if rows <= args.naive_max else math.nan
        naive_text = f"{naive:.2f}" if not math.isnan(naive) else "-"
        print(f"| {rows:,} x {args.columns} | {size_mb:.1f} | {rows * args.columns / 1e6:.0f} | {floor:.2f} | "
              f"{ours:.2f} | {ours / floor:.2f} | {size_mb / ours:.0f} | {peak:.0f} | {streamed:.2f}"
              f"{'' if same else ' (DIFFERS)'} | {streamed / floor:.2f} | {stream_peak:.0f} | {naive_text} |",
              flush=True)
        if not args.keep:
            path.unlink()
    if not args.keep:
        for leftover in folder.iterdir():
            leftover.unlink()
        folder.rmdir()


if __name__ == "__main__":
    main()
