"""The layout of :mod:`globcons.cli`: the lazy command table, what each step imports, and who imports whom.

The group lists its commands from a table (name -> module, attribute, one-line help), so that
``globcons --help`` imports no command module and none of the heavy libraries. These tests keep the
table true to the commands' docstrings, a command's options free of the libraries it does not need,
and the import rules of the package (no private names across modules, no command module importing
another) in force.
"""

from __future__ import annotations

import ast
import csv
import importlib
import io
import json
import os
import subprocess
import sys
from pathlib import Path

import click
import pytest

import globcons.cli
from globcons.cli import main
from globcons.cli.group import COMMANDS, LazyCommand, LazyGroup, cli
from globcons.demo import demo_alignment_path

CLI_DIR = Path(globcons.cli.__file__).parent
# Subprocesses import the globcons this process imported, even from another working directory (where a
# relative PYTHONPATH would miss it).
ENV = {**os.environ, "COLUMNS": "100",
       "PYTHONPATH": os.pathsep.join(filter(None, [str(CLI_DIR.parents[1]), os.environ.get("PYTHONPATH")]))}
HEAVY = {"numpy", "pandas", "matplotlib", "scipy", "Bio", "logomaker", "jinja2", "rich"}
EXPECTED_COMMANDS = ["align", "check", "columns", "contrast", "demo", "logo", "paint", "plan", "profile", "report",
                     "scan"]
# Modules every command may import from; everything else in the package is a command module.
SHARED = {"globcons.cli.options", "globcons.cli.reporting"}
FRAMEWORK = {"globcons.cli", "globcons.cli.group"} | SHARED


# Runs globcons/__main__.py as `python -m globcons` does, then writes the names in sys.modules (the reliable
# record: -X importtime leaves out modules loaded through importlib, as the group loads commands).
_RUN_AND_LIST_MODULES = """
import json, runpy, sys
listing = sys.argv.pop(1)
try:
    runpy.run_module("globcons", run_name="__main__", alter_sys=True)
finally:
    with open(listing, "w") as stream:
        json.dump(sorted(sys.modules), stream)
"""


def _imported_modules(tmp_path: Path, *args: str) -> tuple[subprocess.CompletedProcess, set[str]]:
    """Run ``globcons ARGS`` in a fresh interpreter (in ``tmp_path``); the process and the modules it imported."""
    listing = tmp_path / "modules.json"
    result = subprocess.run([sys.executable, "-c", _RUN_AND_LIST_MODULES, str(listing), *map(str, args)],
                            capture_output=True, text=True, cwd=tmp_path, timeout=120, env=ENV)
    return result, set(json.loads(listing.read_text()))


def _top_level(names: set[str]) -> set[str]:
    return {name.split(".")[0] for name in names}


# --------------------------------------------------------------------------------------------------
# globcons --help


def test_help_lists_every_command_and_imports_no_heavy_library(tmp_path):
    result, names = _imported_modules(tmp_path, "--help")
    assert result.returncode == 0, result.stderr
    assert "click" in names and "globcons.cli.group" in names
    assert _top_level(names) & HEAVY == set()
    assert {name for name in names if name.startswith("globcons.")} == FRAMEWORK - {"globcons.cli.options"} | {
        "globcons._version", "globcons.errors", "globcons._lazy"}
    listing = result.stdout.split("Commands:\n", 1)[1].splitlines()
    assert [line.split()[0] for line in listing] == EXPECTED_COMMANDS
    rows = {line.split()[0]: line.split(None, 1)[1] for line in listing}
    assert rows["columns"] == "Score and class every column of ALIGNMENT ('-' reads standard input)."
    assert rows["check"] == "Judge proposed mutations of one TARGET sequence (FASTA) against the family."
    assert rows["demo"] == "Run the whole job on the embedded demo data (a synthetic myoglobin family of a..."
    for name, shown in rows.items():  # each row is the table's help, or its start when the width cuts it
        full = COMMANDS[name].short_help
        assert shown == full or (shown.endswith("...") and full.startswith(shown[:-3]))


def test_help_under_importtime_shows_no_heavy_import():
    """The check as one runs it by hand: ``python -X importtime -m globcons --help``."""
    result = subprocess.run([sys.executable, "-X", "importtime", "-m", "globcons", "--help"], capture_output=True,
                            text=True, timeout=120, env=ENV)
    assert result.returncode == 0
    timed = [line.rsplit("|", 1)[1].strip() for line in result.stderr.splitlines() if line.startswith("import time:")]
    assert "globcons.cli.group" in timed
    assert [name for name in timed if name.split(".")[0] in HEAVY] == []


def test_help_listing_is_the_same_once_every_command_is_loaded(capsys, tmp_path):
    """The stand-ins of the lazy listing shorten the table's help exactly as click shortens the docstrings."""
    lazy, names = _imported_modules(tmp_path, "--help")
    assert "globcons.cli.columns" not in names
    for name in EXPECTED_COMMANDS:
        cli.get_command(click.Context(cli), name)
    assert set(cli.commands) == set(EXPECTED_COMMANDS)
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("COLUMNS", "100")
        assert main(["--help"]) == 0
    assert capsys.readouterr().out == lazy.stdout


def test_columns_on_the_demo_imports_no_figure_or_statistics_library(tmp_path):
    result, names = _imported_modules(tmp_path, "columns", demo_alignment_path(), "-o", "columns.tsv")
    assert result.returncode == 0, result.stderr
    assert "pandas" in names and "globcons.cli.columns" in names  # it did load what it needs
    assert _top_level(names) & {"matplotlib", "logomaker", "jinja2"} == set()
    # the class rule's incomplete beta function is the package's own (scipy.special alone costs more than
    # reading and counting a 20,000-row file): no scipy at all
    assert "scipy" not in _top_level(names)
    assert {name for name in names if name.startswith("globcons.cli")} == {
        "globcons.cli", "globcons.cli.group", "globcons.cli.reporting", "globcons.cli.columns",
        "globcons.cli.options"}
    rows = list(csv.DictReader(io.StringIO((tmp_path / "columns.tsv").read_text()), delimiter="\t"))
    assert len(rows) == 156  # the demo alignment's columns
    assert [r["column"] for r in rows[:3]] == ["1", "2", "3"]
    assert "156 columns: 30 invariant, 48 conservative, 72 variable, 6 gap-rich" in result.stderr
    assert "globcons: wrote columns.tsv, columns.tsv.meta.json" in result.stderr


# Libraries a command's --help may not load: those it does not need to run either.
NOT_NEEDED_FOR_HELP = {
    "columns": {"matplotlib", "scipy", "logomaker", "jinja2", "pandas"},
    "scan": {"matplotlib", "scipy", "logomaker", "jinja2", "pandas"},
    "check": {"matplotlib", "scipy", "logomaker", "jinja2", "pandas"},
    "paint": {"matplotlib", "scipy", "logomaker", "jinja2"},
    "logo": {"scipy", "jinja2", "logomaker"},
    "report": {"matplotlib", "scipy", "logomaker", "jinja2", "pandas"},
}


@pytest.mark.parametrize("command", sorted(NOT_NEEDED_FOR_HELP))
def test_a_command_help_loads_only_what_the_command_needs(tmp_path, command):
    result, names = _imported_modules(tmp_path, command, "--help")
    assert result.returncode == 0, result.stderr
    assert result.stdout.startswith(f"Usage: globcons {command} ")
    assert f"globcons.cli.{COMMANDS[command].module.rsplit('.', 1)[1]}" in names
    assert _top_level(names) & NOT_NEEDED_FOR_HELP[command] == set()


# --------------------------------------------------------------------------------------------------
# the table


@pytest.mark.parametrize("name", EXPECTED_COMMANDS)
def test_every_table_entry_resolves_to_its_command_with_the_same_short_help(name):
    entry = COMMANDS[name]
    command = getattr(importlib.import_module(entry.module), entry.attribute)
    assert isinstance(command, click.Command)
    assert command.name == name
    assert command.get_short_help_str(limit=10**6) == entry.short_help
    assert cli.get_command(click.Context(cli), name) is command


def test_table_holds_every_command_the_package_defines():
    defined = {}
    for path in sorted(CLI_DIR.glob("*.py")):
        module = importlib.import_module(f"globcons.cli.{path.stem}" if path.stem != "__init__" else "globcons.cli")
        for attribute, value in vars(module).items():
            if isinstance(value, click.Command) and value is not cli:
                defined[value.name] = (module.__name__, attribute)
    assert defined == {name: (entry.module, entry.attribute) for name, entry in COMMANDS.items()}
    assert sorted(COMMANDS) == EXPECTED_COMMANDS


def test_unknown_command_is_a_usage_error(capsys):
    assert main(["colums"]) == 2
    err = capsys.readouterr().err
    assert "No such command 'colums'" in err


def test_lazy_group_loads_once_and_refuses_what_is_not_a_command():
    group = LazyGroup("g", lazy_commands={
        "count": LazyCommand("globcons.cli.columns", "columns", "Score."),
        "broken": LazyCommand("globcons.cli.options", "FORMATS", "Not a command."),
    })
    ctx = click.Context(group)
    assert group.list_commands(ctx) == ["broken", "count"]
    first = group.get_command(ctx, "count")
    assert first is importlib.import_module("globcons.cli.columns").columns
    assert group.commands["count"] is first and group.get_command(ctx, "count") is first
    assert group.get_command(ctx, "missing") is None
    with pytest.raises(TypeError, match="globcons.cli.options.FORMATS is not a click command"):
        group.get_command(ctx, "broken")


# --------------------------------------------------------------------------------------------------
# the shared option and reporting modules


def test_option_choices_are_the_library_constants():
    """The options use the library's own lists (one source), so an option can never drift from the library."""
    from globcons.align.significance import DEFAULT_SHUFFLES
    from globcons.cli import options
    from globcons.core.weights import SCHEMES
    from globcons.io.formats import FORMATS, TABLE_FORMATS

    assert options.FORMATS is FORMATS and options.TABLE_FORMATS is TABLE_FORMATS and options.SCHEMES is SCHEMES
    assert options.DEFAULT_SHUFFLES is DEFAULT_SHUFFLES
    assert FORMATS == ("fasta", "a2m", "stockholm", "phylip", "nexus")


def test_reporting_imports_only_click_and_options_no_pandas_or_matplotlib():
    for module, forbidden in (("globcons.cli.reporting", HEAVY), ("globcons.cli.options", HEAVY - {"numpy", "Bio"})):
        code = f"import sys, {module}; print(sorted({{m.split('.')[0] for m in sys.modules}}))"
        result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60, env=ENV)
        assert result.returncode == 0, result.stderr
        loaded = set(ast.literal_eval(result.stdout))
        assert "click" in loaded and "globcons" in loaded
        assert loaded & forbidden == set(), module


# --------------------------------------------------------------------------------------------------
# who imports whom


def _cli_imports(path: Path) -> list[tuple[str, str]]:
    """(module, name) of every ``from globcons.cli... import name`` and ``import globcons.cli...`` in a file."""
    found = []
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom) and node.module and node.module.startswith("globcons.cli"):
            found += [(node.module, alias.name) for alias in node.names]
        elif isinstance(node, ast.Import):
            found += [(alias.name, "") for alias in node.names if alias.name.startswith("globcons.cli")]
    return found


def test_no_private_names_cross_modules_and_command_modules_import_only_shared_ones():
    for path in sorted(CLI_DIR.glob("*.py")):
        module = "globcons.cli" if path.stem == "__init__" else f"globcons.cli.{path.stem}"
        imports = _cli_imports(path)
        assert [name for _, name in imports if name.startswith("_")] == [], path.name
        targets = {source for source, _ in imports}
        if module not in FRAMEWORK:
            assert targets <= SHARED, path.name
        else:  # the group, the entry point and the shared modules never import a command module
            assert targets <= FRAMEWORK, path.name
        assert 'if __name__ == "__main__"' not in path.read_text(), path.name
