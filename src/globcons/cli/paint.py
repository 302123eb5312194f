"""``globcons paint``: a column score written into the B-factors of a structure's chain."""

from __future__ import annotations

from typing import Any

import click

from globcons.cli.options import column_limit, rate_options, reader_options, score_options, scoring_options, with_rates
from globcons.cli.reporting import Reporter, common
from globcons.structure.paint import SCORES, SENTINEL

__all__ = ["paint"]


@click.command()
@click.argument("structure", metavar="STRUCTURE", type=click.Path(dir_okay=False))
@click.option("--alignment", "alignment_path", required=True, type=click.Path(dir_okay=True, allow_dash=True),
              help="The family alignment whose column scores are painted ('-' reads standard input).")
@click.option("--chain", default=None, help="Chain to paint (default: the first chain with protein residues).")
@click.option("--score", type=click.Choice(tuple(SCORES)), default="conservation", show_default=True,
              help="Column score written into the B-factors (the profile's scores: higher = more conserved; "
                   "rates: the relative evolutionary rate, lower = more conserved).")
@click.option("--unmapped", "unmapped_value", type=float, default=SENTINEL, show_default=True,
              help="B-factor of every atom without a score: unmapped residues, other chains, waters, ligands.")
@click.option("-o", "--output", required=True,
              help="Painted structure: .pdb/.ent writes PDB, .cif/.mmcif writes mmCIF ('-': standard output, "
                   "in the input's format).")
@rate_options
@reader_options
@scoring_options
@common
def paint(structure: str, alignment_path: str, chain: str | None, score: str, unmapped_value: float, output: str,
          fmt: str | None, keep_inserts: bool, max_columns: int | None, reporter: Reporter, **kw: Any) -> None:
    """Write a column score of ALIGNMENT into the B-factors of a STRUCTURE (PDB or mmCIF).

    The chain's residues are placed on the alignment's columns by aligning its sequence to the
    family profile; every atom of a placed residue gets its column's score, every other atom the
    --unmapped value. Colour by B-factor in any viewer to see the conservation on the fold.
    """
    from globcons.analysis.columns import score_columns
    from globcons.io.alignments import read_alignment
    from globcons.io.atomic import check_not_input
    from globcons.structure.paint import paint_structure

    inputs = [structure, alignment_path, kw.get("tree_path")]
    check_not_input(output, inputs)
    if score != "rates" and (kw.get("tree_path") or kw.get("tree_output")):
        raise click.UsageError("--tree and --tree-output go with --score rates")
    options = score_options(kw)
    aligned = read_alignment(alignment_path, format=fmt, keep_inserts=keep_inserts,
                             max_columns=column_limit(max_columns))
    table = score_columns(aligned, options)
    if score == "rates":
        table = with_rates(table, aligned, kw, [*inputs, output], reporter.info)
    result = paint_structure(structure, aligned, table, output, chain=chain, score=score,
                             unmapped=unmapped_value, inputs=[alignment_path])
    reporter.info(result.describe())
    if output != "-":
        reporter.info(f"wrote {output}")
