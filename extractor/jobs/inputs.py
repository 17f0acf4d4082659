"""What the workspace jobs read from a workspace: labeled examples, aliases, session settings.

Shared by training, tagging, labeling, evaluation and export, so that each reads the
store the same way.
"""

from __future__ import annotations

from extractor.ingest.labels import LabelRecord
from extractor.loop.samples import SessionSettings
from extractor.types import Implicit, Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace


def gold_examples(ws: Workspace) -> list[tuple[Sentence, list[Span]]]:
    """Return every labeled sentence with the spans of the label in force."""
    labels = store.current_labels(ws.conn)
    found = store.sentences(ws.conn, labels)
    return [(s, labels[s.id].spans) for s in found]


def gold_implicit(ws: Workspace) -> dict[int, tuple[Implicit, ...]]:
    """Return the implicit traits of the labels in force, by sentence ID (only non-empty)."""
    return {sid: lab.implicit for sid, lab in store.current_labels(ws.conn).items() if lab.implicit}


def gold_records(ws: Workspace) -> list[LabelRecord]:
    """Return every labeled sentence as a record of the label format (mentions and implicit)."""
    labels = store.current_labels(ws.conn)
    return [
        LabelRecord(
            text=s.text,
            respondent=s.respondent,
            lang=s.lang,
            question=s.question,
            spans=tuple(labels[s.id].spans),
            line=n,
            implicit=labels[s.id].implicit,
        )
        for n, s in enumerate(store.sentences(ws.conn, labels), start=1)
    ]


def alias_tuples(ws: Workspace, kind: str = "trait") -> list[tuple[str, str, str]]:
    """Return the workspace's aliases as (concept_id, text, lang)."""
    return [(a.concept_id, a.text, a.lang) for a in store.aliases(ws.conn, kind)]


def session_settings(ws: Workspace) -> SessionSettings:
    """Return the labeling session's settings from ``traits.toml``."""
    active = ws.settings.active
    return SessionSettings(
        retrain_every=active.retrain_every,
        evaluation_fraction=active.evaluation_share,
        evaluation_min=active.evaluation_min,
        stop_set_size=active.stop_set_size,
        kappa_threshold=active.stop_kappa,
        kappa_rounds=active.stop_rounds,
        subpool=active.subpool or None,
    )
