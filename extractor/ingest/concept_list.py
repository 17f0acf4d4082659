"""What every concept-list reader hands on: the validated list, and its finishing checks.

The readers (tables in :mod:`extractor.ingest.concepts`, OBO in
:mod:`extractor.ingest.obo`, SKOS in :mod:`extractor.ingest.skos`) each produce concepts
and aliases; :func:`finish` then checks the hierarchy for cycles, keeps the chosen
branch, drops links to parents outside the list, and notes shared aliases.
"""

from __future__ import annotations

import hashlib
from collections import defaultdict
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import NamedTuple

from extractor.ingest.hierarchy import check_acyclic, select_branch
from extractor.types import AliasEntry, ConceptEntry


class ConceptList(NamedTuple):
    """A validated concept list, ready for the store.

    ``notes`` says what the reader left out on purpose (obsolete terms, concepts outside
    the chosen branch), one sentence each; ``warnings`` what may need a curator.
    """

    concepts: list[ConceptEntry]
    aliases: list[AliasEntry]
    sha256: str
    warnings: list[str]
    notes: tuple[str, ...] = ()


def file_sha256(path: Path) -> str:
    """Return the SHA-256 of a file's bytes."""
    digest = hashlib.sha256()
    with path.open("rb") as handle:
        for block in iter(lambda: handle.read(1 << 16), b""):
            digest.update(block)
    return digest.hexdigest()


def finish(
    path: Path,
    concepts: Sequence[ConceptEntry],
    aliases: Iterable[AliasEntry],
    *,
    roots: Sequence[str] = (),
    exclude: Sequence[str] = (),
    notes: Sequence[str] = (),
) -> ConceptList:
    """Check the hierarchy, keep the chosen branch and return the list for the store.

    Raises:
        InputError: The parent links form a cycle, or a root or excluded ID is unknown.
    """
    ids = {c.id for c in concepts}
    parents = {c.id: [p for p in c.parents if p in ids] for c in concepts}
    check_acyclic(parents, path)
    kept = select_branch(parents, path, roots=roots, exclude=exclude)
    warnings = _unknown_parents(path, [c for c in concepts if c.id in kept], ids)
    out_notes = list(notes)
    if len(kept) < len(ids):
        out_notes.append(
            f"{len(ids) - len(kept)} concepts outside the chosen branch were left out."
        )
    entries = [_within(c, kept) for c in concepts if c.id in kept]
    kept_aliases = [a for a in aliases if a.concept_id in kept]
    warnings += shared_alias_warnings(path, kept_aliases)
    return ConceptList(entries, kept_aliases, file_sha256(path), warnings, tuple(out_notes))


def _unknown_parents(path: Path, concepts: Sequence[ConceptEntry], ids: set[str]) -> list[str]:
    """Warn about parents not in the list: each one when few, else one sentence for all."""
    links = [(c.id, p) for c in concepts for p in c.parents if p not in ids]
    if len(links) <= 3:
        return [
            f"{path}: concept {c} names parent {p}, which is not in the list." for c, p in links
        ]
    return [
        f"{path}: {len(links)} parent links point at concepts not in the list (such as "
        f"{links[0][1]} from {links[0][0]}), e.g. terms of other ontologies; they were left out."
    ]


def _within(concept: ConceptEntry, kept: set[str]) -> ConceptEntry:
    """Return the concept with only the parents that are kept (the first one first)."""
    if not concept.parents or all(p in kept for p in concept.parents):
        return concept
    inside = [p for p in concept.parents if p in kept]
    return concept._replace(parent=inside[0] if inside else None, more_parents=tuple(inside[1:]))


def shared_alias_warnings(path: Path, aliases: Iterable[AliasEntry]) -> list[str]:
    """Warn about alias texts that two different concepts share in one language."""
    owners: dict[tuple[str, str], set[str]] = defaultdict(set)
    for alias in aliases:
        owners[(alias.text.casefold(), alias.lang)].add(alias.concept_id)
    return [
        f"{path}: {text!r} ({lang}) is a synonym of {', '.join(sorted(ids))}; the dictionary "
        "will not link it to either until a label decides."
        for (text, lang), ids in sorted(owners.items())
        if len(ids) > 1
    ]
