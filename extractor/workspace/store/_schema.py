"""The store's schema, its forward migrations, the connection, transactions and meta values."""

from __future__ import annotations

import sqlite3
from collections.abc import Iterator
from contextlib import contextmanager
from datetime import UTC, datetime
from pathlib import Path

from extractor.errors import WorkspaceError

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

IMPLICIT_TRAITS = """
ALTER TABLE labels ADD COLUMN implicit TEXT NOT NULL DEFAULT '[]';
"""
"""Version 2: a label also holds the traits its sentence states without a span (JSON list)."""

CONCEPT_PARENTS = """
ALTER TABLE concepts ADD COLUMN iri TEXT;
CREATE TABLE concept_parents (
    concept_id TEXT NOT NULL REFERENCES concepts (id),
    parent_id TEXT NOT NULL,
    position INTEGER NOT NULL,
    PRIMARY KEY (concept_id, parent_id)
);
INSERT INTO concept_parents (concept_id, parent_id, position)
    SELECT id, parent, 0 FROM concepts WHERE parent IS NOT NULL AND parent != '';
"""
"""Version 3: every parent of a concept (OBO terms may have several), and a SKOS concept's IRI."""

LEASES = """
CREATE TABLE leases (
    sentence_id INTEGER PRIMARY KEY REFERENCES sentences (id),
    holder TEXT NOT NULL,
    expires_at REAL NOT NULL
);
"""
"""Version 4: a labeling session's hold on the sentence it shows; it runs out at ``expires_at``
(seconds since the epoch) so that a killed session's sentences come free again."""

MIGRATIONS: tuple[str, ...] = (SCHEMA_V1, IMPLICIT_TRAITS, CONCEPT_PARENTS, LEASES)
"""Forward migrations; ``MIGRATIONS[i]`` takes the schema from version ``i`` to ``i + 1``."""

SCHEMA_VERSION = len(MIGRATIONS)


def now() -> str:
    """Return the current UTC time as an ISO 8601 string (seconds)."""
    return datetime.now(UTC).isoformat(timespec="seconds")


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
    except sqlite3.Error as exc:
        raise store_failure(exc, path) from exc
    return conn


def store_failure(exc: sqlite3.Error, path: Path) -> WorkspaceError:
    """Return the one sentence a failure of the store at ``path`` deserves.

    It says what is true, judged by SQLite's own error code: a full disk or a read-only
    folder leaves a healthy store behind, so only a damaged file gets the advice to
    restore a backup. A failed write was rolled back (every write is one transaction).
    """
    name = str(getattr(exc, "sqlite_errorname", "") or "")
    said = str(exc).lower()
    if name.startswith("SQLITE_FULL") or "disk is full" in said:
        return WorkspaceError(
            f"The disk holding {path} is full, so the change being saved was undone and the "
            "store is as it was before it; free some space on that disk (old versions in "
            "models/ and files in exports/ can go) and run the command again."
        )
    if name.startswith("SQLITE_READONLY") or "readonly" in said:
        return WorkspaceError(
            f"{path} cannot be written: the file or its folder is read-only (the store is "
            "unchanged and healthy); allow writing to the folder, or copy the workspace to a "
            "folder you may write, and run the command again."
        )
    if name.startswith(("SQLITE_BUSY", "SQLITE_LOCKED")) or "locked" in said:
        return WorkspaceError(
            f"{path} is held by another program for more than 30 seconds (the store is "
            "unchanged); let the other `traits` command finish, or close it, and try again."
        )
    if name.startswith(("SQLITE_CANTOPEN", "SQLITE_IOERR", "SQLITE_PERM")):
        return WorkspaceError(
            f"{path} cannot be opened or written ({exc}); check that the disk is attached and "
            "that you may write the folder (SQLite writes -wal and -shm files beside the store)."
        )
    return WorkspaceError(
        f"{path} is damaged or is not a trait-extractor store ({exc}); keep a copy of the "
        "file, then restore it from a backup or create a new workspace with `traits init`."
    )


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
