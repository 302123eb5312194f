"""``globcons demo``: the whole job on the embedded synthetic demo data."""

from __future__ import annotations

import os

import click

from globcons.cli.reporting import Reporter, common, warn_low_data

__all__ = ["demo"]


@click.command()
@click.option("-o", "--output", "out_dir", default="globcons-demo", show_default=True,
              help="Folder for the demo's outputs (created if missing; other files in it are left alone).")
@common
def demo(out_dir: str, reporter: Reporter) -> None:
    """Run the whole job on the embedded demo data (a synthetic myoglobin family of a fictional survey).

    Classes the family's columns, scans the survey's new sequences, checks proposed mutations of one of
    them and writes the offline report.
    """
    from rich.console import Console
    from rich.table import Table

    from globcons.core.classes import CLASSES
    from globcons.core.vocabulary import CAUTION
    from globcons.demo import run_demo

    result = run_demo(out_dir)
    counts = result.table.attrs["class_counts"]
    if not reporter.quiet:
        console = Console(stderr=True)
        console.print("Demo family (synthetic myoglobins of a fictional survey): columns by class")
        overview = Table()
        overview.add_column("class")
        overview.add_column("columns", justify="right")
        for name in CLASSES:
            overview.add_row(name, str(counts[name]))
        console.print(overview)
    reporter.info(result.summary)
    warn_low_data(result.table, reporter)
    scanned = result.scan_summary
    reporter.info(f"scanned {len(scanned)} new sequences: {int((scanned['is_globin'] == 'yes').sum())} globins; "
                  "pockets: " + ", ".join(f"{i} {p}" for i, p in zip(scanned["id"], scanned["pocket"], strict=True)))
    verdicts = result.checks["verdict"].value_counts().to_dict()
    reporter.info(f"checked {len(result.checks)} proposed mutations: "
                  + ", ".join(f"{verdicts.get(v, 0)} {v}" for v in ("locked", "guarded", "open")))
    click.echo(CAUTION, err=True)
    main_files = [os.path.relpath(f, out_dir) for f in result.files
                  if os.path.basename(f) in ("columns.tsv", "scan_summary.tsv", "scan_residues.tsv", "checks.tsv")
                  and os.path.dirname(os.path.abspath(f)) == os.path.abspath(out_dir)]
    reporter.info(f"outputs are in {os.path.abspath(out_dir)}: " + ", ".join(main_files)
                  + f"; open {os.path.abspath(str(result.report))} in a browser")
