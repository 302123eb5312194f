"""Options shared by several commands, and :func:`score_options`, which turns them into ``ScoreOptions``.

The choice lists and defaults are the library's own constants, imported from the light modules that
define them (numpy at most: no pandas, matplotlib, scipy). Options only one command has, and whose
constants live with figures or structures, are defined in that command's module.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import fields
from typing import TYPE_CHECKING, Any, TypeVar

import click

from globcons.align.significance import DEFAULT_SHUFFLES
from globcons.core.alphabet import RESIDUE_GROUPS
from globcons.core.classes import ClassRules
from globcons.core.neighbours import NEFF_EXACT_MAX_ROWS, NEFF_IDENTITY, NEFF_QUERY_ROWS
from globcons.core.weights import SCHEMES
from globcons.io.checks import MAX_COLUMNS
from globcons.io.formats import FORMATS, TABLE_FORMATS
from globcons.phylo.rates import EXACT_MAX_ROWS

if TYPE_CHECKING:
    import pandas as pd

    from globcons.analysis.options import ScoreOptions
    from globcons.core.alignment import Alignment
    from globcons.phylo.rates import RateOptions

__all__ = [
    "LOGO_MAX_COLUMNS",
    "alignment_argument",
    "column_limit",
    "paper_options",
    "frame_options",
    "grouping_options",
    "rate_options",
    "rate_settings",
    "report_rate_options",
    "with_rates",
    "reader_options",
    "score_options",
    "scoring_options",
    "shuffles_option",
    "structure_options",
    "target_options",
]

F = TypeVar("F", bound=Callable[..., Any])

RESIDUE_GROUP_NAMES = tuple(sorted(RESIDUE_GROUPS))
#: The class rules' defaults (read from the dataclass: building one would load the matrix).
_RULES = {field.name: field.default for field in fields(ClassRules)}
#: Most columns ``logo`` draws unless --max-columns says otherwise (about 2 ms a letter).
LOGO_MAX_COLUMNS = 2_000


def _apply(command: F, options: Sequence[Callable[[F], F]]) -> F:
    """Apply option decorators so that they list in ``--help`` in the order given."""
    for option in reversed(options):
        command = option(command)
    return command


alignment_argument = click.argument("alignment", metavar="ALIGNMENT", type=click.Path(dir_okay=True, allow_dash=True))
"""The ALIGNMENT argument (a path; '-' reads standard input)."""


def reader_options(command: F) -> F:
    """--format, --keep-inserts and --max-columns: how an alignment file is read."""
    return _apply(command, [
        click.option("--format", "fmt", type=click.Choice(FORMATS), default=None,
                     help="Input format (default: sniffed from the content; .a2m selects A2M)."),
        click.option("--keep-inserts", is_flag=True,
                     help="A2M: keep insert states (lower case, '.') as columns instead of dropping them."),
        click.option("--max-columns", type=click.IntRange(1, None), default=None, metavar="N",
                     help=f"Refuse alignments of more columns (default {MAX_COLUMNS:,}, none for `columns`, whose "
                          f"table is computed for all columns at once; a logo draws at most {LOGO_MAX_COLUMNS:,} "
                          "unless N is given)."),
    ])



def column_limit(max_columns: int | None) -> int:
    """The column limit of --max-columns (default :data:`~globcons.io.checks.MAX_COLUMNS`)."""
    return MAX_COLUMNS if max_columns is None else max_columns


def scoring_options(command: F) -> F:
    """Weighting, class thresholds and smoothing of the column scores (read back by :func:`score_options`)."""
    return _apply(command, [
        click.option("--weights", type=click.Choice(SCHEMES), default="henikoff", show_default=True,
                     help="Sequence weights for the residue frequencies."),
        click.option("--identity", type=float, default=NEFF_IDENTITY, show_default=True,
                     help="Rows at least this identical form one cluster: the effective sequences (and "
                          "--weights cluster) count clusters."),
        click.option("--neff-exact-rows", type=click.IntRange(0, None), default=NEFF_EXACT_MAX_ROWS,
                     show_default=True,
                     help="Up to this many rows the clusters compare every pair; above, a fixed sample."),
        click.option("--neff-sample", type=click.IntRange(2, None), default=NEFF_QUERY_ROWS, show_default=True,
                     help="Above --neff-exact-rows: sampled rows, each compared with every row, behind the "
                          "estimated effective number (its standard error is reported)."),
        click.option("--matrix", default=_RULES["matrix"], show_default=True,
                     help="Substitution matrix (any Biopython ships) judging conservative groups."),
        click.option("--residue-groups", type=click.Choice(RESIDUE_GROUP_NAMES), default=None,
                     help="Judge conservative groups by a fixed reduced alphabet instead of the matrix."),
        click.option("--max-gaps", type=float, default=_RULES["max_gaps"], show_default=True,
                     help="A column with a larger weighted gap fraction is gap-rich."),
        click.option("--invariant-min", type=float, default=_RULES["invariant_min"], show_default=True,
                     help="Share of the column one residue must hold (with --confidence) for invariant."),
        click.option("--group-min", type=float, default=_RULES["group_min"], show_default=True,
                     help="Share of the column one substitution group must hold (with --confidence) for "
                          "conservative."),
        click.option("--confidence", type=float, default=_RULES["confidence"], show_default=True,
                     help="Posterior probability a class needs: that the share reaches its threshold, given "
                          "the column's effective sequences."),
        click.option("--prior-weight", type=float, default=_RULES["prior_weight"], show_default=True,
                     help="Weight of the Dirichlet prior (BLOSUM62 background frequencies) behind that "
                          "probability."),
        click.option("--min-neff", type=float, default=_RULES["min_neff"], show_default=True,
                     help="Columns with fewer effective sequences are flagged low_data."),
        click.option("--window", type=int, default=0, show_default=True,
                     help="Smooth the JSD score over this many neighbours on each side (0: off)."),
    ])


def frame_options(command: F) -> F:
    """How columns are tied to the globin frame and which sites they carry (shared by several commands)."""
    return _apply(command, [
        click.option("--reference", default=None,
                     help="Add ref_position and ref_residue (the numbering of this row) and tie the frame through it."),
        click.option("--sites", "sites_path", type=click.Path(dir_okay=False), default=None,
                     help="A site table of your own (tab-separated: label or column, role[, kind, chains, note])."),
        click.option("--replace-sites", is_flag=True, help="Use only the sites of --sites, not the built-in ones."),
        click.option("--no-frame", is_flag=True, help="Do not tie the columns to the globin frame (other families)."),
    ])


def score_options(kw: Mapping[str, Any]) -> ScoreOptions:
    """The ``ScoreOptions`` of a command's :func:`scoring_options` (and, if it has them, :func:`frame_options`).

    Parameters
    ----------
    kw
        The command's keyword arguments; the frame keys (``reference``, ``no_frame``, ``sites_path``,
        ``replace_sites``) are optional.

    Returns
    -------
    ScoreOptions
        What :func:`globcons.analysis.columns.score_columns` takes.
    """
    from globcons.analysis.options import ScoreOptions

    rules = ClassRules(max_gaps=kw["max_gaps"], invariant_min=kw["invariant_min"], group_min=kw["group_min"],
                       confidence=kw["confidence"], prior_weight=kw["prior_weight"], matrix=kw["matrix"],
                       residue_groups=kw["residue_groups"], min_neff=kw["min_neff"])
    return ScoreOptions(weights=kw["weights"], identity=kw["identity"], neff_exact_rows=kw["neff_exact_rows"],
                        neff_sample=kw["neff_sample"],
                        window=kw["window"], rules=rules,
                        reference=kw.get("reference"), frame=not kw.get("no_frame", False),
                        sites_path=kw.get("sites_path"), replace_sites=kw.get("replace_sites", False))


def shuffles_option(command: F) -> F:
    """--shuffles: shuffled copies per sequence for the placement E-value (align and scan)."""
    return click.option("--shuffles", type=click.IntRange(0, 1000), default=DEFAULT_SHUFFLES, show_default=True,
                        help="Shuffled copies per sequence for the E-value (0: skip it).")(command)


def target_options(command: F) -> F:
    """--family, --target, --numbering, -o and --table of the commands that judge one target (check, plan)."""
    return _apply(command, [
        click.option("--family", "family_path", type=click.Path(dir_okay=True), default=None,
                     help="Judge against this alignment's columns (default: the built-in frame)."),
        click.option("--target", "target_id", default=None,
                     help="The target's id: a record of TARGET, or a row of --family when TARGET is omitted."),
        click.option("--numbering", type=click.Choice(("given", "mature")), default="given", show_default=True,
                     help="given: count the target as given; mature: traditional numbering without the "
                          "initiator Met (p. names always count from the Met)."),
        click.option("-o", "--output", default=None, help="Output table (default: standard output)."),
        click.option("--table", "table_format", type=click.Choice(TABLE_FORMATS), default=None,
                     help="Table format (default: from the extension, else tsv)."),
        click.option("--allow-non-globin", is_flag=True,
                     help="Judge a target that does not place significantly on the globin frame (refused "
                          "otherwise); every row then says 'not a globin'."),
    ])


def structure_options(command: F) -> F:
    """--structure and --chain: a PDB or mmCIF file whose coordinates add burial, heme contacts and interfaces."""
    return _apply(command, [
        click.option("--structure", "structure_path", type=click.Path(dir_okay=True), default=None,
                     help="PDB or mmCIF file (gzip too): adds accessibility, burial, heme contacts and chain "
                          "interfaces from its first model."),
        click.option("--chain", "chain_id", default=None,
                     help="The target's chain in --structure (the others are its partners)."),
    ])


def grouping_options(command: F) -> F:
    """--groups, --group-by, --min-group-neff, --permutations, --seed, --conserved-min (contrast and report)."""
    return _apply(command, [
        click.option("--groups", "groups_file", type=click.Path(dir_okay=False), default=None,
                     help="Tab-separated table: id, group (a header line is optional)."),
        click.option("--group-by", default=None, metavar="REGEX|nearest",
                     help="Group by the text a regular expression with one capture group finds in each id, or "
                          "'nearest': myoglobin-like, alpha-like, beta-like or other, from placement."),
        click.option("--min-group-neff", type=float, default=3.0, show_default=True,
                     help="Leave out groups whose effective size (summed weight) is smaller."),
        click.option("--permutations", type=click.IntRange(0, 100000), default=0, show_default=True,
                     help="Add a permutation p-value from K shuffles of the group labels (0: off)."),
        click.option("--seed", type=click.IntRange(0, 2**63 - 1), default=0, show_default=True,
                     help="Seed of the permutations (a whole number from 0)."),
        click.option("--conserved-min", type=float, default=0.8, show_default=True,
                     help="A group is conserved when its most common residue makes up at least this share of its "
                          "residues (each sequence counted with its weight, gaps not counted)."),
    ])


def _comma_list(ctx: click.Context, param: click.Parameter, value: str | None) -> list[str]:
    """A comma-separated option as a list of names, blanks dropped."""
    return [item.strip() for item in (value or "").split(",") if item.strip()]


def paper_options(command: F) -> F:
    """--only-classes, --only-labels and --tex-columns: the column table as a paper shows it (columns, report)."""
    return _apply(command, [
        click.option("--only-classes", default=None, callback=_comma_list, metavar="LIST",
                     help="Keep only the columns of these classes in the table (comma-separated, e.g. "
                          "invariant,conservative)."),
        click.option("--only-labels", default=None, callback=_comma_list, metavar="LIST",
                     help="Keep only the columns at these frame labels (comma-separated, e.g. E7,E11,F8)."),
        click.option("--tex-columns", default=None, callback=_comma_list, metavar="LIST",
                     help="Columns of the tex table (comma-separated; 'all' for every one). Default: column, "
                          "frame_label, class, support, consensus, conservation, gap_fraction, n_eff, sites."),
    ])


_TREE_OPTION = click.option(
    "--tree", "tree_path", type=click.Path(dir_okay=False, allow_dash=True), default=None,
    help="Rates on this Newick tree (leaf names = the alignment's ids; topology kept, branch lengths refitted) "
         "instead of a neighbour-joining tree from the alignment.")
_MAX_ROWS_OPTION = click.option(
    "--rates-max-rows", type=click.IntRange(3, None), default=EXACT_MAX_ROWS, show_default=True,
    help="Rates use every row up to this many; above, a representative subset of this size (weighted by the "
         "clusters at --identity).")


def rate_options(command: F) -> F:
    """--tree, --rates-max-rows and --tree-output: how the per-column rates are estimated and where the tree goes."""
    return _apply(command, [
        _TREE_OPTION,
        _MAX_ROWS_OPTION,
        click.option("--tree-output", default=None, metavar="FILE",
                     help="Write the tree the rates used (Newick) here (default: beside the output, "
                          "<output>.tree.nwk; none for standard output)."),
    ])


def report_rate_options(command: F) -> F:
    """--rates, --tree and --rates-max-rows of the report (its tree goes into the report's folder)."""
    return _apply(command, [
        click.option("--rates", is_flag=True,
                     help="Add the per-column evolutionary rates: rate columns, a rate profile, tree.nwk."),
        _TREE_OPTION,
        _MAX_ROWS_OPTION,
    ])


def rate_settings(kw: Mapping[str, Any]) -> RateOptions:
    """The ``RateOptions`` of a command's :func:`rate_options` (and its --identity)."""
    from globcons.phylo.rates import RateOptions

    return RateOptions(max_rows=kw["rates_max_rows"], identity=kw["identity"])


def with_rates(table: pd.DataFrame, aligned: Alignment, kw: Mapping[str, Any], inputs: Sequence = (),
               say: Callable[[str], None] | None = None) -> pd.DataFrame:
    """The table with the rate columns (``--score rates`` of profile and paint); the tree to --tree-output if given.

    ``say`` (a reporter's ``info``) is told how the rates were made, a subset included.
    """
    from globcons.analysis.rate_columns import add_rate_columns
    from globcons.io.atomic import check_not_input
    from globcons.phylo.newick import write_newick

    if kw.get("tree_output") is not None:
        check_not_input(kw["tree_output"], inputs)
    table, result = add_rate_columns(table, aligned, rate_settings(kw), kw.get("tree_path"))
    if kw.get("tree_output") is not None:
        write_newick(result.fit.tree, kw["tree_output"], inputs)
    if say is not None:
        say(result.describe())
    return table
