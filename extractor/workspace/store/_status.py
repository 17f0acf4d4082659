"""The workspace's counts, for ``traits status``."""

from __future__ import annotations

import sqlite3
from typing import Any

from extractor.workspace.store._labels import current_labels


def counts(conn: sqlite3.Connection) -> dict[str, Any]:
    """Return the workspace's counts for ``traits status``."""

    def one(query: str) -> int:
        return int(conn.execute(query).fetchone()[0])

    tags = {
        row["lang"]: row["n"]
        for row in conn.execute(
            "SELECT a.lang, COUNT(s.id) AS n FROM sentences s JOIN answers a ON a.id = s.answer_id"
            " GROUP BY a.lang ORDER BY n DESC"
        )
    }
    # Languages are counted by primary subtag (es and es-419 are both Spanish); the full
    # tags are kept under language_tags.
    languages: dict[str, int] = {}
    for tag, n in tags.items():
        primary = tag.split("-")[0]
        languages[primary] = languages.get(primary, 0) + n
    return {
        "sources": one("SELECT COUNT(*) FROM sources"),
        "respondents": one("SELECT COUNT(*) FROM respondents"),
        "answers": one("SELECT COUNT(*) FROM answers"),
        "sentences": one("SELECT COUNT(*) FROM sentences"),
        "languages": dict(sorted(languages.items(), key=lambda kv: -kv[1])),
        "language_tags": tags,
        "concepts": one("SELECT COUNT(*) FROM concepts WHERE kind = 'trait' AND active = 1"),
        "aliases": one(
            "SELECT COUNT(*) FROM aliases a JOIN concepts c ON c.id = a.concept_id "
            "WHERE c.kind = 'trait' AND c.active = 1"
        ),
        "varieties": one("SELECT COUNT(*) FROM concepts WHERE kind = 'variety' AND active = 1"),
        "labels": len(current_labels(conn)),
        "models": one("SELECT COUNT(*) FROM models"),
    }
