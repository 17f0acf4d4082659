"""Saved model versions with their metrics, and each version's predictions per sentence."""

from __future__ import annotations

import json
import sqlite3
from collections.abc import Iterable
from typing import Any, NamedTuple

from extractor.errors import WorkspaceError
from extractor.workspace.store._schema import now, transaction


class ModelVersion(NamedTuple):
    """A recorded model version: its name, when it was saved, its folder, meta and metrics."""

    version: str
    created_at: str
    path: str
    meta: dict[str, Any]
    metrics: dict[str, Any]


class StoredPrediction(NamedTuple):
    """A model version's prediction for one sentence.

    ``mentions`` are dicts with at least ``start`` and ``end``, as the tagger stored them.
    """

    path_prob: float | None
    mentions: list[dict[str, Any]]


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
        merged = _decoded(version, "metrics", row["metrics"]) | metrics
        conn.execute(
            "UPDATE models SET metrics = ? WHERE version = ?", (json.dumps(merged), version)
        )


def models(conn: sqlite3.Connection) -> list[ModelVersion]:
    """Return recorded model versions, oldest first, with meta and metrics decoded."""
    return [
        ModelVersion(
            version=row["version"],
            created_at=row["created_at"],
            path=row["path"],
            meta=_decoded(row["version"], "meta", row["meta"]),
            metrics=_decoded(row["version"], "metrics", row["metrics"]),
        )
        for row in conn.execute("SELECT * FROM models ORDER BY created_at, version")
    ]


def _decoded(version: str, column: str, text: str) -> dict[str, Any]:
    """Decode a model row's JSON object, naming the version when the store holds another thing."""
    try:
        value = json.loads(text)
    except ValueError:
        value = None
    if not isinstance(value, dict):
        raise WorkspaceError(
            f"The store's record of model version {version} is damaged (its {column} is not a "
            "JSON object); keep a copy of traits.sqlite, then restore it from a backup."
        )
    return value


def latest_model(conn: sqlite3.Connection) -> ModelVersion | None:
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


def predictions(conn: sqlite3.Connection, model_version: str) -> dict[int, StoredPrediction]:
    """Return a model version's predictions keyed by sentence ID."""
    return {
        row["sentence_id"]: StoredPrediction(row["path_prob"], json.loads(row["spans"]))
        for row in conn.execute(
            "SELECT sentence_id, path_prob, spans FROM predictions WHERE model_version = ?",
            (model_version,),
        )
    }
