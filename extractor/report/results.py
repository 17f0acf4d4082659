"""The results of a model version as tables: mentions, respondents, concepts, run facts.

Mentions come from the stored predictions of a model version; wherever a person
labeled a sentence, that label replaces the predictions for the sentence (gold
labels always win). Implicit traits (stated without a phrase naming them), labeled or
predicted, are rows too: ``implicit`` is true, the span is the whole sentence. A
person's spans are attributed to varieties the way tagging attributes predicted mentions
(:func:`extractor.models.variety.attribute_corpus`).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from datetime import UTC, datetime
from typing import Any, NamedTuple

import pandas as pd

from extractor.models.variety import Attribution, attribute_corpus
from extractor.report.about import RunFacts
from extractor.report.inputs import OPTIONAL_MENTION_COLUMNS, REQUIRED_MENTION_COLUMNS
from extractor.report.metadata import FIXED_KEYS, Harmonised, harmonise
from extractor.types import Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from extractor.workspace.store import StoredLabel


def _display_name(labels: Mapping[str, str], default: str, fallback: str) -> str:
    """Return the label in the default language, else the first label, else ``fallback``."""
    return labels.get(default) or next(iter(labels.values()), fallback)


def concept_frame(ws: Workspace) -> pd.DataFrame:
    """Return the active concepts: ``concept_id``, ``label``, ``parent``, ``parents`` (all)."""
    default = ws.settings.workspace.default_language
    rows = [
        {
            "concept_id": concept.id,
            "label": _display_name(concept.labels, default, concept.id),
            "parent": concept.parent,
            "parents": concept.parents,
        }
        for concept in store.concepts(ws.conn)
    ]
    return pd.DataFrame(rows, columns=["concept_id", "label", "parent", "parents"])


def variety_names(ws: Workspace) -> dict[str, str]:
    """Return variety ID -> display name."""
    default = ws.settings.workspace.default_language
    return {
        v.id: _display_name(v.labels, default, v.id) for v in store.concepts(ws.conn, "variety")
    }


class _LabeledTrait(NamedTuple):
    """A labeled mention or implicit trait, as the mentions frame places it."""

    start: int
    end: int
    concept: str | None
    stance: str | None
    implicit: bool = False


def label_traits(sentence: Sentence, label: StoredLabel) -> list[_LabeledTrait]:
    """Return a label's mentions, then its implicit traits spanning the whole sentence."""
    return [_LabeledTrait(*sp) for sp in label.spans] + [
        _LabeledTrait(0, len(sentence.text), t.concept, t.stance, True) for t in label.implicit
    ]


def _person_mentions(
    spans: Sequence[_LabeledTrait], annotator: str, varieties: Sequence[Attribution]
) -> list[dict[str, Any]]:
    """Return a person's spans as mentions: no model, no probabilities, their varieties.

    Spans past the ``spans`` of the label proper are its implicit traits (whole sentence).
    """
    return [
        {
            "start": sp.start,
            "end": sp.end,
            "concept": sp.concept,
            "stance": sp.stance,
            "confidence": None,
            "link_prob": None,
            "stance_prob": None,
            "variety": variety,
            "ref_variety": ref_variety,
            "source": "person",
            "annotator": annotator,
            "model_version": None,
            "implicit": bool(sp.implicit),
        }
        for sp, (variety, ref_variety) in zip(spans, varieties, strict=True)
    ]


def labeled_varieties(
    ws: Workspace, labels: Mapping[int, StoredLabel]
) -> dict[int, list[Attribution]]:
    """Return sentence ID -> ``(variety, ref_variety)`` of each trait of its label.

    Traits as :func:`label_traits` lists them: mentions, then implicit traits.
    """
    labeled = {sid for sid, label in labels.items() if not label.empty}
    if not labeled:
        return {}
    found = store.sentences(ws.conn, labeled)
    spans = {s.id: [Span(t.start, t.end) for t in label_traits(s, labels[s.id])] for s in found}
    answers = {s.answer_id for s in found}
    return attribute_corpus(
        [s for s in store.sentences(ws.conn) if s.answer_id in answers],
        spans,
        [(a.concept_id, a.text, a.lang) for a in store.aliases(ws.conn, "variety")],
        {a.id: a.variety for a in store.answers(ws.conn)},
    )


def _mention_row(
    sentence: Sentence,
    m: Mapping[str, Any],
    concept_names: Mapping[str, str],
    variety: Callable[[str | None], str | None],
) -> dict[str, Any]:
    """Return one row of the mentions frame: the mention placed in its sentence and answer."""
    concept = m.get("concept")
    return {
        "respondent": sentence.respondent,
        "sentence_id": sentence.id,
        "answer_id": sentence.answer_id,
        "sentence": sentence.text,
        "question": sentence.question,
        "lang": sentence.lang,
        "start": m["start"],
        "end": m["end"],
        "answer_start": sentence.offset + m["start"],
        "answer_end": sentence.offset + m["end"],
        "span_text": sentence.text[m["start"] : m["end"]],
        "implicit": bool(m.get("implicit", False)),
        "concept_id": concept,
        "concept_label": None if concept is None else concept_names.get(concept),
        "link_prob": m.get("link_prob"),
        "stance": m.get("stance"),
        "stance_prob": m.get("stance_prob"),
        "variety": variety(m.get("variety")),
        "ref_variety": variety(m.get("ref_variety")),
        "confidence": m.get("confidence"),
        "source": m["source"],
        "model_version": m.get("model_version"),
        "annotator": m.get("annotator"),
    }


def mention_frame(ws: Workspace, version: str | None) -> pd.DataFrame:
    """Return one row per mention: predictions of ``version`` overridden by people's labels.

    A sentence a person labeled shows that label's spans only (none for "no trait
    here"); every other sentence shows the version's predicted mentions.
    """
    labels = store.current_labels(ws.conn)
    predicted = store.predictions(ws.conn, version) if version else {}
    ids = sorted(set(labels) | {sid for sid, p in predicted.items() if p.mentions})
    sentences = {s.id: s for s in store.sentences(ws.conn, ids)}
    concepts = concept_frame(ws) if ids else pd.DataFrame(columns=["concept_id", "label"])
    concept_names = dict(zip(concepts["concept_id"], concepts["label"], strict=True))
    varieties = variety_names(ws)
    attributed = labeled_varieties(ws, labels)

    def variety(value: str | None) -> str | None:
        return f"{varieties[value]} ({value})" if value in varieties else value

    rows: list[dict[str, Any]] = []
    for sid in ids:
        sentence = sentences.get(sid)
        if sentence is None:
            continue
        if sid in labels:
            found = _person_mentions(
                label_traits(sentence, labels[sid]), labels[sid].annotator, attributed.get(sid, [])
            )
        else:
            found = [
                m | {"annotator": None, "model_version": version} for m in predicted[sid].mentions
            ]
        rows.extend(_mention_row(sentence, m, concept_names, variety) for m in found)
    if not rows:  # no trait anywhere yet: the empty table still has its columns
        return pd.DataFrame(columns=[*REQUIRED_MENTION_COLUMNS, *OPTIONAL_MENTION_COLUMNS])
    return pd.DataFrame(rows)


def harmonised_respondents(ws: Workspace) -> Harmonised:
    """Return the stored respondents read through the workspace's metadata mappings.

    Column renames come from ``[metadata] columns`` in ``traits.toml`` and from
    ``traits add --metadata`` (which wins for the same column); value spellings from
    ``[metadata] values`` and ``merge_spellings``.
    """
    settings = ws.settings.metadata
    renames = dict(settings.columns) | store.metadata_renames(ws.conn)
    return harmonise(
        store.respondents(ws.conn),
        renames,
        settings.values,
        merge_spellings=settings.merge_spellings,
    )


def respondent_metadata(ws: Workspace) -> dict[str, dict[str, Any]]:
    """Return respondent ID -> metadata column -> value, read as the workbook reads them.

    The labeling screen describes respondents with this, so an annotator sees the
    same words there as in the exports (``gender female`` for a stored ``sex F``).
    """
    return {
        str(rec["respondent"]): {k: v for k, v in rec.items() if k not in FIXED_KEYS}
        for rec in harmonised_respondents(ws).records
    }


def respondent_frame(ws: Workspace) -> pd.DataFrame:
    """Return one row per respondent with ``is_group`` and harmonised metadata columns."""
    return pd.DataFrame(harmonised_respondents(ws).records)


def run_facts(ws: Workspace, version: str | None) -> RunFacts:
    """Return the facts shown on the workbook's About sheet."""
    model = next((m for m in store.models(ws.conn) if m.version == version), None)
    concepts = store.current_concept_version(ws.conn)
    counts = store.counts(ws.conn)
    metrics = {} if model is None else model.metrics
    # A review measures the version that was reviewed; later versions show that figure,
    # with the version it was measured on, until a sample of theirs is reviewed.
    reviewed = [
        m.metrics["review_sample"] for m in store.models(ws.conn) if m.metrics.get("review_sample")
    ]
    return RunFacts(
        model_version=version or "none (labels only)",
        model_trained=None if model is None else model.created_at,
        quality_cross_validated=metrics.get("cross_validation"),
        quality_evaluation_sample=metrics.get("evaluation_sample"),
        quality_reviewed_sample=reviewed[-1] if reviewed else None,
        concept_list=None if concepts is None else concepts.path,
        concept_list_sha256=None if concepts is None else concepts.sha256,
        concept_list_imported=None if concepts is None else concepts.imported_at,
        respondents=counts["respondents"],
        sentences=counts["sentences"],
        sentences_labeled=counts["labels"],
        exported=datetime.now(UTC).isoformat(timespec="seconds"),
    )
