"""Versions of the concept and variety lists, their concepts and aliases."""

from __future__ import annotations

import sqlite3
from collections.abc import Sequence
from typing import NamedTuple

from extractor.errors import WorkspaceError
from extractor.types import AliasEntry, ConceptEntry
from extractor.workspace.store._schema import now, transaction


class ConceptListVersion(NamedTuple):
    """One import of the concept (or variety) list: the file, its hash, when, and its size."""

    id: int
    kind: str
    path: str
    sha256: str
    imported_at: str
    n_concepts: int
    n_aliases: int


_VERSION_SELECT = (
    "SELECT id, kind, path, sha256, imported_at, n_concepts, n_aliases FROM concept_versions"
)


def current_concept_version(
    conn: sqlite3.Connection, kind: str = "trait"
) -> ConceptListVersion | None:
    """Return the newest imported version of the concept (or variety) list, or None."""
    row = conn.execute(
        _VERSION_SELECT + " WHERE kind = ? ORDER BY id DESC LIMIT 1", (kind,)
    ).fetchone()
    return None if row is None else ConceptListVersion(*row)


def concept_versions(conn: sqlite3.Connection) -> list[ConceptListVersion]:
    """Return every imported concept and variety list version, oldest first."""
    return [ConceptListVersion(*r) for r in conn.execute(_VERSION_SELECT + " ORDER BY id")]


def replace_concept_list(
    conn: sqlite3.Connection,
    *,
    kind: str,
    path: str,
    sha256: str,
    concepts: Sequence[ConceptEntry],
    aliases: Sequence[AliasEntry],
) -> int:
    """Store a new version of the concept (or variety) list in one transaction.

    Concepts absent from the new version are kept but marked inactive, since labels may
    refer to them; aliases from the previous list are replaced, aliases accepted by
    annotators are kept.

    Returns:
        The new version's ID.
    """
    stamp = now()
    with transaction(conn):
        cur = conn.execute(
            "INSERT INTO concept_versions (kind, path, sha256, imported_at, n_concepts, n_aliases)"
            " VALUES (?, ?, ?, ?, ?, ?)",
            (kind, path, sha256, stamp, len(concepts), len(aliases)),
        )
        version_id = int(cur.lastrowid or 0)
        conn.execute("UPDATE concepts SET active = 0 WHERE kind = ?", (kind,))
        conn.execute(
            "DELETE FROM concept_parents WHERE concept_id IN "
            "(SELECT id FROM concepts WHERE kind = ?)",
            (kind,),
        )
        for concept in concepts:
            conn.execute(
                "INSERT INTO concepts (id, kind, parent, definition, version_id, active, iri) "
                "VALUES (?, ?, ?, ?, ?, 1, ?) ON CONFLICT (id) DO UPDATE SET "
                "kind = excluded.kind, parent = excluded.parent, "
                "definition = excluded.definition, version_id = excluded.version_id, "
                "active = 1, iri = excluded.iri",
                (concept.id, kind, concept.parent, concept.definition, version_id, concept.iri),
            )
            conn.executemany(
                "INSERT OR IGNORE INTO concept_parents (concept_id, parent_id, position) "
                "VALUES (?, ?, ?)",
                [(concept.id, p, i) for i, p in enumerate(concept.parents)],
            )
        conn.execute(
            "DELETE FROM aliases WHERE origin = 'list' AND concept_id IN "
            "(SELECT id FROM concepts WHERE kind = ?)",
            (kind,),
        )
        conn.executemany(
            "INSERT OR IGNORE INTO aliases (concept_id, text, lang, kind, origin, added_at) "
            "VALUES (?, ?, ?, ?, 'list', ?)",
            [(a.concept_id, a.text, a.lang, a.kind, stamp) for a in aliases],
        )
    return version_id


def add_alias(
    conn: sqlite3.Connection, concept_id: str, text: str, lang: str, annotator: str
) -> bool:
    """Add an annotator-accepted alias; return False when it was already there."""
    with transaction(conn):
        known = conn.execute("SELECT 1 FROM concepts WHERE id = ?", (concept_id,)).fetchone()
        if known is None:
            raise WorkspaceError(
                f"Concept {concept_id!r} is not in the imported concept list; "
                "check the ID with `traits concepts list`."
            )
        cur = conn.execute(
            "INSERT OR IGNORE INTO aliases (concept_id, text, lang, kind, origin, added_by, "
            "added_at) VALUES (?, ?, ?, 'alternative', 'annotator', ?, ?)",
            (concept_id, text, lang, annotator, now()),
        )
    return cur.rowcount > 0


class StoredConcept(NamedTuple):
    """An active concept (or variety) with its preferred label per language.

    ``parent`` is the first parent, ``parents`` all of them; ``iri`` the SKOS IRI.
    """

    id: str
    parent: str | None
    definition: str | None
    labels: dict[str, str]
    parents: tuple[str, ...] = ()
    iri: str | None = None


class StoredAlias(NamedTuple):
    """A name of a concept in one language; ``origin`` is ``list`` or ``annotator``."""

    concept_id: str
    text: str
    lang: str
    kind: str
    origin: str
    added_by: str | None


def concepts(conn: sqlite3.Connection, kind: str = "trait") -> list[StoredConcept]:
    """Return active concepts with their preferred labels per language."""
    out = []
    parents: dict[str, list[str]] = {}
    for concept_id, parent_id in conn.execute(
        "SELECT p.concept_id, p.parent_id FROM concept_parents p JOIN concepts c "
        "ON c.id = p.concept_id WHERE c.kind = ? ORDER BY p.concept_id, p.position",
        (kind,),
    ):
        parents.setdefault(concept_id, []).append(parent_id)
    for row in conn.execute(
        "SELECT id, parent, definition, iri FROM concepts WHERE kind = ? AND active = 1 "
        "ORDER BY id",
        (kind,),
    ):
        labels = {
            r["lang"]: r["text"]
            for r in conn.execute(
                "SELECT lang, text FROM aliases WHERE concept_id = ? AND kind = 'preferred' "
                "ORDER BY id",
                (row["id"],),
            )
        }
        out.append(
            StoredConcept(
                row["id"],
                row["parent"],
                row["definition"],
                labels,
                tuple(parents.get(row["id"], ())),
                row["iri"],
            )
        )
    return out


def aliases(conn: sqlite3.Connection, kind: str = "trait") -> list[StoredAlias]:
    """Return every alias of the active concepts (or varieties)."""
    rows = conn.execute(
        "SELECT a.concept_id, a.text, a.lang, a.kind, a.origin, a.added_by FROM aliases a "
        "JOIN concepts c ON c.id = a.concept_id WHERE c.kind = ? AND c.active = 1 "
        "ORDER BY a.concept_id, a.id",
        (kind,),
    ).fetchall()
    return [StoredAlias(*r) for r in rows]
