"""``globcons paint``: a column score written into the B-factors of a structure's chain.

Registered on the ``globcons`` command group when :mod:`globcons.cli` imports this module.
"""

from __future__ import annotations

import click

from globcons.cli import _common, _reader_options, _score_options, _scoring_options, cli
from globcons.analysis.columns import score_columns
from globcons.io.alignments import read_alignment
from globcons.structure.paint import SCORES, SENTINEL, paint_structure
from globcons.io.atomic import check_not_input

__all__ = ["paint"]


@cli.command()
@click.argument("structure", metavar="STRUCTURE", type=click.Path(dir_okay=False))
@click.option("--alignment", "alignment_path", required=True, type=click.Path(dir_okay=True, allow_dash=True),
              help="The family alignment whose column scores are painted ('-' reads standard input).")
@click.option("--chain", default=None, help="Chain to paint (default: the first chain with protein residues).")
@click.option("--score", type=click.Choice(list(SCORES)), default="entropy_norm", show_default=True,
              help="Column score written into the B-factors (conservation = 1 - entropy_norm).")
@click.option("--unmapped", "unmapped_value", type=float, default=SENTINEL, show_default=True,
              help="B-factor of every atom without a score: unmapped residues, other chains, waters, ligands.")
@click.option("-o", "--output", required=True,
              help="Painted structure: .pdb/.ent writes PDB, .cif/.mmcif writes mmCIF ('-': standard output, "
                   "in the input's format).")
@_reader_options
@_scoring_options
@_common
def paint(structure: str, alignment_path: str, chain: str | None, score: str, unmapped_value: float, output: str,
          fmt: str | None, keep_inserts: bool, reporter, **kw) -> None:
    """Write a column score of ALIGNMENT into the B-factors of a STRUCTURE (PDB or mmCIF).

    The chain's residues are placed on the alignment's columns by aligning its sequence to the
    family profile; every atom of a placed residue gets its column's score, every other atom the
    --unmapped value. Colour by B-factor in any viewer to see the conservation on the fold.
    """
    inputs = [structure, alignment_path]
    check_not_input(output, inputs)
    options = _score_options(kw)
    aligned = read_alignment(alignment_path, format=fmt, keep_inserts=keep_inserts)
    table = score_columns(aligned, options)
    result = paint_structure(structure, aligned, table, output, chain=chain, score=score,
                             unmapped=unmapped_value, inputs=[alignment_path])
    reporter.info(result.describe())
    if output != "-":
        reporter.info(f"wrote {output}")
