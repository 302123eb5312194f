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
