"""Sources, respondents, answers and their sentences (cut from the answer when read)."""

from __future__ import annotations

import hashlib
import json
import sqlite3
from collections.abc import Iterable, Sequence
from typing import Any, NamedTuple

from extractor.errors import WorkspaceError
from extractor.types import AnswerRow, Sentence
from extractor.workspace.store._schema import now, transaction


def source_known(conn: sqlite3.Connection, path: str, sha256: str) -> bool:
    """Return True when this exact file content was already added from this path."""
    row = conn.execute(
        "SELECT 1 FROM sources WHERE path = ? AND sha256 = ?", (path, sha256)
    ).fetchone()
    return row is not None


def answer_fingerprint(respondent: str, question: str | None, text: str) -> str:
    """Return the identity of an answer: the same respondent, question and text is one answer."""
    key = "\x1f".join((respondent, question or "", text))
    return hashlib.sha256(key.encode("utf-8")).hexdigest()


def add_source(
    conn: sqlite3.Connection,
    *,
    path: str,
    sha256: str,
    kind: str,
    options: dict[str, Any],
    rows: Sequence[AnswerRow],
    sentence_offsets: Sequence[Sequence[tuple[int, int]]],
) -> dict[str, int]:
    """Store one read file: the source, new respondents, new answers and their sentences.

    ``rows`` are reader rows; ``sentence_offsets[i]`` are the sentence offsets of
    ``rows[i].answer``. Answers already stored (same respondent, question and text)
    are skipped, so re-adding a changed file adds only what is new. One transaction.

    Returns:
        Counts of new respondents, answers and sentences.
    """
    counts = {"respondents": 0, "answers": 0, "sentences": 0}
    stamp = now()
    with transaction(conn):
        cur = conn.execute(
            "INSERT INTO sources (path, sha256, kind, options, added_at) VALUES (?, ?, ?, ?, ?)",
            (path, sha256, kind, json.dumps(options, sort_keys=True), stamp),
        )
        source_id = cur.lastrowid
        for row, offsets in zip(rows, sentence_offsets, strict=True):
            respondent_id, created = _upsert_respondent(conn, row, stamp)
            counts["respondents"] += created
            if _add_answer(conn, row, offsets, respondent_id=respondent_id, source_id=source_id):
                counts["answers"] += 1
                counts["sentences"] += len(offsets)
        conn.execute(
            "UPDATE sources SET n_new_answers = ? WHERE id = ?", (counts["answers"], source_id)
        )
    return counts


def _add_answer(
    conn: sqlite3.Connection,
    row: AnswerRow,
    offsets: Sequence[tuple[int, int]],
    *,
    respondent_id: int,
    source_id: int | None,
) -> bool:
    """Store an answer and its sentences; return False when the answer was already stored."""
    fingerprint = answer_fingerprint(row.respondent, row.question, row.answer)
    cur = conn.execute(
        "INSERT OR IGNORE INTO answers (respondent_id, source_id, question, text, lang, "
        "lang_origin, variety, speaker, sheet, row, fingerprint) "
        "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
        (
            respondent_id,
            source_id,
            row.question,
            row.answer,
            row.lang,
            row.lang_origin,
            row.variety,
            row.speaker,
            row.sheet,
            row.row,
            fingerprint,
        ),
    )
    if cur.rowcount == 0:
        return False
    answer_id = cur.lastrowid
    conn.executemany(
        "INSERT INTO sentences (answer_id, position, start, end) VALUES (?, ?, ?, ?)",
        [(answer_id, i, s, e) for i, (s, e) in enumerate(offsets)],
    )
    return True


def _upsert_respondent(conn: sqlite3.Connection, row: AnswerRow, stamp: str) -> tuple[int, int]:
    """Insert a respondent or merge new metadata keys into the stored ones."""
    external = row.respondent
    metadata = {k: v for k, v in row.metadata.items() if v not in (None, "")}
    found = conn.execute(
        "SELECT id, metadata, is_group FROM respondents WHERE external_id = ?", (external,)
    ).fetchone()
    if found is None:
        cur = conn.execute(
            "INSERT INTO respondents (external_id, metadata, is_group, created_at) "
            "VALUES (?, ?, ?, ?)",
            (external, json.dumps(metadata, sort_keys=True), int(row.is_group), stamp),
        )
        return int(cur.lastrowid or 0), 1
    merged = json.loads(found["metadata"])
    merged.update({k: v for k, v in metadata.items() if k not in merged})
    conn.execute(
        "UPDATE respondents SET metadata = ?, is_group = ? WHERE id = ?",
        (
            json.dumps(merged, sort_keys=True),
            int(bool(found["is_group"]) or row.is_group),
            found["id"],
        ),
    )
    return int(found["id"]), 0


def sources(conn: sqlite3.Connection) -> list[dict[str, Any]]:
    """Return every added source, oldest first."""
    rows = conn.execute("SELECT * FROM sources ORDER BY id").fetchall()
    return [dict(r) for r in rows]


# --------------------------------------------------------------------------- sentences

_SENTENCE_SELECT = (
    "SELECT s.id, substr(a.text, s.start + 1, s.end - s.start) AS text, a.lang, a.question, "
    "r.external_id AS respondent, a.id AS answer_id, s.start AS offset "
    "FROM sentences s JOIN answers a ON a.id = s.answer_id "
    "JOIN respondents r ON r.id = a.respondent_id"
)


def _sentence(row: sqlite3.Row) -> Sentence:
    return Sentence(
        id=row["id"],
        text=row["text"],
        lang=row["lang"],
        question=row["question"],
        respondent=row["respondent"],
        answer_id=row["answer_id"],
        offset=row["offset"],
    )


def sentences(conn: sqlite3.Connection, ids: Iterable[int] | None = None) -> list[Sentence]:
    """Return sentences (all, or those with the given IDs) in answer order.

    The text is cut from the stored answer with the stored offsets, so it can never
    drift from the answer it belongs to.
    """
    if ids is None:
        rows = conn.execute(_SENTENCE_SELECT + " ORDER BY s.answer_id, s.position").fetchall()
        return [_sentence(r) for r in rows]
    wanted = list(ids)
    found: dict[int, Sentence] = {}
    for chunk_start in range(0, len(wanted), 900):
        chunk = wanted[chunk_start : chunk_start + 900]
        marks = ",".join("?" * len(chunk))
        for row in conn.execute(_SENTENCE_SELECT + f" WHERE s.id IN ({marks})", chunk):
            found[row["id"]] = _sentence(row)
    return [found[i] for i in wanted if i in found]


def find_sentence(conn: sqlite3.Connection, text: str, respondent: str | None) -> int | None:
    """Return the ID of a stored sentence with this exact text (and respondent, if given)."""
    query = _SENTENCE_SELECT + " WHERE substr(a.text, s.start + 1, s.end - s.start) = ?"
    params: list[Any] = [text]
    if respondent is not None:
        query += " AND r.external_id = ?"
        params.append(respondent)
    row = conn.execute(query + " ORDER BY s.id LIMIT 1", params).fetchone()
    return None if row is None else int(row["id"])


class SentenceContext(NamedTuple):
    """What an annotator sees around a sentence."""

    question: str | None
    previous: str | None
    respondent: str
    metadata: dict[str, Any]
    is_group: bool
    variety: str | None


def sentence_context(conn: sqlite3.Connection, sentence_id: int) -> SentenceContext:
    """Return what an annotator needs around a sentence: question, previous sentence, metadata."""
    row = conn.execute(
        "SELECT s.answer_id, s.position, a.question, a.text, a.variety, r.external_id, "
        "r.metadata, r.is_group FROM sentences s JOIN answers a ON a.id = s.answer_id "
        "JOIN respondents r ON r.id = a.respondent_id WHERE s.id = ?",
        (sentence_id,),
    ).fetchone()
    if row is None:
        raise WorkspaceError(f"Sentence {sentence_id} is not in this workspace.")
    previous = conn.execute(
        "SELECT start, end FROM sentences WHERE answer_id = ? AND position = ?",
        (row["answer_id"], row["position"] - 1),
    ).fetchone()
    return SentenceContext(
        question=row["question"],
        previous=None if previous is None else row["text"][previous["start"] : previous["end"]],
        respondent=row["external_id"],
        metadata=json.loads(row["metadata"]),
        is_group=bool(row["is_group"]),
        variety=row["variety"],
    )


class StoredAnswer(NamedTuple):
    """One stored answer with its respondent's external ID."""

    id: int
    respondent: str
    question: str | None
    text: str
    lang: str
    variety: str | None


def answers(conn: sqlite3.Connection) -> list[StoredAnswer]:
    """Return every answer with its respondent's external ID."""
    rows = conn.execute(
        "SELECT a.id, r.external_id AS respondent, a.question, a.text, a.lang, a.variety "
        "FROM answers a JOIN respondents r ON r.id = a.respondent_id ORDER BY a.id"
    ).fetchall()
    return [StoredAnswer(*r) for r in rows]


class StoredQuestion(NamedTuple):
    """One stored question, the commonest language of its answers, and their count."""

    question: str
    lang: str
    answers: int


def questions(conn: sqlite3.Connection) -> list[StoredQuestion]:
    """Return every distinct stored question, most answered first."""
    rows = conn.execute(
        "SELECT question, lang, COUNT(*) FROM answers WHERE question IS NOT NULL "
        "GROUP BY question, lang ORDER BY COUNT(*) DESC, question, lang"
    ).fetchall()
    found: dict[str, StoredQuestion] = {}
    for question, lang, n in rows:
        seen = found.get(question)
        found[question] = (
            StoredQuestion(question, lang, n)
            if seen is None
            else seen._replace(answers=seen.answers + n)
        )
    return sorted(found.values(), key=lambda q: (-q.answers, q.question))


def respondents(conn: sqlite3.Connection) -> list[dict[str, Any]]:
    """Return respondents as dicts: ``respondent``, ``is_group`` and their metadata keys."""
    out = []
    for row in conn.execute("SELECT external_id, metadata, is_group FROM respondents ORDER BY id"):
        out.append(
            {"respondent": row["external_id"], "is_group": bool(row["is_group"])}
            | json.loads(row["metadata"])
        )
    return out


METADATA_RENAMES_KEY = "metadata_renames"
"""Meta key of the column renames given to ``traits add --metadata`` (a JSON object)."""


def metadata_renames(conn: sqlite3.Connection) -> dict[str, str]:
    """Return the stored metadata column renames: stored column -> the column it is read as."""
    row = conn.execute("SELECT value FROM meta WHERE key = ?", (METADATA_RENAMES_KEY,)).fetchone()
    return {} if row is None else dict(json.loads(row["value"]))


def add_metadata_renames(conn: sqlite3.Connection, renames: dict[str, str]) -> dict[str, str]:
    """Add column renames (a later one for the same column replaces it); return them all."""
    with transaction(conn):
        merged = metadata_renames(conn) | dict(renames)
        conn.execute(
            "INSERT INTO meta (key, value) VALUES (?, ?) "
            "ON CONFLICT (key) DO UPDATE SET value = excluded.value",
            (METADATA_RENAMES_KEY, json.dumps(merged, sort_keys=True)),
        )
    return merged


# --------------------------------------------------------------------------- languages


class AnswerLanguage(NamedTuple):
    """One stored answer's text and language, for setting or detecting its language."""

    id: int
    text: str
    lang: str
    origin: str


def select_answers(
    conn: sqlite3.Connection,
    *,
    source_path: str | None = None,
    respondent: str | None = None,
    answer_id: int | None = None,
) -> list[AnswerLanguage]:
    """Return the answers first added from a file, of a respondent or with an ID (all if none)."""
    query = (
        "SELECT a.id, a.text, a.lang, a.lang_origin FROM answers a "
        "JOIN respondents r ON r.id = a.respondent_id JOIN sources s ON s.id = a.source_id"
    )
    where, params = [], []
    for column, value in (
        ("s.path", source_path),
        ("r.external_id", respondent),
        ("a.id", answer_id),
    ):
        if value is not None:
            where.append(f"{column} = ?")
            params.append(value)
    if where:
        query += " WHERE " + " AND ".join(where)
    rows = conn.execute(query + " ORDER BY a.id", params).fetchall()
    return [AnswerLanguage(*r) for r in rows]


def set_answer_languages(conn: sqlite3.Connection, changes: Sequence[tuple[int, str, str]]) -> int:
    """Set the language of answers and drop the predictions of their sentences, as stale.

    ``changes`` are ``(answer_id, tag, origin)``. Sentences and their labels are kept as
    they are (labels point at the sentences); only the model's predictions, made with the
    old language's tokens, are removed so that the next tagging computes them again. One
    transaction.

    Returns:
        How many sentences lost their (stale) predictions.
    """
    stale = 0
    with transaction(conn):
        for answer_id, tag, origin in changes:
            conn.execute(
                "UPDATE answers SET lang = ?, lang_origin = ? WHERE id = ?",
                (tag, origin, answer_id),
            )
            # Sentences, not prediction rows: each model version holds one row per sentence.
            stale += conn.execute(
                "SELECT COUNT(DISTINCT p.sentence_id) FROM predictions p "
                "JOIN sentences s ON s.id = p.sentence_id WHERE s.answer_id = ?",
                (answer_id,),
            ).fetchone()[0]
            conn.execute(
                "DELETE FROM predictions WHERE sentence_id IN "
                "(SELECT id FROM sentences WHERE answer_id = ?)",
                (answer_id,),
            )
    return stale
