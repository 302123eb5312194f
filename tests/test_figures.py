"""Tests of the palette, the figure data (logo heights, ranges, departure cells) and the figure files.

Hand-worked logo heights (s = 20 letters, log2 20 = 4.321928, e(n) = 19 / (2 ln 2 n)):

    8 x H           H = 0, e(8) = 19 / 11.090355 = 1.713200  -> R = 4.321928 - 1.713200 = 2.608728 (all H)
    4 x H           e(4) = 3.426401                          -> R = 0.895527
    4 x A, 4 x S    H = 1                                    -> R = 4.321928 - 1 - 1.713200 = 1.608728,
                                                                A = S = 0.804364 (without e: 1.660964)
    2 x A, 2 x S    H = 1, e(4) = 3.426401                   -> R = -0.104473, clipped to 0

Images are never compared pixel by pixel: a file must exist, open, have the size the figure asked for,
and the data drawn must be the data computed.
"""

from __future__ import annotations

import math
import re
import shutil

import matplotlib.image as mpimg
import numpy as np
import pandas as pd
import pytest
from matplotlib.colors import to_hex
from matplotlib.patches import PathPatch

from globcons import read_alignment, score_columns
from globcons.cli import main
from globcons.core.alphabet import CODE_LETTERS, STANDARD
from globcons.core.classes import CLASSES
from globcons.core.scores import small_sample_correction
from globcons.demo import demo_alignment_path
from globcons.errors import OptionError
from globcons.plots.conservation import draw_profile
from globcons.plots.heatmap import DEVIATION_ORDER, departure_matrix, draw_departure_heatmap
from globcons.plots.logo import column_range, draw_logo, information_matrix, logo_matrix
from globcons.plots.output import FIGURE_DPI, figure_format, save_figure
from globcons.plots.palette import (
    ABSENT_COLOUR,
    CLASS_COLOURS,
    DEVIATION_COLOURS,
    GROUP_COLOURS,
    OKABE_ITO,
    RESIDUE_COLOURS,
    TINTS,
    residue_colour,
    tint,
)
from helpers import alignment_of

H = STANDARD.index("H")
A = STANDARD.index("A")
S = STANDARD.index("S")
GAP = 23


def counts_row(**letters: float) -> np.ndarray:
    row = np.zeros(24)
    for letter, value in letters.items():
        row[GAP if letter == "gap" else STANDARD.index(letter)] = value
    return row


@pytest.fixture(scope="module")
def demo():
    alignment = read_alignment(demo_alignment_path())
    return alignment, score_columns(alignment)


def png_shape(path) -> tuple[int, int]:
    image = mpimg.imread(str(path))
    return image.shape[0], image.shape[1]


def expected_pixels(fig) -> tuple[int, int]:
    width, height = fig.get_size_inches()
    return round(height * FIGURE_DPI), round(width * FIGURE_DPI)


# --------------------------------------------------------------------------------------------------
# palette


def test_palette_covers_every_letter_with_okabe_ito_colours_or_listed_tints():
    assert set(RESIDUE_COLOURS) == set(CODE_LETTERS)
    allowed = set(OKABE_ITO.values()) | {tint(OKABE_ITO[base], amount) for base, amount in TINTS.values()}
    used = set(RESIDUE_COLOURS.values()) | set(CLASS_COLOURS.values()) | set(DEVIATION_COLOURS.values())
    assert used <= allowed
    assert ABSENT_COLOUR == "#FFFFFF"


def test_tint_by_hand():
    assert tint("#000000", 0.6) == "#999999"  # 0 + 0.6 * 255 = 153 = 0x99
    assert tint("#000000", 0.8) == "#CCCCCC"  # 204 = 0xCC
    # sky blue 56 B4 E9 = 86 180 233 -> 86 + 0.8 * 169 = 221.2, 180 + 60 = 240, 233 + 17.6 = 250.6
    assert tint("#56B4E9", 0.8) == "#DDF0FB"
    assert tint("#E69F00", 0.0) == "#E69F00"


def test_residues_follow_their_groups():
    assert residue_colour("H") == residue_colour("W") == OKABE_ITO["reddish purple"]
    assert residue_colour("K") == residue_colour("R") == OKABE_ITO["blue"]
    assert residue_colour("D") == residue_colour("E") == OKABE_ITO["vermillion"]
    assert residue_colour("G") == residue_colour("P") == OKABE_ITO["black"]
    assert residue_colour("U") == residue_colour("C") and residue_colour("O") == residue_colour("K")
    assert residue_colour("h") == residue_colour("H")
    assert residue_colour(".") == residue_colour("-") == "#CCCCCC"
    assert residue_colour("B") == residue_colour("X") == "#999999"
    group_colours = [colour for _, colour in GROUP_COLOURS.values()]
    assert len(set(group_colours)) == 6
    assert sorted("".join(letters for letters, _ in GROUP_COLOURS.values())) == sorted(STANDARD)
    with pytest.raises(KeyError):
        residue_colour("1")


def test_class_and_deviation_colours_name_every_category():
    assert set(CLASS_COLOURS) == set(CLASSES)
    assert set(DEVIATION_COLOURS) == set(DEVIATION_ORDER) == {"none", "leaves-group", "breaks-invariant", "insertion"}
    assert len(set(DEVIATION_COLOURS.values())) == 4 and len(set(CLASS_COLOURS.values())) == 4


# --------------------------------------------------------------------------------------------------
# information


def test_small_sample_correction_by_hand():
    assert small_sample_correction(4) == pytest.approx(19 / (2 * math.log(2) * 4))
    assert float(small_sample_correction(8)) == pytest.approx(1.713200, abs=1e-6)
    assert math.isinf(float(small_sample_correction(0)))


def test_information_of_a_single_residue_column_with_the_correction():
    counts = np.array([counts_row(H=4), counts_row(H=8), counts_row(H=4, gap=4)])
    matrix = information_matrix(counts)
    assert list(matrix.columns) == list(STANDARD)
    assert list(matrix.index) == [1, 2, 3]
    assert matrix.loc[1, "H"] == pytest.approx(math.log2(20) - 19 / (2 * math.log(2) * 4))
    assert matrix.loc[1, "H"] == pytest.approx(0.895527, abs=1e-6)
    assert matrix.loc[2, "H"] == pytest.approx(2.608728, abs=1e-6)
    assert matrix.loc[3, "H"] == pytest.approx(matrix.loc[1, "H"])  # gaps are no residues: same n, same p
    assert matrix.drop(columns="H").to_numpy().sum() == 0.0
    assert information_matrix(counts, small_sample=False).loc[1, "H"] == pytest.approx(math.log2(20))


def test_information_of_a_mixed_column_and_clipping():
    counts = np.array([counts_row(A=4, S=4), counts_row(A=2, S=2), counts_row(gap=5), np.zeros(24)])
    matrix = information_matrix(counts)
    assert matrix.loc[1, "A"] == pytest.approx(0.804364, abs=1e-6)
    assert matrix.loc[1, "S"] == pytest.approx(0.804364, abs=1e-6)
    assert matrix.loc[1].sum() == pytest.approx(1.608728, abs=1e-6)
    assert matrix.loc[2].sum() == 0.0  # 4.321928 - 1 - 3.426401 < 0: clipped
    assert matrix.loc[3].sum() == 0.0 and matrix.loc[4].sum() == 0.0  # no residue
    plain = information_matrix(counts, small_sample=False)
    assert plain.loc[1, "A"] == pytest.approx(1.660964, abs=1e-6)
    assert plain.loc[2, "S"] == pytest.approx(1.660964, abs=1e-6)


def test_information_uses_the_weighted_count():
    # Weights 0.5 on 8 His rows: n = 4, so the correction is e(4), not e(8).
    matrix = information_matrix(np.array([counts_row(H=8 * 0.5)]))
    assert matrix.loc[1, "H"] == pytest.approx(0.895527, abs=1e-6)


# --------------------------------------------------------------------------------------------------
# ranges


@pytest.fixture
def small_table():
    return pd.DataFrame({"column": [1, 2, 3, 4, 5, 6], "frame_label": ["F7", "F8", "", "F9", "FG1", "FG2"]})


def test_column_range_by_label_and_number(small_table):
    assert column_range(small_table, "F8-FG1") == [2, 3, 4, 5]  # the insert column 3 lies inside
    assert column_range(small_table, "F9") == [4]
    assert column_range(small_table, "2-4") == [2, 3, 4]
    assert column_range(small_table, " 6 ") == [6]
    assert column_range(small_table, "1-6", by="column") == [1, 2, 3, 4, 5, 6]


@pytest.mark.parametrize("spec, by, message", [
    ("FG2-F8", "label", "comes before"),
    ("F8-Q1", "label", "not a frame-label range"),
    ("G1-G2", "label", "no column has the frame label G1"),
    ("F8-F9-FG1", "auto", "not a frame-label range"),
    ("0-3", "column", "outside the alignment"),
    ("5-99", "column", "column 99 is outside the alignment (columns 1-6)"),
    ("4-2", "column", "reversed"),
    ("F8", "column", "not a column range"),
])
def test_column_range_refuses_bad_specs(small_table, spec, by, message):
    with pytest.raises(OptionError, match=re.escape(message)):
        column_range(small_table, spec, by=by)


# --------------------------------------------------------------------------------------------------
# logo


TINY = ["HAG", "HAG", "HAG", "HAK", "HS-", "HS-", "HS-", "HS-"]


def test_logo_matrix_of_a_tiny_alignment():
    # column 1: 8 His; column 2: 4 Ala 4 Ser; column 3: 4 gaps in 8 (0.5, not above 0.5), 3 Gly 1 Lys.
    data = logo_matrix(alignment_of(*TINY), [1, 2, 3], weights="none", max_gaps=0.4)
    assert list(data.matrix.index) == [1, 2, 3]
    assert data.matrix.loc[1, "H"] == pytest.approx(2.608728, abs=1e-6)
    assert data.matrix.loc[2, "A"] == pytest.approx(0.804364, abs=1e-6)
    assert list(data.gap_rich) == [False, False, True]  # 0.5 > 0.4
    assert data.matrix.loc[3].sum() == 0.0
    assert list(data.n) == [8, 8, 4]


def test_logo_draws_exactly_the_nonzero_letters_in_palette_colours(tmp_path):
    fig = draw_logo(alignment_of(*TINY), [1, 2, 3], weights="none", max_gaps=0.4, labels=["F7", "F8", ""])
    ax = fig.axes[0]
    glyphs = [p for p in ax.patches + ax.artists
              if isinstance(p, PathPatch) and (p.get_gid() or "").startswith("glyph")]
    drawn = sorted(p.get_gid() for p in glyphs)
    assert drawn == ["glyph-0-H", "glyph-1-A", "glyph-1-S"]
    for patch in glyphs:
        letter = patch.get_gid()[-1]
        assert to_hex(patch.get_facecolor()).upper() == RESIDUE_COLOURS[letter]
    by_gid = {p.get_gid(): p.get_path().get_extents() for p in glyphs}
    # Each letter fills its height less 2 % blank above and below; equal heights stack in letter order.
    assert by_gid["glyph-0-H"].y1 == pytest.approx(2.608728 * 0.98, abs=1e-4)
    assert by_gid["glyph-1-A"].y0 == pytest.approx(0.804364 * 0.02, abs=1e-4)
    assert by_gid["glyph-1-S"].y0 == pytest.approx(0.804364 * 1.02, abs=1e-4)
    assert [t.get_text() for t in ax.get_xticklabels()] == ["F7", "F8", "3"]
    assert ax.get_ylabel() == "information (bits)"
    assert any(p.get_hatch() for p in ax.patches)  # the gap-rich band


def test_logo_files_png_svg_pdf(tmp_path, demo):
    alignment, table = demo
    columns = column_range(table, "F1-FG5")
    labels = list(table.set_index("column").loc[columns, "frame_label"])
    png = tmp_path / "f.png"
    fig = draw_logo(alignment, columns, png, labels=labels, title="F helix")
    assert png_shape(png) == expected_pixels(fig)
    draw_logo(alignment, columns, tmp_path / "f.svg", labels=labels)
    assert "<svg" in (tmp_path / "f.svg").read_text()
    draw_logo(alignment, columns[:3], tmp_path / "f.pdf")
    assert (tmp_path / "f.pdf").read_bytes().startswith(b"%PDF")


def test_unknown_extension_is_refused_before_drawing(tmp_path):
    with pytest.raises(OptionError, match=r"\.png, \.svg, \.pdf"):
        draw_logo(alignment_of(*TINY), [1], tmp_path / "f.gif")
    assert not (tmp_path / "f.gif").exists()
    with pytest.raises(OptionError):
        figure_format("figure")
    assert figure_format("X.SVG") == "svg"


def test_logo_refuses_columns_outside_the_alignment():
    with pytest.raises(OptionError, match="column 4 is outside"):
        logo_matrix(alignment_of(*TINY), [1, 4])


# --------------------------------------------------------------------------------------------------
# profile


def hand_table() -> pd.DataFrame:
    return pd.DataFrame({
        "column": [1, 2, 3, 4, 5, 6],
        "frame_label": ["A1", "A2", "", "AB1", "B1", "B2"],
        "sites": ["", "", "", "", "heme-contact", ""],
        "class": ["invariant", "conservative", "gap-rich", "variable", "invariant", "variable"],
        "conservation": [1.0, 0.75, 0.05, 0.5, 1.0, 0.25],
        "jsd": [0.8, 0.6, 0.1, 0.3, 0.9, 0.2],
    })


def test_profile_plots_conservation_along_the_labelled_columns(tmp_path):
    fig = draw_profile(hand_table(), tmp_path / "p.png")
    sites_ax, helix_ax, ax = fig.axes[1], fig.axes[2], fig.axes[0]
    # column 3 has no label and is left out; the conservation column is plotted as it is
    assert list(ax.lines[0].get_ydata()) == [1.0, 0.75, 0.5, 1.0, 0.25]
    assert [t.get_text() for t in helix_ax.texts] == ["A", "B"]
    assert [t.get_text() for t in sites_ax.texts] == ["B1 heme-contact"]
    assert [t.get_text() for t in ax.get_xticklabels()] == ["A1", "A2", "AB1", "B1", "B2"]
    assert ax.get_ylabel() == "conservation:\n(1 - entropy / log2 20) x (1 - gap fraction)"
    assert fig.axes[1].get_title(loc="left") == "conservation"  # the title names the score plotted
    legend = [t.get_text() for t in ax.get_legend().get_texts()]
    # The legend counts every column of the table, as the summary line does (one source: the class counts),
    # and says which column the x axis leaves out.
    assert legend == ["invariant (2)", "conservative (1)", "variable (2)", "gap-rich (1)", "functional site"]
    assert [t.get_text() for t in ax.texts] == ["1 column without a frame label (insertions) not drawn"]
    assert png_shape(tmp_path / "p.png") == expected_pixels(fig)


def test_profile_of_another_score_and_of_unlabelled_columns():
    table = hand_table().assign(frame_label="")
    fig = draw_profile(table, score="jsd")
    ax = fig.axes[0]
    assert list(ax.lines[0].get_ydata()) == [0.8, 0.6, 0.1, 0.3, 0.9, 0.2]  # all columns, as they are
    assert ax.get_xlabel() == "alignment column"
    assert [t.get_text() for t in fig.axes[1].texts] == ["col 5 heme-contact"]
    with pytest.raises(OptionError, match="unknown score"):
        draw_profile(table, score="consensus")


def test_profile_of_the_demo_png_svg(tmp_path, demo):
    _, table = demo
    fig = draw_profile(table, tmp_path / "p.png")
    assert png_shape(tmp_path / "p.png") == expected_pixels(fig)
    helix_texts = [t.get_text() for t in fig.axes[2].texts]
    assert helix_texts == ["A", "B", "C", "D", "E", "F", "G", "H"]
    site_texts = [t.get_text() for t in fig.axes[1].texts]
    assert "F8 heme-ligand" in site_texts and len(site_texts) == int((table["sites"] != "").sum())
    save_figure(fig, tmp_path / "p.svg")
    assert "<svg" in (tmp_path / "p.svg").read_text()


# --------------------------------------------------------------------------------------------------
# departure heat map


def hand_residues() -> pd.DataFrame:
    rows = [
        # id, position, residue, label, column, deviation
        ("q1", 1, "M", "", None, "insertion"),       # leading overhang: not drawn
        ("q1", 2, "V", "A1", 1, "none"),
        ("q1", 3, "L", "A2", 2, "leaves-group"),
        ("q1", 4, "K", "", None, "insertion"),       # after A2, but A2's leaves-group is more severe
        ("q1", 5, "H", "A3", 3, "breaks-invariant"),
        ("q2", 1, "V", "A1", 1, "none"),
        ("q2", 2, "G", "", None, "insertion"),       # internal: shown at A1
        ("q2", 3, "L", "A3", 3, "none"),             # q2 has nothing at A2
    ]
    table = pd.DataFrame(rows, columns=["id", "position", "residue", "frame_label", "column", "deviation"])
    table["column"] = table["column"].astype("Int64")
    return table


def test_departure_matrix_by_hand():
    data = departure_matrix(hand_residues())
    assert data.ids == ("q1", "q2")
    assert data.positions == ("A1", "A2", "A3")
    # ranks: none 0, insertion 1, leaves-group 2, breaks-invariant 3; -1 no residue
    assert data.levels.tolist() == [[0, 2, 3], [1, -1, 0]]


def test_departure_matrix_headings_fall_back_to_column_numbers():
    table = hand_residues()
    table["frame_label"] = ""
    assert departure_matrix(table).positions == ("1", "2", "3")


def test_heatmap_files_and_cells(tmp_path):
    fig = draw_departure_heatmap(hand_residues(), tmp_path / "h.png")
    image = fig.axes[0].images[0].get_array()
    assert np.asarray(image).tolist() == [[1, 3, 4], [2, 0, 1]]  # levels + 1: colour 0 is "no residue"
    assert [t.get_text() for t in fig.axes[0].get_yticklabels()] == ["q1", "q2"]
    assert png_shape(tmp_path / "h.png") == expected_pixels(fig)
    draw_departure_heatmap(hand_residues(), tmp_path / "h.svg")
    assert "<svg" in (tmp_path / "h.svg").read_text()


def test_heatmap_thins_query_labels_beyond_200():
    rows = [(f"q{i:03d}", 1, "V", "A1", 1, "none") for i in range(250)]
    table = pd.DataFrame(rows, columns=["id", "position", "residue", "frame_label", "column", "deviation"])
    fig = draw_departure_heatmap(table)
    labels = [t.get_text() for t in fig.axes[0].get_yticklabels()]
    assert labels[:2] == ["q000", "q002"] and len(labels) == 125


def test_heatmap_of_a_real_scan(tmp_path, demo):
    from globcons.analysis.family import family_from_alignment
    from globcons.analysis.scanning import scan
    from globcons.frame.reference import reference_chain

    alignment, table = demo  # 45 effective synthetic myoglobins, F8 His held fixed
    family = family_from_alignment(alignment, labels=tuple(table["frame_label"]))
    mb = reference_chain("sperm_whale_myoglobin").full_sequence
    _, residues = scan([("mb", mb), ("mb_H93Y", mb[:93] + "Y" + mb[94:])], family=family, shuffles=0)
    data = departure_matrix(residues)
    f8 = data.positions.index("F8")
    assert data.levels[0, f8] == DEVIATION_ORDER.index("none")
    assert data.levels[1, f8] == DEVIATION_ORDER.index("breaks-invariant")
    draw_departure_heatmap(residues, tmp_path / "scan.png")
    assert png_shape(tmp_path / "scan.png")[0] > 100


# --------------------------------------------------------------------------------------------------
# command line


def run(capsys, *args) -> tuple[int, str, str]:
    status = main([str(a) for a in args])
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def test_cli_logo_of_a_label_range(capsys, tmp_path, demo):
    _, table = demo
    out = tmp_path / "logo.png"
    status, _, err = run(capsys, "logo", demo_alignment_path(), "--range", "F1-FG5", "-o", out)
    assert status == 0, err
    labels = list(table["frame_label"])
    expected = labels.index("FG5") - labels.index("F1") + 1
    assert f"logo of {expected} columns (F1..FG5" in err
    assert png_shape(out)[1] > 500


def test_cli_logo_of_columns_to_svg(capsys, tmp_path):
    out = tmp_path / "logo.svg"
    status, _, err = run(capsys, "logo", demo_alignment_path(), "--columns", "1-6", "-o", out, "--weights", "none")
    assert status == 0, err
    assert "<svg" in out.read_text() and "logo of 6 columns" in err


@pytest.mark.parametrize("args, message", [
    (["--range", "F1-Q2"], "not a frame-label range"),
    (["--range", "FG5-F1"], "comes before"),
    (["--columns", "150-999"], "outside the alignment"),
])
def test_cli_logo_bad_range_is_one_line_and_status_2(capsys, tmp_path, args, message):
    out = tmp_path / "logo.png"
    status, _, err = run(capsys, "logo", demo_alignment_path(), *args, "-o", out)
    assert status == 2
    assert message in err and len(err.strip().splitlines()) == 1
    assert not out.exists()


def test_cli_logo_usage_errors(capsys, tmp_path):
    status, _, _ = run(capsys, "logo", demo_alignment_path(), "--range", "F1-F3", "--columns", "1-3",
                       "-o", tmp_path / "x.png")
    assert status == 2
    status, _, err = run(capsys, "logo", demo_alignment_path())
    assert status == 2 and "-o" in err
    status, _, err = run(capsys, "logo", demo_alignment_path(), "-o", tmp_path / "x.bmp")
    assert status == 2 and ".png" in err


def test_cli_refuses_to_overwrite_the_input(capsys, tmp_path):
    source = tmp_path / "family.svg"  # a FASTA file that happens to end in .svg
    shutil.copy(demo_alignment_path(), source)
    before = source.read_bytes()
    status, _, err = run(capsys, "profile", source, "-o", source)
    assert status == 2 and "overwrite the input" in err
    assert source.read_bytes() == before


def test_cli_profile(capsys, tmp_path):
    out = tmp_path / "profile.png"
    status, _, err = run(capsys, "profile", demo_alignment_path(), "-o", out, "--score", "jsd")
    assert status == 0, err
    assert "profile of jsd over" in err and "wrote" in err
    assert png_shape(out)[1] > 1000
    status, _, err = run(capsys, "profile", demo_alignment_path(), "-o", out, "--score", "nope")
    assert status == 2
