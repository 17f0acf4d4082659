"""Tag every sentence of a workspace with a model version and store the predictions."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from extractor.jobs.inputs import alias_tuples
from extractor.jobs.train import load_version
from extractor.models.bundle import TraitModels
from extractor.models.variety import attribute_corpus
from extractor.progress import track
from extractor.types import Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace

CHUNK = 500
"""Sentences predicted together (one progress step)."""


@dataclass(frozen=True)
class TagReport:
    """How many sentences were tagged and how many mentions were found."""

    sentences: int
    mentions: int
    unlinked: int


def tag(ws: Workspace, models: TraitModels, version: str) -> TagReport:
    """Tag every sentence with a model version and store the predictions.

    Spans a person labeled keep the concepts the person gave.
    """
    labels = store.current_labels(ws.conn)
    gold_concepts = {
        sid: {(sp.start, sp.end): sp.concept for sp in label.spans if sp.concept}
        for sid, label in labels.items()
    }
    corpus = store.sentences(ws.conn)
    rows: list[dict[str, Any]] = []
    chunks = range(0, len(corpus), CHUNK)
    for start in track(chunks, "Tagging sentences", len(chunks)):
        batch = corpus[start : start + CHUNK]
        for sentence, prediction in zip(batch, models.predict(batch, gold_concepts), strict=True):
            rows.append(
                {
                    "sentence_id": sentence.id,
                    "path_prob": prediction.tagged.probability,
                    "mentions": [
                        m._asdict()
                        | {"source": "predicted", "concept_probs": None, "stance_probs": None}
                        for m in [*prediction.mentions, *prediction.implicit]
                    ],
                }
            )
    attribute_varieties(ws, corpus, rows)
    store.store_predictions(ws.conn, version, rows)
    mentions = sum(len(r["mentions"]) for r in rows)
    unlinked = sum(1 for r in rows for m in r["mentions"] if m["concept"] is None)
    return TagReport(sentences=len(rows), mentions=mentions, unlinked=unlinked)


def attribute_varieties(
    ws: Workspace, corpus: Sequence[Sentence], rows: Sequence[dict[str, Any]]
) -> None:
    """Set ``variety`` and ``ref_variety`` on every predicted mention, in place.

    A mention is about the nearest variety named before it in its answer, else the
    answer's variety column, else the variety named in the question; a comparison also
    records the variety compared with (:func:`extractor.models.variety.attribute_corpus`,
    which the results apply to labeled spans too). Needs a variety list (`traits concepts
    import --varieties`); without one, only the variety column is used, as written.
    """
    spans = {
        sentence.id: [Span(m["start"], m["end"]) for m in row["mentions"]]
        for sentence, row in zip(corpus, rows, strict=True)
        if row["mentions"]
    }
    found = attribute_corpus(
        corpus,
        spans,
        alias_tuples(ws, "variety"),
        {a.id: a.variety for a in store.answers(ws.conn)},
    )
    for sentence, row in zip(corpus, rows, strict=True):
        for mention, (subject, reference) in zip(
            row["mentions"], found.get(sentence.id, ()), strict=True
        ):
            mention["variety"], mention["ref_variety"] = subject, reference


def ensure_tagged(ws: Workspace, version: str | None = None) -> str | None:
    """Tag every sentence with a version (the newest by default) unless already done.

    Returns:
        The version, or None when no model is trained yet.
    """
    recorded = [m.version for m in store.models(ws.conn)]
    if not recorded:
        return None
    name = recorded[-1] if version is None else version
    # The model files are read only when sentences are left to tag: the stored
    # predictions are what an export shows.
    if name not in recorded or (
        store.count_predictions(ws.conn, name) < store.counts(ws.conn)["sentences"]
    ):
        name, models = load_version(ws, version)
        tag(ws, models, name)
    return name
