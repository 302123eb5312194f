"""Tables, figures and text for papers: editable SVG text, byte-identical reruns, one count for the profile
legend and the summary, one y-scale for the report's helix logos, q-values said in the methods text, and
references in a stable order. Everything runs through the command line on the shipped example files
(data_examples/, synthetic), as a paper author would run it.
"""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pytest

from globcons.cli import main

EXAMPLES = Path(__file__).resolve().parents[1] / "data_examples"
#: The line of report.html that carries the date (the one documented difference between reruns).
_DATE_LINE = re.compile(r'<p class="muted">globcons [^<]* &middot; \d{4}-\d{2}-\d{2}</p>')


@pytest.fixture(scope="module")
def examples(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("paper")
    for name in ("family.fasta", "groups.tsv"):
        shutil.copy(EXAMPLES / name, folder / name)
    return folder


@pytest.fixture(scope="module")
def two_reports(examples) -> tuple[Path, Path]:
    """globcons report family.fasta -o rN --groups groups.tsv --permutations 99 --seed 1, run twice."""
    folders = []
    for name in ("r1", "r2"):
        out = examples / name
        status = main(["report", str(examples / "family.fasta"), "-o", str(out), "--groups",
                       str(examples / "groups.tsv"), "--permutations", "99", "--seed", "1", "--quiet"])
        assert status == 0
        folders.append(out)
    return folders[0], folders[1]


def test_report_reruns_are_byte_identical_but_for_the_date(two_reports):
    first, second = two_reports
    names = sorted(p.name for p in first.iterdir())
    assert names == sorted(p.name for p in second.iterdir())
    assert {"profile.svg", "logo_F.svg", "contrast.svg", "columns.tex", "methods.md"} <= set(names)
    for name in names:
        one, two = (first / name).read_bytes(), (second / name).read_bytes()
        if name == "report.html":
            one, two = (_DATE_LINE.sub("", x.decode()) for x in (one, two))
            assert _DATE_LINE.search((first / name).read_text())  # the documented date is there
        assert one == two, name


def test_svg_ids_are_the_same_on_every_run(two_reports):
    # matplotlib hashes clip-path ids with rcParams["svg.hashsalt"] (unset: a fresh uuid4 per figure) over the
    # clip rectangle at full float precision; save_figure fixes the salt and renames the ids (stable_svg_ids).
    svg = (two_reports[0] / "profile.svg").read_text()
    ids = re.findall(r'id="(p[0-9a-f]{10})"', svg)
    assert ids and ids == re.findall(r'id="(p[0-9a-f]{10})"', (two_reports[1] / "profile.svg").read_text())
    assert "<dc:date>" not in svg  # no creation date in the metadata


def test_svg_text_stays_text(examples):
    # globcons profile family.fasta -o p.svg: with svg.fonttype 'none' the words are <text> elements, not
    # glyph outlines (which matplotlib would define as paths with ids like DejaVuSans-61).
    out = examples / "p.svg"
    assert main(["profile", str(examples / "family.fasta"), "-o", str(out), "--quiet"]) == 0
    svg = out.read_text()
    texts = re.findall(r"<text[^>]*>([^<]*)</text>", svg)
    assert "frame position (columns with a frame label)" in texts
    assert "DejaVuSans-" not in svg and "<use xlink:href=\"#DejaVu" not in svg


def test_profile_legend_counts_equal_the_summary(examples, capsys):
    # globcons columns family.fasta: "... 156 columns: 30 invariant, 48 conservative, 72 variable, 6 gap-rich"
    # (three of the gap-rich columns are the CD insertion, which has no frame label and is not drawn).
    assert main(["columns", str(examples / "family.fasta"), "-o", str(examples / "c.tsv")]) == 0
    summary = capsys.readouterr().err
    counts = {name: int(n) for n, name in re.findall(r"(\d+) (invariant|conservative|variable|gap-rich)",
                                                           summary)}
    assert counts == {"invariant": 30, "conservative": 48, "variable": 72, "gap-rich": 6}
    out = examples / "legend.svg"
    assert main(["profile", str(examples / "family.fasta"), "-o", str(out), "--quiet"]) == 0
    texts = re.findall(r"<text[^>]*>([^<]*)</text>", out.read_text())
    for name, n in counts.items():
        assert f"{name} ({n})" in texts
    assert "3 columns without a frame label (insertions) not drawn" in texts


def test_helix_logos_share_one_y_scale(two_reports):
    from globcons.plots.logo import LOGO_GEOMETRY

    folder = two_reports[0]
    sizes = {}
    for svg in sorted(folder.glob("logo_*.svg")):
        text = svg.read_text()
        width, height = (float(v) for v in re.search(r'width="([\d.]+)pt" height="([\d.]+)pt"', text).groups())
        sizes[svg.stem] = (width, height)
        # the plot area (its background patch) is the same height in every logo: LOGO_GEOMETRY's 2 inches
        # = 144 pt, whatever the number of columns; the y axis runs 0..log2(20) bits in all of them
    assert len(sizes) == 8
    assert len({height for _, height in sizes.values()}) == 1  # one figure height
    assert len({width for width, _ in sizes.values()}) > 1  # ... for helices of different lengths
    html = (folder / "report.html").read_text()
    shown = re.findall(r'alt="logo of helix (\w)" src="data:[^"]*" width="(\d+)" height="(\d+)"', html)
    assert len(shown) == 8 and len({h for _, _, h in shown}) == 1
    for helix, width, _ in shown:  # shown at the size drawn (CSS 96 px per inch), never scaled by the page
        assert int(width) == round(sizes[f"logo_{helix}"][0] / 72 * 96)
    assert ".logos img.figure { max-width: none; }" in html
    assert LOGO_GEOMETRY["axes_height"] == 2.0


def test_logo_axes_have_one_height_in_inches_for_any_width():
    from globcons import read_alignment
    from globcons.plots.logo import draw_logo

    alignment = read_alignment(EXAMPLES / "family.fasta")
    heights, limits = set(), set()
    for columns in ([1, 2, 3], list(range(1, 27)), list(range(40, 100))):
        fig = draw_logo(alignment, columns)
        ax = fig.axes[0]
        heights.add(round(ax.get_position().height * fig.get_figheight(), 9))
        limits.add(ax.get_ylim())
    assert heights == {2.0} and len(limits) == 1


def test_methods_text_states_q_values_and_shares_in_plain_words(two_reports):
    methods = (two_reports[0] / "methods.md").read_text()
    assert "corrected by the Benjamini-Hochberg procedure (Benjamini and Hochberg 1995)" in methods
    assert "q-value is the false discovery rate" in methods
    assert ("made up at least 80% of the group's residues there, each sequence counted with its weight and gaps "
            "not counted (its share of the residue weight)") in methods
    assert "A residue's share of a column is the part of the column's residues it makes up" in methods
    assert "Benjamini Y, Hochberg Y (1995) Controlling the false discovery rate" in methods
    contrast = (two_reports[0] / "contrast.tsv").read_text().splitlines()[0].split("\t")
    assert contrast[contrast.index("pvalue") + 1] == "qvalue"
    assert contrast[contrast.index("pvalue_permutation") + 1] == "qvalue_permutation"


def test_references_are_in_alphabetical_order(two_reports, examples):
    def references(folder: Path) -> list[str]:
        text = (folder / "methods.md").read_text().split("### References", 1)[1]
        return [line[2:] for line in text.splitlines() if line.startswith("- ")]

    cited = references(two_reports[0])
    assert cited == sorted(cited, key=str.casefold) and len(cited) == len(set(cited))
    assert cited[0].startswith("Benjamini Y") and cited[-1].startswith("Sokal RR")
    # the HTML lists them in the same order
    html = (two_reports[0] / "report.html").read_text()
    listed = re.findall(r"<li>([^<]*)</li>", html.split("<h3>References</h3>", 1)[1])
    assert [item.replace("&amp;", "&") for item in listed] == cited
    # without a contrast, the same order rule: the contrast's references are simply absent
    out = examples / "plain-report"
    assert main(["report", str(examples / "family.fasta"), "-o", str(out), "--no-logos", "--quiet"]) == 0
    plain = references(out)
    assert plain == [c for c in cited if c in plain] and not any(c.startswith("Benjamini") for c in plain)


def test_stable_svg_ids_rename_ids_that_differ_only_by_hash():
    from globcons.plots.output import stable_svg_ids

    def svg(first: str, second: str) -> bytes:
        return (f'<svg><defs><clipPath id="{first}"><rect x="1"/></clipPath><pattern id="{second}"/></defs>'
                f'<path clip-path="url(#{first})" style="fill: url(#{second})"/></svg>').encode()

    one, two = stable_svg_ids(svg("p00cef7b51e", "h0123456789")), stable_svg_ids(svg("p1bbdfe675c", "hfedcba9876"))
    assert one == two
    assert re.findall(rb'id="([a-z][0-9a-f]{6})(\d{4})"', one) == [(one[one.index(b'id="p') + 4:][:7], b"0000"),
                                                                 (one[one.index(b'id="h') + 4:][:7], b"0001")]
    assert one.count(one[one.index(b'id="p') + 4:][:11]) == 2  # definition and reference renamed together


# --------------------------------------------------------------------------------------------------
# Tables for papers: rows kept by class or label, and a tex table that fits a page

#: Text width of LaTeX's article class at 10pt (common practice, from memory: 345pt); the estimate below
#: takes 4.6pt per character of \small (9pt Computer Modern, about half an em) and 2 x 3pt between columns.
ARTICLE_TEXTWIDTH_PT = 345.0
SMALL_CHAR_PT = 4.6


def tex_width_pt(text: str) -> float:
    """Estimated width of a tex table's widest content: every cell column's longest cell, wrapped columns
    at their stated width."""
    lines = [line for line in text.splitlines() if not line.startswith("%")]
    spec = next(re.match(r"\\begin\{longtable\}\{(.*)\}$", line).group(1) for line in lines
                if line.startswith(r"\begin{longtable}"))
    kinds = re.findall(r">\{[^}]*\}p\{[\d.]+cm\}|[lrc]", spec)
    rows = [line[:-3].split(" & ") for line in lines if line.endswith(r" \\") and " & " in line]
    assert rows and all(len(row) == len(kinds) for row in rows)
    width = 0.0
    for index, kind in enumerate(kinds):
        if kind.startswith(">"):
            width += float(re.search(r"p\{([\d.]+)cm\}", kind).group(1)) * 28.45
        else:
            width += max(len(row[index].replace("\\", "")) for row in rows) * SMALL_CHAR_PT
        width += 6.0
    return width


def test_tex_table_fits_a_page(examples, capsys):
    # globcons columns family.fasta -o columns.tex: the chosen columns, small type, sites wrapped
    out = examples / "columns.tex"
    assert main(["columns", str(examples / "family.fasta"), "-o", str(out), "--quiet"]) == 0
    text = out.read_text()
    assert r"\begingroup\small\setlength{\tabcolsep}{3pt}" in text and r"\endgroup" in text
    header = next(line for line in text.splitlines() if line.startswith("col. &"))
    assert header == r"col. & label & class & supp. & res. & cons. & gaps & n\_eff & sites \\"
    assert tex_width_pt(text) <= ARTICLE_TEXTWIDTH_PT
    assert "supp.: posterior support of the class" in text  # the caption says what the short headings are
    assert re.search(r"^96 & F8 & invariant & 1\.00 & H & 1\.00 & 0\.00 & 45\.2 & heme-ligand \\\\$", text, re.M)
    # every column would not fit: the estimate tells the two apart
    wide = examples / "all.tex"
    assert main(["columns", str(examples / "family.fasta"), "-o", str(wide), "--tex-columns", "all", "-q"]) == 0
    assert tex_width_pt(wide.read_text()) > 2 * ARTICLE_TEXTWIDTH_PT
    # chosen columns, and an unknown one: exit 2 naming the valid ones
    assert main(["columns", str(examples / "family.fasta"), "--table", "tex", "--tex-columns",
                 "frame_label,class,jsd", "-q"]) == 0
    assert r"label & class & jsd \\" in capsys.readouterr().out
    assert main(["columns", str(examples / "family.fasta"), "--table", "tex", "--tex-columns", "klass", "-q"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("globcons: error: --tex-columns: unknown column 'klass'; the table's columns are column, "
                          "frame_label, sites, class,") and err.count("\n") == 1


def test_only_classes_and_labels_keep_the_chosen_rows(examples, capsys):
    # globcons columns family.fasta --only-classes invariant --only-labels E7,F8,A3 -o kept.tsv
    out = examples / "kept.tsv"
    assert main(["columns", str(examples / "family.fasta"), "--only-classes", "invariant", "--only-labels",
                 "E7,F8,A3", "-o", str(out)]) == 0
    err = capsys.readouterr().err
    rows = [line.split("\t") for line in out.read_text().splitlines()]
    assert [(r[1], r[3]) for r in rows[1:]] == [("E7", "invariant"), ("F8", "invariant")]  # A3 is variable
    assert "156 columns: 30 invariant, 48 conservative, 72 variable, 6 gap-rich" in err  # the summary: all
    assert "kept 2 of 156 columns in the table (classes invariant; labels E7, F8, A3)" in err
    meta = (examples / "kept.tsv.meta.json").read_text()
    assert '"only_labels": [\n   "E7",' in meta and '"rows": 2' in meta
    # classes alone
    assert main(["columns", str(examples / "family.fasta"), "--only-classes", "gap-rich,invariant", "-q"]) == 0
    classes = [line.split("\t")[3] for line in capsys.readouterr().out.splitlines()[1:]]
    assert len(classes) == 36 and set(classes) == {"invariant", "gap-rich"}


@pytest.mark.parametrize(("option", "value", "message"), [
    ("--only-classes", "invariant,invarient",
     "globcons: error: --only-classes: unknown class 'invarient'; the classes are invariant, conservative, "
     "variable, gap-rich"),
    ("--only-labels", "f8",
     "globcons: error: --only-labels: 'f8' is not a label of this table (labels are case-sensitive: F8); the "
     "table's labels are NA2-NA3, A1-A16, AB1, B1-B16, C1-C7, CD1-CD8, D1-D7, E1-E20, EF1-EF8, F1-F9, FG1-FG5, "
     "G1-G19, GH1-GH5, H1-H26, HC1-HC4"),
    ("--only-labels", "ZZ9", "globcons: error: --only-labels: 'ZZ9' is not a frame label; the table's labels are "
                             "NA2-NA3, A1-A16,"),
    ("--only-labels", "F8,A20", "globcons: error: --only-labels: 'A20' is not a label of this table; the table's "
                                "labels are NA2-NA3, A1-A16,"),
])
def test_unknown_class_or_label_is_exit_2_listing_the_valid_ones(examples, capsys, option, value, message):
    # globcons columns family.fasta OPTION VALUE -q
    assert main(["columns", str(examples / "family.fasta"), option, value, "-q"]) == 2
    err = capsys.readouterr().err
    assert err.startswith(message) and err.count("\n") == 1


def test_report_keeps_the_chosen_rows_in_its_tables(examples):
    # globcons report family.fasta -o kept-report --only-classes invariant --no-logos
    out = examples / "kept-report"
    assert main(["report", str(examples / "family.fasta"), "-o", str(out), "--only-classes", "invariant",
                 "--no-logos", "-q"]) == 0
    tsv = out.joinpath("columns.tsv").read_text().splitlines()
    assert len(tsv) == 31 and all(line.split("\t")[3] == "invariant" for line in tsv[1:])
    tex = out.joinpath("columns.tex").read_text()
    assert sum(1 for line in tex.splitlines() if " & invariant & " in line) == 30 and " & variable & " not in tex
    html = out.joinpath("report.html").read_text()
    assert "It shows 30 of the 156 columns: classes invariant." in html
    table = html.split('id="column-table"', 1)[1].split("</table>", 1)[0]
    assert table.count('<td class="class-invariant">') == 30 and table.count("<tr>") == 31  # heading + 30 rows
    assert "<b>72</b>variable" in html  # the summary still counts every column
    # bad names fail before anything is written into the folder
    fresh = examples / "never-written"
    for option, value in (("--only-labels", "Q1"), ("--tex-columns", "klass"), ("--only-classes", "open")):
        assert main(["report", str(examples / "family.fasta"), "-o", str(fresh), option, value, "-q"]) == 2
        assert not fresh.exists()
