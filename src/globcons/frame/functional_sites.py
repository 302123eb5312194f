"""Functional sites of the globin frame: the built-in list (package data) or a user's table, and each column's sites.

A site is a frame label (or, in a user's table, an alignment column) with its role, a short kind
(``heme-ligand``...), the chains it is listed for, a literature pointer and how certain the entry is.
"""

from __future__ import annotations

import functools
import os
from dataclasses import dataclass

from globcons.core.labels import is_label, split_label
from globcons.errors import InputError
from globcons.frame.reference import ReferenceChain, data_text, label_positions, reference_chain, reference_chains
from globcons.io.opening import read_text

__all__ = ["Site", "SITE_COLUMNS", "sites", "sites_at", "column_sites", "check_user_sites"]

#: Columns a site table may have (``label`` or ``column``, and ``role``, are required; others are ignored).
SITE_COLUMNS = ("label", "column", "chains", "role", "kind", "reference", "certainty", "note")


@dataclass(frozen=True)
class Site:
    """A functionally important frame position.

    Attributes
    ----------
    label
        Frame label, e.g. ``"F8"``.
    chains
        Names of the reference chains the site is listed for; empty means every chain.
    role
        What the residue does.
    kind
        Short category, e.g. ``"heme-ligand"``.
    reference
        Literature pointer.
    note
        Free text (numbering per chain, caveats).
    certainty
        How sure the entry is, e.g. ``"from memory"`` or ``"uncertain (from memory)"``.
    column
        For a user's site given by alignment column (1-based) instead of a label; None otherwise.
    """

    label: str
    chains: tuple[str, ...]
    role: str
    kind: str = ""
    reference: str = ""
    note: str = ""
    certainty: str = ""
    column: int | None = None

    def applies_to(self, chain_name: str) -> bool:
        """Whether the site is listed for ``chain_name`` (every chain when :attr:`chains` is empty).

        This looks at the listing only; :func:`sites` with a ``chain`` also drops sites whose label
        the chain does not have (e.g. a ``CD4`` site listed for all chains, in alpha).
        """
        return not self.chains or chain_name in self.chains


def _parse_chains(text: str, source: str, line: int | None) -> tuple[str, ...]:
    text = text.strip()
    if text in ("", "all"):
        return ()
    names = tuple(part.strip() for part in text.split(","))
    valid = [chain.name for chain in reference_chains()]
    for part in names:
        if part not in valid:
            raise InputError(f"unknown chain {part!r} in chains; valid: all, or a comma-separated list of "
                             f"{', '.join(valid)}", source, line)
    return names


def _read_sites(text: str, source: str) -> tuple[Site, ...]:
    rows = [(number, raw.rstrip("\r")) for number, raw in enumerate(text.splitlines(), 1)]
    rows = [(number, raw) for number, raw in rows if raw.strip() and not raw.lstrip().startswith("#")]
    if not rows:
        raise InputError("no header row; expected tab-separated columns label, role", source)
    header_line, header_text = rows[0]
    header = [name.strip().lower() for name in header_text.split("\t")]
    if len(set(header)) != len(header):
        raise InputError(f"repeated column name in header {header_text!r}", source, header_line)
    if "label" not in header and "column" not in header:
        raise InputError(f"missing column 'label' (or 'column'); header has {', '.join(header)}",
                         source, header_line)
    if "role" not in header:
        raise InputError(f"missing column 'role'; header has {', '.join(header)}", source, header_line)
    found = []
    for number, raw in rows[1:]:
        cells = raw.split("\t")
        if len(cells) > len(header):
            raise InputError(f"{len(cells)} fields but the header has {len(header)}", source, number)
        row = dict(zip(header, (cell.strip() for cell in cells), strict=False))  # short rows: missing cells are empty
        label = row.get("label", "")
        column_text = row.get("column", "")
        column = None
        if column_text and not label and is_label(column_text):
            label, column_text = column_text, ""  # a frame label under a "column" heading
        if column_text and label:
            raise InputError(f"site row gives both label {label!r} and column {column_text!r}; give one of them",
                             source, number)
        if column_text:
            if not column_text.isdigit() or int(column_text) < 1:
                raise InputError(f"column {column_text!r} is not an alignment column number (1, 2, ...)",
                                 source, number)
            column = int(column_text)
        elif not is_label(label):
            raise InputError(f"{label!r} is not a frame label (segment then place, e.g. F8, FG3, NA1)",
                             source, number)
        if label and not is_label(label):
            raise InputError(f"{label!r} is not a frame label (segment then place, e.g. F8, FG3, NA1)",
                             source, number)
        if not row.get("role"):
            raise InputError(f"site {label or column} has an empty role", source, number)
        found.append(Site(
            label=label,
            column=column,
            chains=_parse_chains(row.get("chains", ""), source, number),
            role=row["role"],
            kind=row.get("kind", ""),
            reference=row.get("reference", ""),
            note=row.get("note", ""),
            certainty=row.get("certainty", ""),
        ))
    return tuple(found)


@functools.cache
def _builtin_sites() -> tuple[Site, ...]:
    name = "functional_sites.tsv"
    return _read_sites(data_text(name), name)


def _read_user_sites(path: str | os.PathLike[str]) -> tuple[Site, ...]:
    return _read_sites(read_text(path, "site table"), os.fspath(path))


def _on_chain(site: Site, name: str) -> bool:
    return site.applies_to(name) and site.label in label_positions(name)


def sites(chain: str | ReferenceChain | None = None,
          path: str | os.PathLike[str] | None = None) -> tuple[Site, ...]:
    """Functional sites: the built-in list, or a user's table.

    Parameters
    ----------
    chain
        If given, only the sites listed for that chain whose label the chain has (a site listed for
        all chains at ``CD4`` is left out for alpha, which names that stretch ``CE``).
    path
        A tab-separated table to use instead of the built-in list. Columns: ``label`` or ``column``
        (a 1-based alignment column, for families without frame labels) and ``role`` required; ``kind``,
        ``chains`` (``all`` or comma-separated chain
        names; empty means all), ``reference``, ``note``, ``certainty`` optional; other columns are
        ignored. Blank lines and lines starting with ``#`` are skipped.

    Raises
    ------
    InputError
        If the user's table cannot be read or is malformed (names the file and line).
    OptionError
        If ``chain`` is not a reference chain.
    """
    found = _builtin_sites() if path is None else _read_user_sites(path)
    if chain is None:
        return found
    name = reference_chain(chain).name
    return tuple(site for site in found if _on_chain(site, name))


def sites_at(label: str, chain: str | ReferenceChain | None = None,
             site_list: tuple[Site, ...] | None = None) -> tuple[Site, ...]:
    """Sites at one frame label, optionally only those on ``chain`` (as in :func:`sites`).

    ``site_list`` defaults to the built-in list.
    """
    split_label(label)
    found = _builtin_sites() if site_list is None else site_list
    if chain is None:
        return tuple(site for site in found if site.label == label)
    name = reference_chain(chain).name
    return tuple(site for site in found if site.label == label and _on_chain(site, name))



def check_user_sites(user_sites: tuple[Site, ...] | None, labels: tuple[str, ...], source: str | None) -> None:
    """Refuse user sites that would silently land nowhere: a column beyond the alignment, or a label site
    when the columns carry no frame labels (``--no-frame``, or a family that is not tied to the frame).

    Raises
    ------
    InputError
        Naming the site table, the site and what to do instead.
    """
    labelled = any(labels)
    for site in user_sites or ():
        if site.column is not None and site.column > len(labels):
            raise InputError(f"site at column {site.column} ({site.role}) is beyond the alignment's {len(labels)} "
                             "columns", source)
        if site.column is None and site.label and not labelled:
            raise InputError(f"site {site.label} ({site.role}) is given by frame label, but the columns carry no "
                             "frame labels (--no-frame, or no row placed on the frame); give its column instead",
                             source)


def column_sites(labels: tuple[str, ...], chain: str | None = None,
                 user_sites: tuple[Site, ...] | None = None, replace: bool = False) -> list[str]:
    """Kinds of functional sites at every column, joined by ',' ('' for none).

    Parameters
    ----------
    labels
        Frame label per column.
    chain
        Reference chain whose site list applies (None: sites listed for any chain at the label).
    user_sites
        Sites from a user's table: by label, or by alignment column (``Site.column``).
    replace
        Use only the user's sites instead of adding them to the built-in ones.
    """
    built_in = () if replace else (sites(chain) if chain else sites())
    by_label: dict[str, list[str]] = {}
    by_column: dict[int, list[str]] = {}
    for site in list(built_in) + list(user_sites or ()):
        kind = site.kind or site.role
        if site.column is not None:
            by_column.setdefault(site.column, []).append(kind)
        elif site.label:
            by_label.setdefault(site.label, []).append(kind)
    result = []
    for index, label in enumerate(labels, start=1):
        kinds = by_label.get(label, []) if label else []
        kinds = kinds + by_column.get(index, [])
        result.append(",".join(dict.fromkeys(kinds)))
    return result

