"""The ``globcons`` command group, which loads a command's module only when that command is run.

``globcons --help`` lists the commands from :data:`COMMANDS` alone, so it imports no command module
(and so none of numpy, pandas, matplotlib, scipy or Biopython). ``tests/test_cli_layout.py`` checks
that every entry resolves to a command whose short help is the one written here.
"""

from __future__ import annotations

import importlib
from collections.abc import Mapping
from typing import Any, NamedTuple

import click

from globcons._version import __version__
from globcons.cli.reporting import PROG

__all__ = ["COMMANDS", "LazyCommand", "LazyGroup", "cli"]


class LazyCommand(NamedTuple):
    """Where a command lives, and the one line ``globcons --help`` shows for it.

    Attributes
    ----------
    module
        Dotted path of the module defining the command.
    attribute
        Name of the :class:`click.Command` in that module.
    short_help
        The command's short help as click derives it from the docstring (its first sentence).
    """

    module: str
    attribute: str
    short_help: str


COMMANDS: dict[str, LazyCommand] = {
    "align": LazyCommand("globcons.cli.align", "align",
                         "Place unaligned SEQUENCES (FASTA, gzip, '-' for stdin) on the globin frame."),
    "check": LazyCommand("globcons.cli.mutations", "check",
                         "Judge proposed mutations of one TARGET sequence (FASTA) against the family."),
    "columns": LazyCommand("globcons.cli.columns", "columns",
                           "Score and class every column of ALIGNMENT ('-' reads standard input)."),
    "contrast": LazyCommand("globcons.cli.contrast", "contrast",
                            "Find the columns of ALIGNMENT that set groups of sequences apart."),
    "demo": LazyCommand("globcons.cli.demo", "demo",
                        "Run the whole job on the embedded demo data (a synthetic myoglobin family of a "
                        "fictional survey)."),
    "logo": LazyCommand("globcons.cli.figures", "logo",
                        "Draw a weighted sequence logo of ALIGNMENT (all columns, or a --range / --columns region)."),
    "paint": LazyCommand("globcons.cli.paint", "paint",
                         "Write a column score of ALIGNMENT into the B-factors of a STRUCTURE (PDB or mmCIF)."),
    "plan": LazyCommand("globcons.cli.mutations", "plan",
                        "Rank every position of one TARGET sequence for mutation, most tolerant first."),
    "profile": LazyCommand("globcons.cli.figures", "profile",
                           "Draw a conservation score of ALIGNMENT along the frame positions."),
    "report": LazyCommand("globcons.cli.report", "report",
                          "Write an offline report of ALIGNMENT: report.html (self-contained), tables, figures, "
                          "methods text."),
    "scan": LazyCommand("globcons.cli.scan", "scan",
                        "Scan new SEQUENCES (FASTA, gzip, '-' for stdin) against the globin family."),
}
"""The commands of ``globcons``: name -> where it lives and its one-line help."""


class LazyGroup(click.Group):
    """A :class:`click.Group` whose commands are imported on first use.

    Parameters
    ----------
    *args, **kwargs
        As for :class:`click.Group`.
    lazy_commands
        Name -> :class:`LazyCommand`. Commands added the usual way (``add_command``) work too.
    """

    def __init__(self, *args: Any, lazy_commands: Mapping[str, LazyCommand] | None = None, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.lazy_commands = dict(lazy_commands or {})

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(set(super().list_commands(ctx)) | set(self.lazy_commands))

    def get_command(self, ctx: click.Context, cmd_name: str) -> click.Command | None:
        command = super().get_command(ctx, cmd_name)
        if command is None and cmd_name in self.lazy_commands:
            command = self.load(cmd_name)
        return command

    def load(self, name: str) -> click.Command:
        """Import the command ``name`` and keep it on the group, so later look-ups skip the import."""
        where = self.lazy_commands[name]
        command = getattr(importlib.import_module(where.module), where.attribute)
        if not isinstance(command, click.Command):
            raise TypeError(f"{where.module}.{where.attribute} is not a click command")
        self.add_command(command, name)
        return command

    def format_commands(self, ctx: click.Context, formatter: click.HelpFormatter) -> None:
        # As click's own listing, but a command not loaded yet is shown through a stand-in carrying only its
        # table help: click shortens that to the width exactly as it would the docstring.
        listed = []
        for name in self.list_commands(ctx):
            command = self.commands.get(name) or click.Command(name, help=self.lazy_commands[name].short_help)
            if not command.hidden:
                listed.append((name, command))
        if listed:
            limit = formatter.width - 6 - max(len(name) for name, _ in listed)
            with formatter.section("Commands"):
                formatter.write_dl([(name, command.get_short_help_str(limit)) for name, command in listed])


@click.group(cls=LazyGroup, lazy_commands=COMMANDS,
             context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100})
@click.version_option(__version__, prog_name=PROG)
def cli() -> None:
    """Conservation of globin-family alignments, tied to the globin helix frame.

    Start with `globcons demo`, or `globcons columns ALIGNMENT` on your own alignment.
    """
