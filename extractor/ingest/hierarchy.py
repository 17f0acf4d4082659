"""The hierarchy of a concept list: cycles, one branch (``--root``/``--exclude``), levels.

A concept may have several parents (OBO ``is_a``, SKOS ``broader``), so the hierarchy is
a directed acyclic graph, not a tree. Cycles are found with the standard library's
:class:`graphlib.TopologicalSorter`.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Iterable, Mapping, Sequence
from graphlib import CycleError, TopologicalSorter
from pathlib import Path

from extractor.errors import InputError

Parents = Mapping[str, Sequence[str]]
"""Concept ID -> the IDs of its parents (only those in the list)."""


def check_acyclic(parents: Parents, path: Path | str) -> None:
    """Raise InputError naming a cycle of parent links, if there is one."""
    sorter = TopologicalSorter({cid: tuple(ps) for cid, ps in parents.items()})
    try:
        sorter.prepare()
    except CycleError as exc:
        cycle = " -> ".join(str(c) for c in reversed(exc.args[1]))
        raise InputError(
            f"{path}: the parent links form a cycle ({cycle}); a concept cannot be its own "
            "ancestor, so remove one of these links and import again."
        ) from exc


def children_of(parents: Parents) -> dict[str, list[str]]:
    """Return parent ID -> its children's IDs, in the order the concepts were listed."""
    children: dict[str, list[str]] = {}
    for cid, ps in parents.items():
        for parent in ps:
            children.setdefault(parent, []).append(cid)
    return children


def descendants(parents: Parents, roots: Iterable[str]) -> set[str]:
    """Return the roots and every concept below them (breadth first, each once)."""
    children = children_of(parents)
    seen: set[str] = set()
    queue = deque(roots)
    while queue:
        cid = queue.popleft()
        if cid not in seen:
            seen.add(cid)
            queue.extend(children.get(cid, ()))
    return seen


def select_branch(
    parents: Parents,
    path: Path | str,
    *,
    roots: Sequence[str] = (),
    exclude: Sequence[str] = (),
) -> set[str]:
    """Return the IDs kept: the roots and their descendants, minus excluded branches.

    Without roots every concept is a candidate. An excluded concept takes its
    descendants with it (those also reachable from a kept concept by another path too:
    the excluded branch is left out wherever it hangs).

    Raises:
        InputError: A root or excluded ID is not in the list.
    """
    for option, ids in (("--root", roots), ("--exclude", exclude)):
        unknown = [cid for cid in ids if cid not in parents]
        if unknown:
            raise InputError(
                f"{path} has no concept {unknown[0]!r} (given with {option}); check the ID "
                "as the file writes it, prefix included (for example TO:0000371)."
            )
    kept = descendants(parents, roots) if roots else set(parents)
    return kept - descendants(parents, exclude)


def levels(parents: Parents) -> dict[str, int]:
    """Return each concept's level: 1 without parents, else 1 + its nearest parent's level.

    Parents not in ``parents`` are ignored (a branch's top concept is level 1). The
    graph must be acyclic (:func:`check_acyclic`).
    """
    known = {cid: [p for p in ps if p in parents] for cid, ps in parents.items()}
    order = TopologicalSorter(known).static_order()  # parents come before children
    found: dict[str, int] = {}
    for cid in order:
        ps = known.get(cid, [])
        found[cid] = 1 + min((found[p] for p in ps), default=0)
    return found


def ancestors_at(parents: Parents, level: int) -> dict[str, tuple[str, ...]]:
    """Return concept ID -> the concepts it rolls up to at ``level``.

    A concept at ``level`` or above rolls up to itself. A deeper one rolls up to the
    first concept at ``level`` on each path towards the top: since a parent's level is
    at least its child's minus one, every such path meets ``level`` exactly once first.
    """
    depth = levels(parents)
    out: dict[str, tuple[str, ...]] = {}
    for cid, own in depth.items():
        if own <= level:
            out[cid] = (cid,)
            continue
        found: list[str] = []
        stack = [cid]
        seen = {cid}
        while stack:
            for parent in parents.get(stack.pop(), ()):
                if parent in seen or parent not in depth:
                    continue
                seen.add(parent)
                if depth[parent] <= level:
                    found.append(parent)
                else:
                    stack.append(parent)
        out[cid] = tuple(sorted(found)) or (cid,)
    return out
