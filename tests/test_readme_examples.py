"""Every example of the README runs as written, on the files shipped in data_examples/.

The commands are taken from the README itself (every line of a shell code block that runs ``globcons``,
and the inline ``globcons ...`` examples that name a shipped file), in README order, and run through bash
in one temporary copy of data_examples/ (later commands read what earlier ones wrote, as a reader
following the README would). Each must exit 0 and write the outputs it names (``-o``, ``--report``,
``--residues``, ``--figure``, ``--heatmap``, ``> FILE``). The Python block runs too, and the summary line
the README shows is what ``globcons columns family.fasta`` prints.
"""

from __future__ import annotations

import os
import re
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
README = ROOT / "README.md"
EXAMPLES = ROOT / "data_examples"
#: A line that runs globcons (possibly after a pipe); "globcons: ..." lines are output, not commands.
_COMMAND = re.compile(r"^(?:\S.*\|\s*)?globcons [a-z]")
_FENCE = re.compile(r"^```(\w*)\s*$")
#: Options whose value is a file the command writes.
OUTPUT_OPTIONS = ("-o", "--output", "--report", "--residues", "--figure", "--heatmap")


def _blocks(text: str) -> list[tuple[str, list[str]]]:
    """(language, lines) of every fenced code block."""
    blocks, language, lines = [], None, []
    for line in text.splitlines():
        fence = _FENCE.match(line)
        if fence and language is None:
            language, lines = fence.group(1), []
        elif line.startswith("```") and language is not None:
            blocks.append((language, lines))
            language = None
        elif language is not None:
            lines.append(line)
    return blocks


def readme_commands() -> list[str]:
    """The README's globcons commands, in order: shell blocks, then inline examples naming a shipped file."""
    text = README.read_text(encoding="utf-8")
    commands = [line.strip() for language, lines in _blocks(text) if language in ("", "sh", "bash", "console")
                for line in _joined(lines) if _COMMAND.match(line.strip())]
    shipped = {path.name for path in EXAMPLES.iterdir()}
    for span in re.findall(r"`(globcons [a-z]+ [^`]+)`", text):
        if span not in commands and any(word in shipped for word in shlex.split(span)):
            commands.append(span)
    return commands


def _joined(lines: list[str]) -> list[str]:
    """Shell lines with their backslash continuations joined, as the shell reads them."""
    joined, current = [], ""
    for line in lines:
        if line.rstrip().endswith("\\"):
            current += line.rstrip()[:-1] + " "
            continue
        joined.append(current + line)
        current = ""
    if current:
        joined.append(current)
    return joined


def python_blocks() -> list[str]:
    return ["\n".join(lines) for language, lines in _blocks(README.read_text(encoding="utf-8"))
            if language == "python"]


def stated_outputs(command: str) -> list[str]:
    """The files a command line says it writes (its output options and a '>' redirection)."""
    words = shlex.split(command, comments=True)
    outputs = []
    for before, word in zip(words, words[1:], strict=False):
        if before in OUTPUT_OPTIONS + (">",) and word != "-":
            outputs.append(word)
    return outputs


@pytest.fixture(scope="module")
def workdir(tmp_path_factory) -> Path:
    """A copy of data_examples/, with a ``globcons`` on PATH that runs this interpreter's globcons."""
    work = tmp_path_factory.mktemp("readme") / "data_examples"
    shutil.copytree(EXAMPLES, work)
    bin_dir = work.parent / "bin"
    bin_dir.mkdir()
    wrapper = bin_dir / "globcons"
    wrapper.write_text(f'#!/bin/sh\nexec "{sys.executable}" -m globcons "$@"\n')
    wrapper.chmod(0o755)
    return work


def _run(command: str, workdir: Path) -> subprocess.CompletedProcess:
    env = dict(os.environ, PATH=f"{workdir.parent / 'bin'}{os.pathsep}{os.environ.get('PATH', '')}")
    return subprocess.run(["bash", "-o", "pipefail", "-c", command], cwd=workdir, env=env, capture_output=True,
                          text=True, timeout=600)


COMMANDS = readme_commands()


def test_the_readme_has_commands_for_every_command_it_documents():
    # The extraction itself: a regression that found nothing would pass every parametrised case vacuously.
    used = {shlex.split(c.split("|")[-1])[1] for c in COMMANDS}
    assert {"columns", "align", "scan", "check", "plan", "contrast", "report", "logo", "profile",
            "paint"} <= used
    assert len(COMMANDS) >= 20


@pytest.mark.parametrize("command", COMMANDS)
def test_readme_command_runs_as_written(command, workdir):
    result = _run(command, workdir)
    assert result.returncode == 0, f"{command}\n{result.stderr[-2000:]}"
    assert "internal error" not in result.stderr
    for output in stated_outputs(command):
        path = workdir / output
        if output.endswith("/"):
            path = path / "report.html"
        assert path.is_file() and path.stat().st_size > 0, f"{command}: {output} was not written"


def test_readme_summary_line_is_what_columns_prints(workdir):
    text = README.read_text(encoding="utf-8")
    shown = [line for language, lines in _blocks(text) for line in lines if line.startswith("globcons: 48 sequences")]
    assert len(shown) == 1
    result = _run("globcons columns family.fasta > /dev/null", workdir)
    assert result.returncode == 0
    assert shown[0] in result.stderr.splitlines()


def _shown_outputs() -> list[tuple[str, str]]:
    """(command, the output block right after it) for README command blocks followed by a plain block that
    starts with a table header (the examples whose output the README shows)."""
    blocks = _blocks(README.read_text(encoding="utf-8"))
    pairs = []
    for (language, lines), (_, following) in zip(blocks, blocks[1:], strict=False):
        commands = [line for line in _joined(lines) if _COMMAND.match(line.strip())]
        if language in ("", "sh", "bash") and len(commands) == 1 and following \
                and not _COMMAND.match(following[0].strip()) and not following[0].startswith("globcons:"):
            pairs.append((commands[0].strip(), "\n".join(following)))
    return pairs


@pytest.mark.parametrize("command, shown", _shown_outputs())
def test_readme_shows_what_the_command_prints(command, shown, workdir):
    # An output block under a command must be what the command prints now (columns added since drift).
    result = _run(command, workdir)
    assert result.returncode == 0, result.stderr
    assert result.stdout.rstrip("\n") == shown.rstrip("\n"), command


def test_readme_group_by_regex_matches_every_demo_id(workdir):
    command = next(c for c in COMMANDS if "--group-by" in c)
    regex = shlex.split(command)[shlex.split(command).index("--group-by") + 1]
    ids = [line[1:].split()[0] for line in (workdir / "family.fasta").read_text().splitlines()
           if line.startswith(">")]
    found = {re.search(regex, i).group(1) for i in ids if re.search(regex, i)}
    assert len(ids) == 48 and all(re.search(regex, i) for i in ids)
    assert found == {"S1", "S2", "S3", "S4"}  # the four survey sites of the demo (data_examples/README.md)


def test_readme_python_block_runs(workdir, monkeypatch):
    blocks = python_blocks()
    assert blocks
    monkeypatch.chdir(workdir)
    namespace: dict = {}
    for block in blocks:
        exec(compile(block, "README.md", "exec"), namespace)  # noqa: S102 - the README's own example
    assert namespace["placed"].residue_at("F8") == (93, "H")
    assert len(namespace["layout"].rows) == 48


def test_example_files_are_reproducible(tmp_path):
    # data_examples/make_examples.py regenerates the shipped example files byte for byte.
    result = subprocess.run([sys.executable, str(EXAMPLES / "make_examples.py"), "--out", str(tmp_path),
                             "--structure", str(EXAMPLES / "2hhb.pdb")], capture_output=True, text=True)
    assert result.returncode == 0, result.stderr
    for made in tmp_path.iterdir():
        assert made.read_bytes() == (EXAMPLES / made.name).read_bytes(), made.name


def test_real_example_files_match_their_records():
    # beta.fasta is human hemoglobin beta as UniProt P68871 gives it (147 residues with the Met; checked
    # against public copies of the record, see data_examples/README.md); 2hhb.pdb's chains B and D are
    # its mature chain (PDB 2HHB; Bio.PDB reads them).
    from Bio.PDB import PDBParser
    from Bio.SeqUtils import seq1

    beta = "".join((EXAMPLES / "beta.fasta").read_text().splitlines()[1:])
    mature = "".join((EXAMPLES / "beta_mature.fasta").read_text().splitlines()[1:])
    assert len(beta) == 147 and beta.startswith("MVHLTPEEK") and beta[1:] == mature
    # ... and both are held against the verified P68871 row and its checksum (data/family: two public copies)
    from globcons.frame.verified_globins import sequence_checksum, stored_checksums, verified_globins

    verified = {row.accession: row.sequence for row in verified_globins()}
    assert beta == verified["P68871"] and sequence_checksum(beta) == stored_checksums()["P68871"]
    assert "UniProt P68871" in (EXAMPLES / "beta.fasta").read_text().splitlines()[0]
    model = PDBParser(QUIET=True).get_structure("2hhb", str(EXAMPLES / "2hhb.pdb"))[0]
    chains = {c.id: "".join(seq1(r.get_resname()) for r in c if r.id[0] == " ") for c in model}
    assert chains["B"] == chains["D"] == mature
    assert len(chains["A"]) == len(chains["C"]) == 141
    assert chains["A"] == chains["C"] == verified["P69905"][1:]  # alpha, mature chain of the verified record
