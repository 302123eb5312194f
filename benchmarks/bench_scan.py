"""Time `globcons scan` end to end on synthetic globin-like queries, with 1 and 2 worker processes.

Queries are the packaged reference chains with 30% of residues replaced at random (fixed seed; synthetic).
The command runs in a fresh process, writing the summary and the per-residue table to files.

    python benchmarks/bench_scan.py [--queries 10000] [--jobs 1,2]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_place import queries  # noqa: E402


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--queries", type=int, default=10000)
    parser.add_argument("--jobs", default="1,2")
    args = parser.parse_args()
    folder = Path(tempfile.mkdtemp(prefix="globcons-scan-"))
    fasta = folder / "queries.fasta"
    fasta.write_text("".join(f">{name} synthetic\n{sequence}\n" for name, sequence in queries(args.queries)))
    print(f"{args.queries} queries, {os.cpu_count()} cores")
    outputs = []
    for jobs in (int(j) for j in args.jobs.split(",")):
        summary, residues = folder / f"summary_{jobs}.tsv", folder / f"residues_{jobs}.tsv"
        start = time.perf_counter()
        subprocess.run([sys.executable, "-m", "globcons", "scan", str(fasta), "-o", str(summary),
                        "--residues", str(residues), "--jobs", str(jobs), "--quiet"], check=True)
        seconds = time.perf_counter() - start
        outputs.append((summary.read_bytes(), residues.read_bytes()))
        print(f"--jobs {jobs}: {seconds:.1f} s ({args.queries / seconds:.0f} queries/s)")
    print("outputs identical across --jobs:", all(o == outputs[0] for o in outputs))
    for path in folder.iterdir():
        path.unlink()
    folder.rmdir()


if __name__ == "__main__":
    main()
