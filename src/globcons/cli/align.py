"""``globcons align``: unaligned sequences placed on the globin frame."""

from __future__ import annotations

import click

from globcons.cli.options import shuffles_option
from globcons.cli.reporting import Reporter, common, count_progress
from globcons.io.formats import ALIGNMENT_OUTPUTS

__all__ = ["align"]


@click.command()
@click.argument("sequences", metavar="SEQUENCES", type=click.Path(dir_okay=True, allow_dash=True))
@click.option("-o", "--output", default=None,
              help="Alignment output (default: Stockholm to standard output). Format by extension: .sto/.stk "
                   "Stockholm (labels in #=GC lines), .a2m, else FASTA (labels in OUTPUT.frame.tsv).")
@click.option("--out-format", type=click.Choice(ALIGNMENT_OUTPUTS), default=None, help="Force the output format.")
@click.option("--keep-inserts", is_flag=True,
              help="Keep residues between frame positions as lower-case insert columns (A2M convention).")
@click.option("--report", "report_path", default=None,
              help="Per-sequence table: nearest reference, identity, E-value, helix coverage, residues left out.")
@shuffles_option
@common
def align(sequences: str, output: str | None, out_format: str | None, keep_inserts: bool, report_path: str | None,
          shuffles: int, reporter: Reporter) -> None:
    """Place unaligned SEQUENCES (FASTA, gzip, '-' for stdin) on the globin frame.

    Writes an alignment with one column per frame position (A1..H26 and the corners and termini),
    carrying the frame labels so that `globcons columns` reads them back.
    """
    from globcons.align.layout import align_to_frame
    from globcons.align.significance import GLOBIN_EVALUE
    from globcons.errors import InputError
    from globcons.io.atomic import atomic_output, check_outputs
    from globcons.io.formats import alignment_format_for
    from globcons.io.frame_labels import encode_labels, label_sidecar_table, sidecar_path
    from globcons.io.records import read_sequences
    from globcons.io.tables import metadata_path, write_table
    from globcons.io.writers import format_alignment

    inputs = [sequences]
    fmt = out_format or ("stockholm" if output in (None, "-") else alignment_format_for(output))
    sidecar = sidecar_path(output) if fmt != "stockholm" and output not in (None, "-") else None
    check_outputs({"-o": output, "-o's frame labels": sidecar, "--report": report_path,
                   "--report's metadata": metadata_path(report_path)}, inputs)
    records = [(r.id, r.sequence) for r in read_sequences(sequences)]
    empty = [r[0] for r in records if not r[1]]
    if empty:
        raise InputError(f"sequence {empty[0]!r} is empty", source=str(sequences))
    with count_progress(reporter, "placing", "sequences", len(records)) as advance:
        result = align_to_frame(records, keep_inserts=keep_inserts, shuffles=shuffles, progress=advance)
    text = format_alignment(result.ids, list(result.rows), fmt,
                            column_annotations=encode_labels(result.labels) if fmt == "stockholm" else None)
    with atomic_output(output, inputs) as stream:
        stream.write(text)
    written = [] if output in (None, "-") else [output]
    if sidecar is not None:
        inserts = [not label for label in result.labels] if keep_inserts else None
        written += write_table(label_sidecar_table(result.labels, inserts), sidecar, "tsv", inputs=inputs)
    if report_path is not None:
        written += write_table(result.summary(), report_path, metadata={"shuffles": shuffles},
                               inputs=inputs)
    non_globins = [p.id for p in result.placed if not p.is_globin] if shuffles else []
    dropped = sum(result.unplaced)
    if dropped:
        fate = "kept as insert columns" if keep_inserts else "left out"
        residues = f"{dropped} residues between frame positions or at unaligned ends {fate}"
    else:
        residues = "no residue left out"
    positions = sum(1 for label in result.labels if label)
    reporter.info(f"placed {len(result.placed)} sequences on {positions} frame positions; {residues}")
    if non_globins:
        reporter.warn(f"{len(non_globins)} sequence(s) do not place significantly on the globin frame "
                      f"(E-value >= {GLOBIN_EVALUE:g}), first: {non_globins[0]!r}")
    if fmt != "stockholm" and output in (None, "-"):
        reporter.warn("frame labels are not carried by FASTA on standard output; use -o FILE or Stockholm")
    if written:
        reporter.info("wrote " + ", ".join(written))
