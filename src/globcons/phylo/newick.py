"""A user's tree: a Newick file read with Biopython's ``Bio.Phylo``, its leaves checked against the alignment."""

from __future__ import annotations

import io
import os
from collections import Counter
from collections.abc import Sequence

from globcons.errors import InputError
from globcons.io.atomic import atomic_output
from globcons.io.opening import read_text
from globcons.phylo.tree import Tree, tree_from_links

__all__ = ["START_LENGTH", "parse_newick", "read_tree", "tree_output_path", "write_newick"]

#: Starting length of a branch the file gives none (the lengths are fitted by likelihood anyway).
START_LENGTH = 0.1


def _names_list(names: Sequence[str], limit: int = 3) -> str:
    shown = ", ".join(repr(name) for name in list(names)[:limit])
    return shown + (f" and {len(names) - limit} more" if len(names) > limit else "")


def parse_newick(text: str, source: str = "<memory>") -> Tree:
    """A :class:`~globcons.phylo.tree.Tree` from Newick text (one tree; lengths optional).

    Raises
    ------
    InputError
        Not one Newick tree, fewer than two leaves, a leaf without a name, or a name used twice.
    """
    from Bio import Phylo

    if not text.strip():
        raise InputError("the tree file is empty; give a Newick tree", source=source)
    try:
        trees = list(Phylo.parse(io.StringIO(text), "newick"))
    except Exception as exc:  # Bio.Phylo raises NewickError, ValueError, IndexError... on bad text
        raise InputError(f"not a Newick tree ({str(exc).splitlines()[0] if str(exc) else type(exc).__name__})",
                         source=source) from None
    if len(trees) != 1:
        raise InputError(f"a tree file holds one Newick tree, found {len(trees)}", source=source)
    parent, lengths, names = [-1], [0.0], [""]
    stack = [(trees[0].root, 0)]
    while stack:
        clade, index = stack.pop()
        if index == 0:
            names[0] = clade.name or ""
        for child in clade.clades:
            parent.append(index)
            lengths.append(START_LENGTH if child.branch_length is None else child.branch_length)
            names.append(child.name or "")
            stack.append((child, len(parent) - 1))
    has_children = set(parent)
    leaves = [names[node] for node in range(len(parent)) if node not in has_children]
    if len(leaves) < 2:
        raise InputError(f"the tree has {len(leaves)} leaf; at least two are needed", source=source)
    if "" in leaves:
        raise InputError("a leaf of the tree has no name", source=source)
    repeated = [name for name, count in Counter(leaves).items() if count > 1]
    if repeated:
        raise InputError(f"leaf names used more than once: {_names_list(repeated)}", source=source)
    return tree_from_links(parent, lengths, names)


def read_tree(path: str | os.PathLike, ids: Sequence[str]) -> Tree:
    """Read a Newick file and check that its leaves are exactly the alignment's ids.

    Parameters
    ----------
    path
        The file (gzip allowed; ``"-"`` for standard input).
    ids
        The alignment's row ids.

    Raises
    ------
    InputError
        The file is not one Newick tree, or a leaf is not an id of the alignment, or a row of the
        alignment is not a leaf (the message names up to three of them).
    """
    source = str(path)
    tree = parse_newick(read_text(path, "tree (Newick)"), source)
    known = set(ids)
    unknown = [name for name in tree.names if name not in known]
    if unknown:
        what = "leaf of the tree is not an id" if len(unknown) == 1 else "leaves of the tree are not ids"
        raise InputError(f"{len(unknown)} {what} of the alignment: {_names_list(unknown)}", source=source)
    missing = [name for name in ids if name not in set(tree.names)]
    if missing:
        what = "row of the alignment is not a leaf" if len(missing) == 1 else "rows of the alignment are not leaves"
        raise InputError(f"{len(missing)} {what} of the tree: {_names_list(missing)}", source=source)
    return tree


def tree_output_path(table_output: str | None, tree_output: str | None) -> str | None:
    """Where the tree goes: ``tree_output`` if given, else ``<table output>.tree.nwk``, else None (stdout)."""
    if tree_output is not None:
        return tree_output
    if table_output is None or table_output == "-":
        return None
    return f"{table_output}.tree.nwk"


def write_newick(tree: Tree, path: str | os.PathLike, inputs: Sequence = ()) -> None:
    """Write a tree in Newick, atomically (:func:`globcons.io.atomic.atomic_output`), one line."""
    with atomic_output(path, inputs=[item for item in inputs if item is not None]) as stream:
        stream.write(tree.newick() + "\n")
