"""The offline report: files, self-containment, escaping, methods text, and a real browser rendering it."""

import os
import re
import shutil
import subprocess

import numpy as np
import pytest

from globcons import read_alignment
from globcons.cli import main
from globcons.core.alignment import Alignment
from globcons.demo import demo_alignment_path
from globcons.report.html import write_report

CHROMIUM_FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync"]


@pytest.fixture(scope="module")
def demo_report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("report")
    return write_report(demo_alignment_path(), folder)


def test_report_writes_every_file(demo_report):
    names = {os.path.basename(f) for f in demo_report.files}
    assert {"report.html", "columns.tsv", "columns.md", "columns.tex", "methods.md", "profile.svg",
            "profile.png"} <= names
    assert {f"logo_{h}.svg" for h in "ABCDEFGH"} <= names
    tex = (demo_report.folder / "columns.tex").read_text()
    assert r"\toprule" in tex and r"\bottomrule" in tex


def test_report_is_self_contained(demo_report):
    html = demo_report.html.read_text()
    # No remote or external resource: every src/href is a data: URI or an in-page anchor.
    for attribute, value in re.findall(r"""\b(src|href)\s*=\s*["']([^"']*)["']""", html):
        assert value.startswith(("data:", "#")), (attribute, value[:60])
    assert "<link" not in html and "@import" not in html and "url(http" not in html
    assert html.count("<script") == 1  # the inline table sorter only
    assert 'id="column-table"' in html and html.count("<tr>") > 150


def test_methods_text_follows_the_options(tmp_path):
    write_report(demo_alignment_path(), tmp_path, logos=False)
    methods = (tmp_path / "methods.md").read_text()
    assert "Henikoff and Henikoff 1994" in methods and "gap fraction above 0.5" in methods
    assert "Capra JA, Singh M (2007)" in methods
    from globcons.analysis.options import ScoreOptions
    from globcons.core.classes import ClassRules

    other = tmp_path / "other"
    write_report(demo_alignment_path(), other, ScoreOptions(weights="none", rules=ClassRules(max_gaps=0.3)),
                 logos=False)
    text = (other / "methods.md").read_text()
    assert "no sequence weighting" in text and "gap fraction above 0.3" in text
    assert "Position-based sequence weights" not in text


def test_user_ids_are_escaped(tmp_path):
    # Sequence ids are user input: markup in them must come out as text, never as markup or script.
    mb = read_alignment(demo_alignment_path())
    evil = '<script>alert("x")</script><img src=x onerror=alert(1)>'
    ids = (evil,) + mb.ids[1:]
    alignment = Alignment(ids=ids, codes=mb.codes.copy(), source=str(tmp_path / "evil.fasta"))
    result = write_report(alignment, tmp_path / "out", logos=False)
    html = result.html.read_text()
    assert "<script>alert" not in html and "<img src=x" not in html
    assert html.count("<script") == 1


def test_report_command_and_it_leaves_other_files_alone(tmp_path, capsys):
    """The report replaces its folder as a whole, so a folder of other files is refused and left as it was."""
    keep = tmp_path / "notes.txt"
    keep.write_text("mine")
    assert main(["report", str(demo_alignment_path()), "-o", str(tmp_path), "--no-logos", "--quiet"]) == 2
    assert "holds other files and no report.html" in capsys.readouterr().err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["notes.txt"] and keep.read_text() == "mine"
    assert main(["report", str(demo_alignment_path()), "-o", str(tmp_path / "rep"), "--no-logos", "--quiet"]) == 0
    assert keep.read_text() == "mine" and (tmp_path / "rep" / "report.html").is_file()


def _chromium():
    for name in ("chromium", "chromium-browser", "google-chrome"):
        path = shutil.which(name)
        if path:
            return path
    return None


def test_report_renders_in_a_real_browser(demo_report, tmp_path):
    browser = _chromium()
    if browser is None:
        if os.environ.get("CI"):
            pytest.fail("CI must run the browser test: Debian's chromium is missing (see .ci/run)")
        pytest.skip("headless Chromium not installed (apt-get install chromium); CI installs it")
    url = demo_report.html.resolve().as_uri()
    profile = tmp_path / "chrome-profile"
    dom = subprocess.run([browser, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", "--dump-dom", url],
                         capture_output=True, text=True, timeout=120).stdout
    assert 'id="column-table"' in dom and dom.count("<tr>") > 150
    shot = tmp_path / "shot.png"
    subprocess.run([browser, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", f"--screenshot={shot}",
                    "--window-size=1200,1600", url], capture_output=True, timeout=120)
    assert shot.is_file()
    import matplotlib.image

    pixels = matplotlib.image.imread(str(shot))[..., :3]
    assert pixels.shape[0] >= 1000 and pixels.shape[1] >= 1000
    not_white = (pixels < 0.95).any(axis=2).mean()
    assert 0.02 < not_white < 0.9  # text and figures drawn, not a blank or a black page
    assert len(np.unique(pixels.reshape(-1, 3), axis=0)) > 50


def test_methods_text_covers_the_group_contrast(tmp_path):
    groups = tmp_path / "groups.tsv"
    ids = read_alignment(demo_alignment_path()).ids
    groups.write_text("".join(f"{i}\tsite{i.split('-')[1][1]}\n" for i in ids))  # KBM-S<site>-NN
    write_report(demo_alignment_path(), tmp_path / "out", logos=False, contrast={"groups_file": str(groups)})
    methods = (tmp_path / "out" / "methods.md").read_text()
    assert "generalised Jensen-Shannon divergence" in methods and "site1 (12 sequences" in methods
    assert "Lin J (1991)" in methods and "Miller GA (1955)" in methods


def test_a_report_without_logos_says_why_there_are_none(tmp_path):
    # --no-logos must not read as "the columns carry no frame labels" (they do, on the demo family).
    from globcons.demo import demo_alignment_path
    from globcons.report.html import write_report

    write_report(demo_alignment_path(), tmp_path / "r", logos=False)
    page = (tmp_path / "r" / "report.html").read_text()
    assert "Helix logos were not drawn (--no-logos)." in page
    assert "carry no frame labels" not in page
