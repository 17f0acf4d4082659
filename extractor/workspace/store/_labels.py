"""Append-only labels (undo appends a retraction), skips, and the evaluation and stop samples."""

from __future__ import annotations

import json
import sqlite3
from collections.abc import Iterable, Sequence
from typing import Any, NamedTuple

from extractor.errors import WorkspaceError
from extractor.types import Implicit, Span
from extractor.workspace.store._schema import now, transaction


def _spans_json(spans: Sequence[Span]) -> str:
    return json.dumps(
        [{"start": s.start, "end": s.end, "concept": s.concept, "stance": s.stance} for s in spans]
    )


def _spans_from_json(text: str) -> list[Span]:
    return [Span(d["start"], d["end"], d.get("concept"), d.get("stance")) for d in json.loads(text)]


def _implicit_json(implicit: Sequence[Implicit]) -> str:
    return json.dumps([{"concept": i.concept, "stance": i.stance} for i in implicit])


def _implicit_from_json(text: str | None) -> tuple[Implicit, ...]:
    return tuple(Implicit(d["concept"], d.get("stance")) for d in json.loads(text or "[]"))


def add_label(
    conn: sqlite3.Connection,
    sentence_id: int,
    spans: Sequence[Span],
    annotator: str,
    *,
    origin: str = "terminal",
    implicit: Sequence[Implicit] = (),
) -> int:
    """Append a label; committed on return.

    ``spans`` are the trait mentions with a quote span, ``implicit`` the traits the
    sentence states without one; both empty means "no trait here".
    """
    with transaction(conn):
        cur = conn.execute(
            "INSERT INTO labels (sentence_id, annotator, created_at, action, spans, origin, "
            "implicit) VALUES (?, ?, ?, 'label', ?, ?, ?)",
            (sentence_id, annotator, now(), _spans_json(spans), origin, _implicit_json(implicit)),
        )
    return int(cur.lastrowid or 0)


def retract_label(conn: sqlite3.Connection, label_id: int, annotator: str) -> None:
    """Undo a label by appending a retraction; the history keeps both rows."""
    with transaction(conn):
        row = conn.execute(
            "SELECT sentence_id FROM labels WHERE id = ? AND action = 'label'", (label_id,)
        ).fetchone()
        if row is None:
            raise WorkspaceError(f"Label {label_id} does not exist, so it cannot be undone.")
        conn.execute(
            "INSERT INTO labels (sentence_id, annotator, created_at, action, retracts, origin) "
            "VALUES (?, ?, ?, 'retract', ?, 'undo')",
            (row["sentence_id"], annotator, now(), label_id),
        )


class StoredLabel(NamedTuple):
    """The label in force for one sentence.

    Attributes:
        label_id: The label's row.
        spans: Trait mentions with a quote span (offsets into the sentence).
        annotator: Who gave it.
        created_at: When (ISO 8601, UTC).
        origin: ``terminal``, ``import`` ...
        implicit: Traits the sentence states without a span (concept and stance).
            Empty ``spans`` and empty ``implicit`` mean "no trait here".
    """

    label_id: int
    spans: list[Span]
    annotator: str
    created_at: str
    origin: str
    implicit: tuple[Implicit, ...] = ()

    @property
    def mentions(self) -> list[Span]:
        """The trait mentions with a quote span (the label format's ``mentions``)."""
        return self.spans

    @property
    def empty(self) -> bool:
        """Whether the label says "no trait here"."""
        return not self.spans and not self.implicit


_LABELS_IN_FORCE = (
    "SELECT l.id, l.sentence_id, l.annotator, l.created_at, l.spans, l.origin, l.implicit "
    "FROM labels l "
    "WHERE l.action = 'label' AND l.id NOT IN "
    "(SELECT retracts FROM labels WHERE action = 'retract' AND retracts IS NOT NULL) "
    "ORDER BY l.id"
)
"""Every label not retracted, oldest first (so a later one overrides an earlier in a dict)."""


def _stored_label(row: sqlite3.Row) -> StoredLabel:
    return StoredLabel(
        label_id=row["id"],
        spans=_spans_from_json(row["spans"]),
        annotator=row["annotator"],
        created_at=row["created_at"],
        origin=row["origin"],
        implicit=_implicit_from_json(row["implicit"]),
    )


def current_labels(conn: sqlite3.Connection) -> dict[int, StoredLabel]:
    """Return the label in force per sentence ID: the newest one not retracted."""
    return {row["sentence_id"]: _stored_label(row) for row in conn.execute(_LABELS_IN_FORCE)}


def labels_by_annotator(conn: sqlite3.Connection) -> dict[tuple[int, str], StoredLabel]:
    """Return the label in force per ``(sentence ID, annotator)``: each one's newest."""
    return {
        (row["sentence_id"], row["annotator"]): _stored_label(row)
        for row in conn.execute(_LABELS_IN_FORCE)
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


def label_history(conn: sqlite3.Connection, annotator: str | None = None) -> list[dict[str, Any]]:
    """Return every label row (labels and retractions), oldest first."""
    query = "SELECT * FROM labels"
    params: tuple[Any, ...] = ()
    if annotator is not None:
        query += " WHERE annotator = ?"
        params = (annotator,)
    return [dict(r) for r in conn.execute(query + " ORDER BY id", params)]


def add_skip(conn: sqlite3.Connection, sentence_id: int, annotator: str) -> None:
    """Record that an annotator skipped a sentence."""
    with transaction(conn):
        conn.execute(
            "INSERT INTO skips (sentence_id, annotator, created_at) VALUES (?, ?, ?)",
            (sentence_id, annotator, now()),
        )


def skipped(conn: sqlite3.Connection, annotator: str | None = None) -> set[int]:
    """Return the IDs of sentences skipped (by an annotator, or by anyone)."""
    if annotator is None:
        rows = conn.execute("SELECT DISTINCT sentence_id FROM skips")
    else:
        rows = conn.execute(
            "SELECT DISTINCT sentence_id FROM skips WHERE annotator = ?", (annotator,)
        )
    return {int(r[0]) for r in rows}


# --------------------------------------------------------------------------- samples


def sample_ids(conn: sqlite3.Connection, purpose: str) -> list[int]:
    """Return the sentence IDs of the evaluation or stop sample."""
    rows = conn.execute(
        "SELECT sentence_id FROM samples WHERE purpose = ? ORDER BY sentence_id", (purpose,)
    )
    return [int(r[0]) for r in rows]


def add_to_sample(conn: sqlite3.Connection, purpose: str, ids: Iterable[int]) -> None:
    """Add sentences to the evaluation or stop sample (existing members stay)."""
    with transaction(conn):
        conn.executemany(
            "INSERT OR IGNORE INTO samples (sentence_id, purpose) VALUES (?, ?)",
            [(i, purpose) for i in ids],
        )
