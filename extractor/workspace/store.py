"""The workspace's SQLite store: schema, forward migrations and every SQL statement.

Nothing else in the package writes SQL. The store runs in WAL mode with foreign keys
on; every write that belongs together runs in one transaction (:func:`transaction`),
so a failed ingest or import leaves the store exactly as it was, and a label is on
disk the moment :func:`add_label` returns.

Labels are append-only: undo appends a ``retract`` row instead of deleting, so the
full history of who labeled what, and when, is kept.
"""

from __future__ import annotations

import hashlib
import json
import sqlite3
from collections.abc import Iterable, Iterator, Sequence
from contextlib import contextmanager
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from extractor.errors import WorkspaceError
from extractor.types import Sentence, Span

SCHEMA_V1 = """
CREATE TABLE meta (
    key TEXT PRIMARY KEY,
    value TEXT NOT NULL
);
CREATE TABLE sources (
    id INTEGER PRIMARY KEY,
    path TEXT NOT NULL,
    sha256 TEXT NOT NULL,
    kind TEXT NOT NULL,
    options TEXT NOT NULL DEFAULT '{}',
    added_at TEXT NOT NULL,
    n_new_answers INTEGER NOT NULL DEFAULT 0,
    UNIQUE (path, sha256)
);
CREATE TABLE respondents (
    id INTEGER PRIMARY KEY,
    external_id TEXT NOT NULL UNIQUE,
    metadata TEXT NOT NULL DEFAULT '{}',
    is_group INTEGER NOT NULL DEFAULT 0,
    created_at TEXT NOT NULL
);
CREATE TABLE answers (
    id INTEGER PRIMARY KEY,
    respondent_id INTEGER NOT NULL REFERENCES respondents (id),
    source_id INTEGER NOT NULL REFERENCES sources (id),
    question TEXT,
    text TEXT NOT NULL,
    lang TEXT NOT NULL,
    lang_origin TEXT NOT NULL CHECK (lang_origin IN ('column', 'detected', 'default')),
    variety TEXT,
    speaker TEXT,
    sheet TEXT,
    row INTEGER,
    fingerprint TEXT NOT NULL UNIQUE
);
CREATE TABLE sentences (
    id INTEGER PRIMARY KEY,
    answer_id INTEGER NOT NULL REFERENCES answers (id),
    position INTEGER NOT NULL,
    start INTEGER NOT NULL,
    end INTEGER NOT NULL,
    UNIQUE (answer_id, start)
);
CREATE TABLE concept_versions (
    id INTEGER PRIMARY KEY,
    kind TEXT NOT NULL CHECK (kind IN ('trait', 'variety')),
    path TEXT NOT NULL,
    sha256 TEXT NOT NULL,
    imported_at TEXT NOT NULL,
    n_concepts INTEGER NOT NULL,
    n_aliases INTEGER NOT NULL
);
CREATE TABLE concepts (
    id TEXT PRIMARY KEY,
    kind TEXT NOT NULL CHECK (kind IN ('trait', 'variety')),
    parent TEXT,
    definition TEXT,
    version_id INTEGER NOT NULL REFERENCES concept_versions (id),
    active INTEGER NOT NULL DEFAULT 1
);
CREATE TABLE aliases (
    id INTEGER PRIMARY KEY,
    concept_id TEXT NOT NULL REFERENCES concepts (id),
    text TEXT NOT NULL,
    lang TEXT NOT NULL,
    kind TEXT NOT NULL CHECK (kind IN ('preferred', 'alternative', 'hidden')),
    origin TEXT NOT NULL CHECK (origin IN ('list', 'annotator')),
    added_by TEXT,
    added_at TEXT NOT NULL,
    UNIQUE (concept_id, text, lang)
);
CREATE TABLE labels (
    id INTEGER PRIMARY KEY,
    sentence_id INTEGER NOT NULL REFERENCES sentences (id),
    annotator TEXT NOT NULL,
    created_at TEXT NOT NULL,
    action TEXT NOT NULL CHECK (action IN ('label', 'retract')),
    spans TEXT NOT NULL DEFAULT '[]',
    retracts INTEGER REFERENCES labels (id),
    origin TEXT NOT NULL DEFAULT 'terminal'
);
CREATE INDEX labels_sentence ON labels (sentence_id);
CREATE TABLE skips (
    sentence_id INTEGER NOT NULL REFERENCES sentences (id),
    annotator TEXT NOT NULL,
    created_at TEXT NOT NULL
);
CREATE TABLE models (
    version TEXT PRIMARY KEY,
    created_at TEXT NOT NULL,
    path TEXT NOT NULL,
    meta TEXT NOT NULL,
    metrics TEXT NOT NULL DEFAULT '{}'
);
CREATE TABLE predictions (
    sentence_id INTEGER NOT NULL REFERENCES sentences (id),
    model_version TEXT NOT NULL REFERENCES models (version),
    path_prob REAL,
    spans TEXT NOT NULL DEFAULT '[]',
    PRIMARY KEY (sentence_id, model_version)
);
CREATE TABLE samples (
    sentence_id INTEGER NOT NULL REFERENCES sentences (id),
    purpose TEXT NOT NULL CHECK (purpose IN ('evaluation', 'stop')),
    PRIMARY KEY (sentence_id, purpose)
);
"""

MIGRATIONS: tuple[str, ...] = (SCHEMA_V1,)
"""Forward migrations; ``MIGRATIONS[i]`` takes the schema from version ``i`` to ``i + 1``."""

SCHEMA_VERSION = len(MIGRATIONS)


def now() -> str:
    """Return the current UTC time as an ISO 8601 string (seconds)."""
    return datetime.now(UTC).isoformat(timespec="seconds")


# --------------------------------------------------------------------------- connection


def connect(path: Path, *, create: bool = False) -> sqlite3.Connection:
    """Open (or create) the store at ``path`` and bring its schema up to date.

    Raises:
        WorkspaceError: the file is missing (and ``create`` is false), is not an SQLite
            database, or was written by a newer version of the tool.
    """
    if not create and not path.exists():
        raise WorkspaceError(f"{path} does not exist; run `traits init` to create a workspace.")
    try:
        conn = sqlite3.connect(path, isolation_level=None, timeout=30)
        conn.row_factory = sqlite3.Row
        conn.execute("PRAGMA journal_mode=WAL")
        conn.execute("PRAGMA foreign_keys=ON")
        conn.execute("PRAGMA synchronous=NORMAL")
        migrate(conn)
    except sqlite3.DatabaseError as exc:
        raise WorkspaceError(
            f"{path} is not a readable trait-extractor store ({exc}); restore it from a backup "
            "or create a new workspace with `traits init`."
        ) from exc
    return conn


def migrate(conn: sqlite3.Connection) -> int:
    """Apply pending forward migrations in one transaction and return the schema version."""
    version = conn.execute("PRAGMA user_version").fetchone()[0]
    if version > SCHEMA_VERSION:
        raise WorkspaceError(
            f"This workspace uses store schema {version}, newer than this tool's "
            f"{SCHEMA_VERSION}; upgrade trait-extractor to open it."
        )
    if version == SCHEMA_VERSION:
        return version
    with transaction(conn):
        for step in range(version, SCHEMA_VERSION):
            for statement in MIGRATIONS[step].split(";"):
                if statement.strip():
                    conn.execute(statement)
        # PRAGMA cannot take parameters; the value is our own integer.
        conn.execute(f"PRAGMA user_version = {SCHEMA_VERSION}")
    return SCHEMA_VERSION


def schema_version(conn: sqlite3.Connection) -> int:
    """Return the store's schema version."""
    return int(conn.execute("PRAGMA user_version").fetchone()[0])


@contextmanager
def transaction(conn: sqlite3.Connection) -> Iterator[sqlite3.Connection]:
    """Run a block in one write transaction: all of it is stored, or none of it."""
    if conn.in_transaction:
        # Nested use joins the outer transaction, which commits or rolls back as a whole.
        yield conn
        return
    conn.execute("BEGIN IMMEDIATE")
    try:
        yield conn
    except BaseException:
        conn.execute("ROLLBACK")
        raise
    conn.execute("COMMIT")


def get_meta(conn: sqlite3.Connection, key: str) -> str | None:
    """Return a value from the meta table, or None."""
    row = conn.execute("SELECT value FROM meta WHERE key = ?", (key,)).fetchone()
    return None if row is None else str(row["value"])


def set_meta(conn: sqlite3.Connection, key: str, value: str) -> None:
    """Set a value in the meta table."""
    with transaction(conn):
        conn.execute(
            "INSERT INTO meta (key, value) VALUES (?, ?) "
            "ON CONFLICT (key) DO UPDATE SET value = excluded.value",
            (key, value),
        )


# --------------------------------------------------------------------------- sources, answers


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
    rows: Sequence[dict[str, Any]],
    sentence_offsets: Sequence[Sequence[tuple[int, int]]],
) -> dict[str, int]:
    """Store one read file: the source, new respondents, new answers and their sentences.

    ``rows`` are reader rows (respondent, question, answer, lang, lang_origin, variety,
    metadata, sheet, row, is_group); ``sentence_offsets[i]`` are the sentence offsets of
    ``rows[i]["answer"]``. Answers already stored (same respondent, question and text)
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
            fingerprint = answer_fingerprint(row["respondent"], row.get("question"), row["answer"])
            cur = conn.execute(
                "INSERT OR IGNORE INTO answers (respondent_id, source_id, question, text, lang, "
                "lang_origin, variety, speaker, sheet, row, fingerprint) "
                "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (
                    respondent_id,
                    source_id,
                    row.get("question"),
                    row["answer"],
                    row["lang"],
                    row["lang_origin"],
                    row.get("variety"),
                    row.get("speaker"),
                    row.get("sheet"),
                    row.get("row"),
                    fingerprint,
                ),
            )
            if cur.rowcount == 0:
                continue
            answer_id = cur.lastrowid
            counts["answers"] += 1
            conn.executemany(
                "INSERT INTO sentences (answer_id, position, start, end) VALUES (?, ?, ?, ?)",
                [(answer_id, i, s, e) for i, (s, e) in enumerate(offsets)],
            )
            counts["sentences"] += len(offsets)
        conn.execute(
            "UPDATE sources SET n_new_answers = ? WHERE id = ?", (counts["answers"], source_id)
        )
    return counts


def _upsert_respondent(
    conn: sqlite3.Connection, row: dict[str, Any], stamp: str
) -> tuple[int, int]:
    """Insert a respondent or merge new metadata keys into the stored ones."""
    external = row["respondent"]
    metadata = {k: v for k, v in (row.get("metadata") or {}).items() if v not in (None, "")}
    found = conn.execute(
        "SELECT id, metadata, is_group FROM respondents WHERE external_id = ?", (external,)
    ).fetchone()
    if found is None:
        cur = conn.execute(
            "INSERT INTO respondents (external_id, metadata, is_group, created_at) "
            "VALUES (?, ?, ?, ?)",
            (external, json.dumps(metadata, sort_keys=True), int(bool(row.get("is_group"))), stamp),
        )
        return int(cur.lastrowid or 0), 1
    merged = json.loads(found["metadata"])
    merged.update({k: v for k, v in metadata.items() if k not in merged})
    conn.execute(
        "UPDATE respondents SET metadata = ?, is_group = ? WHERE id = ?",
        (
            json.dumps(merged, sort_keys=True),
            int(bool(found["is_group"]) or bool(row.get("is_group"))),
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


def sentence_context(conn: sqlite3.Connection, sentence_id: int) -> dict[str, Any]:
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
    return {
        "question": row["question"],
        "previous": None if previous is None else row["text"][previous["start"] : previous["end"]],
        "respondent": row["external_id"],
        "metadata": json.loads(row["metadata"]),
        "is_group": bool(row["is_group"]),
        "variety": row["variety"],
    }


def answer_sentences(conn: sqlite3.Connection) -> dict[int, list[int]]:
    """Return, per answer ID, its sentence IDs in order."""
    out: dict[int, list[int]] = {}
    for row in conn.execute("SELECT id, answer_id FROM sentences ORDER BY answer_id, position"):
        out.setdefault(row["answer_id"], []).append(row["id"])
    return out


def answers(conn: sqlite3.Connection) -> list[dict[str, Any]]:
    """Return every answer with its respondent's external ID."""
    rows = conn.execute(
        "SELECT a.id, r.external_id AS respondent, a.question, a.text, a.lang, a.variety "
        "FROM answers a JOIN respondents r ON r.id = a.respondent_id ORDER BY a.id"
    ).fetchall()
    return [dict(r) for r in rows]


def respondents(conn: sqlite3.Connection) -> list[dict[str, Any]]:
    """Return respondents as dicts: ``respondent``, ``is_group`` and their metadata keys."""
    out = []
    for row in conn.execute("SELECT external_id, metadata, is_group FROM respondents ORDER BY id"):
        out.append(
            {"respondent": row["external_id"], "is_group": bool(row["is_group"])}
            | json.loads(row["metadata"])
        )
    return out


# --------------------------------------------------------------------------- concepts


def current_concept_version(conn: sqlite3.Connection, kind: str = "trait") -> dict[str, Any] | None:
    """Return the newest imported version of the concept (or variety) list, or None."""
    row = conn.execute(
        "SELECT * FROM concept_versions WHERE kind = ? ORDER BY id DESC LIMIT 1", (kind,)
    ).fetchone()
    return None if row is None else dict(row)


def concept_versions(conn: sqlite3.Connection) -> list[dict[str, Any]]:
    """Return every imported concept and variety list version, oldest first."""
    return [dict(r) for r in conn.execute("SELECT * FROM concept_versions ORDER BY id")]


def replace_concept_list(
    conn: sqlite3.Connection,
    *,
    kind: str,
    path: str,
    sha256: str,
    concepts: Sequence[dict[str, Any]],
    aliases: Sequence[dict[str, Any]],
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
        for concept in concepts:
            conn.execute(
                "INSERT INTO concepts (id, kind, parent, definition, version_id, active) "
                "VALUES (?, ?, ?, ?, ?, 1) ON CONFLICT (id) DO UPDATE SET kind = excluded.kind, "
                "parent = excluded.parent, definition = excluded.definition, "
                "version_id = excluded.version_id, active = 1",
                (concept["id"], kind, concept.get("parent"), concept.get("definition"), version_id),
            )
        conn.execute(
            "DELETE FROM aliases WHERE origin = 'list' AND concept_id IN "
            "(SELECT id FROM concepts WHERE kind = ?)",
            (kind,),
        )
        conn.executemany(
            "INSERT OR IGNORE INTO aliases (concept_id, text, lang, kind, origin, added_at) "
            "VALUES (?, ?, ?, ?, 'list', ?)",
            [(a["concept_id"], a["text"], a["lang"], a["kind"], stamp) for a in aliases],
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


def concepts(conn: sqlite3.Connection, kind: str = "trait") -> list[dict[str, Any]]:
    """Return active concepts with their preferred labels per language."""
    out = []
    for row in conn.execute(
        "SELECT id, parent, definition FROM concepts WHERE kind = ? AND active = 1 ORDER BY id",
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
        out.append(dict(row) | {"labels": labels})
    return out


def aliases(conn: sqlite3.Connection, kind: str = "trait") -> list[dict[str, Any]]:
    """Return every alias of the active concepts (or varieties)."""
    rows = conn.execute(
        "SELECT a.concept_id, a.text, a.lang, a.kind, a.origin, a.added_by FROM aliases a "
        "JOIN concepts c ON c.id = a.concept_id WHERE c.kind = ? AND c.active = 1 "
        "ORDER BY a.concept_id, a.id",
        (kind,),
    ).fetchall()
    return [dict(r) for r in rows]


# --------------------------------------------------------------------------- labels


def _spans_json(spans: Sequence[Span]) -> str:
    return json.dumps(
        [{"start": s.start, "end": s.end, "concept": s.concept, "stance": s.stance} for s in spans]
    )


def _spans_from_json(text: str) -> list[Span]:
    return [Span(d["start"], d["end"], d.get("concept"), d.get("stance")) for d in json.loads(text)]


def add_label(
    conn: sqlite3.Connection,
    sentence_id: int,
    spans: Sequence[Span],
    annotator: str,
    *,
    origin: str = "terminal",
) -> int:
    """Append a label (an empty ``spans`` means "no trait here"); committed on return."""
    with transaction(conn):
        cur = conn.execute(
            "INSERT INTO labels (sentence_id, annotator, created_at, action, spans, origin) "
            "VALUES (?, ?, ?, 'label', ?, ?)",
            (sentence_id, annotator, now(), _spans_json(spans), origin),
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


def current_labels(conn: sqlite3.Connection) -> dict[int, dict[str, Any]]:
    """Return the label in force per sentence: the newest one not retracted.

    Each value holds ``label_id``, ``spans`` (list of Span), ``annotator``,
    ``created_at`` and ``origin``.
    """
    rows = conn.execute(
        "SELECT l.id, l.sentence_id, l.annotator, l.created_at, l.spans, l.origin FROM labels l "
        "WHERE l.action = 'label' AND l.id NOT IN "
        "(SELECT retracts FROM labels WHERE action = 'retract') ORDER BY l.id"
    ).fetchall()
    out: dict[int, dict[str, Any]] = {}
    for row in rows:
        out[row["sentence_id"]] = {
            "label_id": row["id"],
            "spans": _spans_from_json(row["spans"]),
            "annotator": row["annotator"],
            "created_at": row["created_at"],
            "origin": row["origin"],
        }
    return out


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


# --------------------------------------------------------------------------- models


def add_model(conn: sqlite3.Connection, version: str, path: str, meta: dict[str, Any]) -> None:
    """Record a saved model version."""
    with transaction(conn):
        conn.execute(
            "INSERT INTO models (version, created_at, path, meta, metrics) VALUES (?, ?, ?, ?, ?)",
            (version, now(), path, json.dumps(meta), json.dumps(meta.get("metrics", {}))),
        )


def set_model_metrics(conn: sqlite3.Connection, version: str, metrics: dict[str, Any]) -> None:
    """Store measured quality figures with a model version (merged into what is there)."""
    with transaction(conn):
        row = conn.execute("SELECT metrics FROM models WHERE version = ?", (version,)).fetchone()
        if row is None:
            raise WorkspaceError(f"Model version {version!r} is not recorded in this workspace.")
        merged = json.loads(row["metrics"]) | metrics
        conn.execute(
            "UPDATE models SET metrics = ? WHERE version = ?", (json.dumps(merged), version)
        )


def models(conn: sqlite3.Connection) -> list[dict[str, Any]]:
    """Return recorded model versions, oldest first, with meta and metrics decoded."""
    out = []
    for row in conn.execute("SELECT * FROM models ORDER BY created_at, version"):
        out.append(
            dict(row) | {"meta": json.loads(row["meta"]), "metrics": json.loads(row["metrics"])}
        )
    return out


def latest_model(conn: sqlite3.Connection) -> dict[str, Any] | None:
    """Return the newest model version, or None."""
    found = models(conn)
    return found[-1] if found else None


# --------------------------------------------------------------------------- predictions


def store_predictions(
    conn: sqlite3.Connection, model_version: str, rows: Iterable[dict[str, Any]]
) -> int:
    """Store a model version's predictions, one row per sentence, in one transaction.

    Each row holds ``sentence_id``, ``path_prob`` and ``mentions`` (list of dicts with at
    least ``start`` and ``end``).
    """
    n = 0
    with transaction(conn):
        conn.execute("DELETE FROM predictions WHERE model_version = ?", (model_version,))
        for row in rows:
            conn.execute(
                "INSERT INTO predictions (sentence_id, model_version, path_prob, spans) "
                "VALUES (?, ?, ?, ?)",
                (
                    row["sentence_id"],
                    model_version,
                    row.get("path_prob"),
                    json.dumps(row.get("mentions", [])),
                ),
            )
            n += 1
    return n


def count_predictions(conn: sqlite3.Connection, model_version: str) -> int:
    """Return how many sentences a model version has tagged."""
    return int(
        conn.execute(
            "SELECT COUNT(*) FROM predictions WHERE model_version = ?", (model_version,)
        ).fetchone()[0]
    )


def predictions(conn: sqlite3.Connection, model_version: str) -> dict[int, dict[str, Any]]:
    """Return a model version's predictions keyed by sentence ID."""
    out = {}
    for row in conn.execute(
        "SELECT sentence_id, path_prob, spans FROM predictions WHERE model_version = ?",
        (model_version,),
    ):
        out[row["sentence_id"]] = {
            "path_prob": row["path_prob"],
            "mentions": json.loads(row["spans"]),
        }
    return out


# --------------------------------------------------------------------------- status


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
