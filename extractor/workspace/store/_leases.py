"""Leases of sentences to live labeling sessions, and labels per annotator.

Two annotators may label one workspace at the same time. Each session holds the
sentence it shows with a lease that runs out (so a killed session frees its sentences),
and no other session is handed a held or already labeled sentence. When two people do
label one sentence (a lease ran out, or labels were imported), both labels are kept
(labels are append-only) and :func:`disagreements` lists the sentence for adjudication.
"""

from __future__ import annotations

import sqlite3
import time
from typing import NamedTuple

from extractor.workspace.store._labels import StoredLabel, _implicit_from_json, _spans_from_json
from extractor.workspace.store._schema import transaction

_IN_FORCE = (
    "SELECT 1 FROM labels l WHERE l.sentence_id = ? AND l.action = 'label' AND l.id NOT IN "
    "(SELECT retracts FROM labels WHERE action = 'retract' AND retracts IS NOT NULL)"
)


def claim_sentence(
    conn: sqlite3.Connection, sentence_id: int, holder: str, *, ttl_s: float
) -> bool:
    """Hold a sentence for ``ttl_s`` seconds; renewing one's own lease is allowed.

    Returns:
        False when another live session holds it, or someone has labeled it.
    """
    stamp = time.time()
    with transaction(conn):
        if conn.execute(_IN_FORCE, (sentence_id,)).fetchone() is not None:
            return False
        row = conn.execute(
            "SELECT holder, expires_at FROM leases WHERE sentence_id = ?", (sentence_id,)
        ).fetchone()
        if row is not None and row["holder"] != holder and row["expires_at"] > stamp:
            return False
        conn.execute(
            "INSERT OR REPLACE INTO leases (sentence_id, holder, expires_at) VALUES (?, ?, ?)",
            (sentence_id, holder, stamp + ttl_s),
        )
    return True


def release_sentences(
    conn: sqlite3.Connection, holder: str, sentence_id: int | None = None
) -> None:
    """Give up one sentence's lease, or all of a session's leases."""
    with transaction(conn):
        if sentence_id is None:
            conn.execute("DELETE FROM leases WHERE holder = ?", (holder,))
        else:
            conn.execute(
                "DELETE FROM leases WHERE holder = ? AND sentence_id = ?", (holder, sentence_id)
            )


def held_elsewhere(conn: sqlite3.Connection, holder: str) -> set[int]:
    """Return the sentences other live sessions hold now."""
    rows = conn.execute(
        "SELECT sentence_id FROM leases WHERE holder != ? AND expires_at > ?",
        (holder, time.time()),
    )
    return {int(r[0]) for r in rows}


def labels_by_annotator(conn: sqlite3.Connection) -> dict[tuple[int, str], StoredLabel]:
    """Return the label in force per ``(sentence ID, annotator)``: each one's newest."""
    rows = conn.execute(
        "SELECT l.id, l.sentence_id, l.annotator, l.created_at, l.spans, l.origin, l.implicit "
        "FROM labels l "
        "WHERE l.action = 'label' AND l.id NOT IN "
        "(SELECT retracts FROM labels WHERE action = 'retract' AND retracts IS NOT NULL) "
        "ORDER BY l.id"
    ).fetchall()
    return {
        (row["sentence_id"], row["annotator"]): StoredLabel(
            label_id=row["id"],
            spans=_spans_from_json(row["spans"]),
            annotator=row["annotator"],
            created_at=row["created_at"],
            origin=row["origin"],
            implicit=_implicit_from_json(row["implicit"]),
        )
        for row in rows
    }


class Disagreement(NamedTuple):
    """A sentence two or more annotators labeled differently, with each one's label."""

    sentence_id: int
    labels: tuple[StoredLabel, ...]


def disagreements(conn: sqlite3.Connection) -> list[Disagreement]:
    """Return the sentences whose annotators' labels in force differ, for adjudication."""
    per_sentence: dict[int, list[StoredLabel]] = {}
    for (sentence_id, _), label in labels_by_annotator(conn).items():
        per_sentence.setdefault(sentence_id, []).append(label)
    found = []
    for sentence_id, labels in sorted(per_sentence.items()):
        answers = {(frozenset(label.spans), frozenset(label.implicit)) for label in labels}
        if len(labels) > 1 and len(answers) > 1:
            found.append(Disagreement(sentence_id, tuple(labels)))
    return found
