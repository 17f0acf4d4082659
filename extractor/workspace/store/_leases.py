"""Leases of sentences to live labeling sessions.

Two annotators may label one workspace at the same time. Each session holds the
sentence it shows with a lease that runs out (so a killed session frees its sentences),
and no other session is handed a held or already labeled sentence. When two people do
label one sentence (a lease ran out, or labels were imported), both labels are kept
(labels are append-only) and ``disagreements`` in the labels module lists the sentence
for adjudication.
"""

from __future__ import annotations

import sqlite3
import time

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
