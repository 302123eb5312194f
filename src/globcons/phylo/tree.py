"""The tree value used by the likelihood: leaves first, internal nodes in post-order, the root last.

Nodes are numbered so that every node's parent has a larger index than the node itself: leaves are
``0 .. n_leaves - 1`` and the root is the last node, so ``range(n_leaves, n_nodes)`` is a post-order of
the internal nodes and its reverse a pre-order. Trees are kept unrooted in the usual way for a reversible
model (a root with three or more children); a bifurcating root is dissolved into its neighbours, and nodes
with a single child are merged into it, when a tree is built.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

__all__ = ["MIN_LENGTH", "Tree", "tree_from_links"]

#: Shortest branch length kept (substitutions per site): NJ's negative or zero lengths are raised to it.
MIN_LENGTH = 1e-6


@dataclass(frozen=True, eq=False)
class Tree:
    """An unrooted tree with branch lengths.

    Attributes
    ----------
    names
        Leaf names, length ``n_leaves`` (leaf ``i`` is node ``i``).
    parent
        ``int64`` (n_nodes,): each node's parent; -1 for the root (the last node).
    lengths
        ``float64`` (n_nodes,): length of the branch above each node (0 for the root).
    """

    names: tuple[str, ...]
    parent: np.ndarray
    lengths: np.ndarray

    @property
    def n_leaves(self) -> int:
        """Number of leaves."""
        return len(self.names)

    @property
    def n_nodes(self) -> int:
        """Number of nodes, the root included."""
        return int(self.parent.size)

    @property
    def root(self) -> int:
        """Index of the root (the last node)."""
        return self.n_nodes - 1

    def children(self) -> list[np.ndarray]:
        """Children of every node (empty for leaves), each in ascending order."""
        order = np.argsort(self.parent[:-1], kind="stable")
        bounds = np.searchsorted(self.parent[:-1][order], np.arange(self.n_nodes + 1))
        return [order[bounds[node]:bounds[node + 1]] for node in range(self.n_nodes)]

    def with_lengths(self, lengths: np.ndarray) -> Tree:
        """The same topology with other branch lengths (the root's stays 0)."""
        lengths = np.array(lengths, dtype=np.float64)
        lengths[-1] = 0.0
        return Tree(self.names, self.parent, lengths)

    def total_length(self) -> float:
        """Sum of the branch lengths (expected substitutions per site over the whole tree)."""
        return float(self.lengths.sum())

    def newick(self, digits: int = 6) -> str:
        """The tree in Newick, leaf names quoted where they hold Newick's special characters.

        Examples
        --------
        >>> tree = tree_from_links([-1, 0, 0, 0], [0, 0.1, 0.2, 0.3], ["", "a", "b", "c"])
        >>> tree.newick(2)
        '(a:0.10,b:0.20,c:0.30);'
        """
        texts: list[str] = [""] * self.n_nodes
        children = self.children()
        for node in range(self.n_nodes):
            if node < self.n_leaves:
                text = _quoted(self.names[node])
            else:
                text = "(" + ",".join(texts[child] for child in children[node]) + ")"
            texts[node] = text if node == self.root else f"{text}:{self.lengths[node]:.{digits}f}"
        return texts[self.root] + ";"


def _quoted(name: str) -> str:
    if any(char in name for char in " \t()[]':;,"):
        return "'" + name.replace("'", "''") + "'"
    return name


def _collapse(parent: list[int], lengths: list[float], names: list[str | None], root: int) -> int:
    """Merge single-child nodes and dissolve a bifurcating root, in place; returns the (new) root."""
    kids: dict[int, list[int]] = {node: [] for node in range(len(parent))}
    for node, up in enumerate(parent):
        if up >= 0:
            kids[up].append(node)
    for node in range(len(parent)):
        if node != root and parent[node] >= 0 and len(kids[node]) == 1:
            (child,) = kids[node]
            up = parent[node]
            lengths[child] += lengths[node]
            parent[child] = up
            kids[up] = [child if x == node else x for x in kids[up]]
            parent[node] = -2  # removed
    while len(kids[root]) == 1 and kids[kids[root][0]]:  # a root above one internal node: that node is the root
        (child,) = kids[root]
        parent[root], parent[child], root = -2, -1, child
    if len(kids[root]) == 2:
        internal = [child for child in kids[root] if kids[child]]
        if internal:
            inner = internal[0]
            other = kids[root][0] if kids[root][1] == inner else kids[root][1]
            lengths[other] += lengths[inner]
            for child in kids[inner]:
                parent[child] = root
            parent[other] = root
            parent[inner] = -2
    return root


def tree_from_links(parent: Sequence[int], lengths: Sequence[float], names: Sequence[str | None]) -> Tree:
    """A :class:`Tree` from parent links in any order (exactly one node has parent -1).

    Nodes without children are the leaves (their names must be given); single-child nodes are merged
    into their child and a bifurcating root is dissolved; lengths below :data:`MIN_LENGTH` are raised to it.

    Parameters
    ----------
    parent
        Parent index of every node (-1 for the root).
    lengths
        Branch length above every node (None or NaN read as :data:`MIN_LENGTH`).
    names
        Name of every node (used for the leaves only).
    """
    parent, names = [int(p) for p in parent], list(names)
    lengths = [MIN_LENGTH if x is None or not np.isfinite(x) else float(x) for x in lengths]
    roots = [node for node, up in enumerate(parent) if up == -1]
    if len(roots) != 1:
        raise ValueError(f"a tree has one root, found {len(roots)}")
    root = _collapse(parent, lengths, names, roots[0])
    kept = [node for node, up in enumerate(parent) if up != -2]
    kids: dict[int, list[int]] = {node: [] for node in kept}
    for node in kept:
        if parent[node] >= 0:
            kids[parent[node]].append(node)
    leaves = [node for node in kept if not kids[node]]
    post: list[int] = []
    stack = [(root, False)]
    while stack:  # iterative post-order: deep (caterpillar) trees need no recursion
        node, done = stack.pop()
        if done:
            post.append(node)
        elif kids[node]:
            stack.append((node, True))
            stack.extend((child, False) for child in reversed(kids[node]))
    number = {node: index for index, node in enumerate(leaves)}
    number.update({node: len(leaves) + index for index, node in enumerate(post)})
    new_parent = np.full(len(kept), -1, dtype=np.int64)
    new_lengths = np.zeros(len(kept))
    for node in kept:
        if node != root:
            new_parent[number[node]] = number[parent[node]]
            new_lengths[number[node]] = max(lengths[node], MIN_LENGTH)
    for array in (new_parent, new_lengths):
        array.setflags(write=False)
    return Tree(tuple(str(names[node]) for node in leaves), new_parent, new_lengths)
