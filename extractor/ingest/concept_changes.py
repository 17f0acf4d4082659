"""What a new version of a concept list changes, worked out before it is applied.

Concepts are matched by ID. A concept whose preferred label changed in a language is
*renamed*; one whose alternative or hidden aliases from the list changed has *changed
synonyms*. Aliases accepted by annotators are not the list's and are never compared.
Labels that point at a removed concept are kept (the concept stays in the store,
inactive) and counted here so that the curator sees them.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field

from extractor.types import AliasEntry, ConceptEntry
from extractor.workspace.store import StoredAlias, StoredConcept, StoredLabel


@dataclass(frozen=True)
class Rename:
    """A concept's preferred label in one language, before and after."""

    concept: str
    lang: str
    before: str
    after: str


@dataclass(frozen=True)
class SynonymChange:
    """The list's other names of one concept that a new version adds or drops."""

    concept: str
    added: tuple[str, ...]
    removed: tuple[str, ...]


@dataclass(frozen=True)
class ConceptChanges:
    """What importing a new version changes, compared with the list in force.

    Attributes:
        added: IDs of concepts new in this version.
        removed: IDs of concepts in force that this version leaves out.
        renamed: Preferred labels that changed.
        synonyms: Concepts whose other names changed.
        labels_kept: Removed concept ID -> sentences whose label in force points at it;
            these labels are kept, never deleted.
        first: Whether there was no list in force (then nothing is compared).
    """

    added: tuple[str, ...] = ()
    removed: tuple[str, ...] = ()
    renamed: tuple[Rename, ...] = ()
    synonyms: tuple[SynonymChange, ...] = ()
    labels_kept: Mapping[str, int] = field(default_factory=dict)
    first: bool = False

    @property
    def any(self) -> bool:
        """Whether anything changes."""
        return bool(self.added or self.removed or self.renamed or self.synonyms)


def _names(aliases: Iterable[tuple[str, str, str, str]]) -> dict[str, dict[str, set[str]]]:
    """Return concept -> ``preferred:lang`` / ``other`` -> texts, from (id, text, lang, kind)."""
    out: dict[str, dict[str, set[str]]] = {}
    for cid, text, lang, kind in aliases:
        key = f"preferred:{lang}" if kind == "preferred" else "other"
        value = text if kind == "preferred" else f"{text} ({lang})"
        out.setdefault(cid, {}).setdefault(key, set()).add(value)
    return out


def compare_lists(
    current: Sequence[StoredConcept],
    current_aliases: Sequence[StoredAlias],
    concepts: Sequence[ConceptEntry],
    aliases: Sequence[AliasEntry],
    labels: Mapping[int, StoredLabel],
) -> ConceptChanges:
    """Return what replacing the list in force by ``concepts`` and ``aliases`` changes."""
    if not current:
        return ConceptChanges(added=tuple(c.id for c in concepts), first=True)
    before_ids = [c.id for c in current]
    after_ids = {c.id for c in concepts}
    added = tuple(c.id for c in concepts if c.id not in set(before_ids))
    removed = tuple(cid for cid in before_ids if cid not in after_ids)
    before = _names((a.concept_id, a.text, a.lang, a.kind) for a in current_aliases
                    if a.origin == "list")  # fmt: skip
    after = _names((a.concept_id, a.text, a.lang, a.kind) for a in aliases)
    renamed: list[Rename] = []
    synonyms: list[SynonymChange] = []
    for cid in sorted(set(before_ids) & after_ids):
        old, new = before.get(cid, {}), after.get(cid, {})
        for key in sorted(k for k in old.keys() & new.keys() if k.startswith("preferred:")):
            if old[key] != new[key]:
                lang = key.split(":", 1)[1]
                renamed.append(Rename(cid, lang, min(old[key]), min(new[key])))
        gained = new.get("other", set()) - old.get("other", set())
        lost = old.get("other", set()) - new.get("other", set())
        if gained or lost:
            synonyms.append(SynonymChange(cid, tuple(sorted(gained)), tuple(sorted(lost))))
    gone = set(removed)
    kept = Counter(
        span.concept
        for label in labels.values()
        for span in {s.concept: s for s in label.spans}.values()
        if span.concept in gone
    )
    return ConceptChanges(added, removed, tuple(renamed), tuple(synonyms), dict(kept))
