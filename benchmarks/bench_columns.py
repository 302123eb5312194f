"""Time `globcons columns` end to end against a floor and a naive baseline, on synthetic alignments.

For each size (rows x 300 columns) the script writes a synthetic aligned FASTA (random residues around
a random ancestor, 10% gaps; no real data), then measures in the same run:

- floor: read the file, build the uint8 code matrix with the package's byte path, one np.bincount over
  all columns (the least any column analysis must do);
- globcons in memory: the `globcons columns` command in a fresh process (read, Henikoff weights, all
  scores, classes, tsv written to a file);
- globcons streaming: the same with `--chunk-rows` (two passes over the file in chunks); its tsv must be
  byte-identical to the in-memory one (the table says DIFFERS otherwise);
- naive (small sizes only): a plain per-column Python loop over the sequences' letters with
  collections.Counter, the approach the package avoids.

Peak memory is the measured process's maximum resident set size (each run under a wrapper process of
its own, read with getrusage(RUSAGE_CHILDREN)). Usage:

    python benchmarks/bench_columns.py [--rows 10000,100000,200000,1000000] [--columns 300]
        [--chunk-rows 100000] [--keep]
"""

from __future__ import annotations

import argparse
import math
import os
import platform
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np

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
from globcons.io.opening import read_input_bytes
from globcons.io.alignments import parse_alignment
from globcons.core.alphabet import N_CODES
data, name = read_input_bytes({path!r})
codes = parse_alignment(data, name).codes
offsets = np.arange(codes.shape[1]) * N_CODES
counts = np.bincount((codes + offsets).ravel(), minlength=codes.shape[1] * N_CODES)
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


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", default="10000,100000,200000,1000000")
    parser.add_argument("--columns", type=int, default=300)
    parser.add_argument("--chunk-rows", type=int, default=100000, help="rows per chunk of the streaming runs")
    parser.add_argument("--naive-max", type=int, default=100000, help="skip the naive baseline above this")
    parser.add_argument("--keep", action="store_true", help="keep the generated files")
    args = parser.parse_args()
    folder = Path(tempfile.mkdtemp(prefix="globcons-bench-"))
    memory = os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") / 2**30
    print(f"machine: {platform.machine()} {platform.processor() or ''}, {os.cpu_count()} cores, {memory:.0f} GiB, "
          f"Python {platform.python_version()}, numpy {np.__version__}")
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
