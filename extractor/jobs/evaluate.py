"""Measure a workspace's models: cross-validation on the labels, the evaluation sample."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

from extractor.jobs.inputs import gold_examples, gold_implicit, session_settings
from extractor.jobs.train import cross_validation, load_version, reusable_clusters
from extractor.loop.samples import ensure_samples
from extractor.models.validation import CrossValidation, Evaluation, evaluate_on
from extractor.workspace import store
from extractor.workspace.folder import Workspace


@dataclass(frozen=True)
class EvaluationReport:
    """The figures of `traits evaluate`, and why a part has none.

    ``notes`` is keyed by the part it explains (``"cross-validation"``, ``"evaluation
    sample"``) or ``"stale version"`` when the newest version learned from fewer labels
    than are stored now.
    """

    cross_validation: CrossValidation | None = None
    evaluation_sample: Evaluation | None = None
    notes: Mapping[str, str] = field(default_factory=dict)
    version: str | None = None


def evaluate_workspace(ws: Workspace, *, k: int = 5) -> EvaluationReport:
    """Cross-validate on the labels and score the newest version on the evaluation sample.

    Both figures are stored with the newest model version.
    """
    ensure_samples(ws.conn, session_settings(ws))
    gold = gold_examples(ws)
    sample = set(store.sample_ids(ws.conn, "evaluation"))
    notes: dict[str, str] = {}
    corpus = store.sentences(ws.conn)
    outside = [(s, spans) for s, spans in gold if s.id not in sample]
    cv, why = cross_validation(ws, outside, corpus, reusable_clusters(ws, corpus), k)
    if cv is None:
        notes["cross-validation"] = why
    latest = store.latest_model(ws.conn)
    held_out = [(s, spans) for s, spans in gold if s.id in sample]
    scored: Evaluation | None = None
    if latest is None:
        notes["evaluation sample"] = "no model version yet; run `traits train`."
    elif not held_out:
        notes["evaluation sample"] = (
            "none of the evaluation sample is labeled yet; `traits label` offers it."
        )
    else:
        version, models = load_version(ws)
        scored = evaluate_on(models, held_out, gold_implicit(ws))
        learned = int(latest.meta.get("counts", {}).get("gold_sentences", 0))
        if learned != len(outside):
            notes["stale version"] = (
                f"model version {version} learned from {learned} labeled sentences, but "
                f"{len(outside)} are labeled now (outside the evaluation sample); "
                "run `traits train` and evaluate again to score a model that learned from them."
            )
    report = EvaluationReport(cv, scored, notes, None if latest is None else latest.version)
    if latest is not None:
        figures: dict[str, CrossValidation | Evaluation | None] = {
            "cross_validation": cv,
            "evaluation_sample": scored,
        }
        store.set_model_metrics(
            ws.conn, latest.version, {k: v.to_dict() for k, v in figures.items() if v is not None}
        )
    return report


def stored_quality(ws: Workspace) -> dict[str, float | str] | None:
    """Return the newest measured quality on the evaluation sample (`traits evaluate`)."""
    latest = store.latest_model(ws.conn)
    if latest is None:
        return None
    found = latest.metrics.get("evaluation_sample") or {}
    if not isinstance(found.get("span_f1"), (int, float)):
        return None
    return {"span F1": float(found["span_f1"]), "of version": latest.version}
