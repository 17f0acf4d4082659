"""The whole job over a workspace: train a model version, tag every sentence, run end to end.

Each function takes an open :class:`~extractor.workspace.Workspace`, does one step
through the store and the model modules, and returns plain data for the command line
to print.
"""

from __future__ import annotations

import shutil
from collections.abc import Sequence
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from extractor import store
from extractor.clusters import corpus_fingerprint, load_clusters
from extractor.errors import ModelError, TraitsError
from extractor.intake import add_files, import_concepts, interview_files
from extractor.modeling import TraitModels, entropy_scores
from extractor.progress import track
from extractor.types import Sentence, Span
from extractor.workspace import Workspace

MIN_LABELS_FOR_CV = 20
"""Cross-validate a new version only when at least this many sentences are labeled."""

CHUNK = 500


def gold_examples(ws: Workspace) -> list[tuple[Sentence, list[Span]]]:
    """Return every labeled sentence with the spans of the label in force."""
    labels = store.current_labels(ws.conn)
    found = store.sentences(ws.conn, labels)
    return [(s, labels[s.id]["spans"]) for s in found]


def alias_tuples(ws: Workspace, kind: str = "trait") -> list[tuple[str, str, str]]:
    """Return the workspace's aliases as (concept_id, text, lang)."""
    return [(a["concept_id"], a["text"], a["lang"]) for a in store.aliases(ws.conn, kind)]


def new_version_name(ws: Workspace) -> str:
    """Return a fresh, sortable model version name such as ``v003-20261201T221500``."""
    n = len(store.models(ws.conn)) + 1
    stamp = datetime.now(UTC).strftime("%Y%m%dT%H%M%S")
    name = f"v{n:03d}-{stamp}"
    while (ws.models_dir / name).exists():
        n += 1
        name = f"v{n:03d}-{stamp}"
    return name


def _reusable_clusters(ws: Workspace, corpus: Sequence[Sentence]) -> dict[str, Any] | None:
    """Return the latest version's word clusters when the corpus has not changed since."""
    latest = store.latest_model(ws.conn)
    if latest is None:
        return None
    if latest["meta"].get("clusters_fingerprint") != corpus_fingerprint(
        (s.text, s.lang) for s in corpus
    ):
        return None
    try:
        return load_clusters(Path(ws.root / latest["path"]))
    except TraitsError:
        return None


def train(ws: Workspace, *, cross_validate: bool = True) -> dict[str, Any]:
    """Train and save a new model version from the workspace's labels and concept list.

    Returns:
        A report: version, counts, notes (e.g. "no concept list") and metrics.

    Raises:
        ModelError: neither a concept list nor labels are there to learn from.
    """
    gold = gold_examples(ws)
    aliases = alias_tuples(ws)
    if not gold and not aliases:
        raise ModelError(
            "There is nothing to train on yet: import a concept list with "
            "`traits concepts import FILE`, or label sentences with `traits label`."
        )
    if not store.counts(ws.conn)["sentences"]:
        raise ModelError("The workspace holds no sentences; add interviews with `traits add FILE`.")
    notes = []
    if not aliases:
        notes.append("No concept list is imported, so the tagger learns from labels alone.")
    corpus = store.sentences(ws.conn)
    settings = ws.settings
    tagger_params = dict(settings["tagger"])
    models = TraitModels(
        tagger_params=tagger_params, link_threshold=float(settings["linking"]["threshold"])
    )
    models.fit(gold, corpus, aliases, clusters=_reusable_clusters(ws, corpus))
    metrics: dict[str, Any] = {}
    if cross_validate and len(gold) >= MIN_LABELS_FOR_CV:
        metrics["cross_validation"] = _cross_validate(gold, corpus, aliases, tagger_params,
                                                      settings)
    version = new_version_name(ws)
    folder = ws.models_dir / version
    concept_version = store.current_concept_version(ws.conn)
    extra = {
        "version": version,
        "concept_list": None if concept_version is None else {
            "path": concept_version["path"], "sha256": concept_version["sha256"],
            "imported_at": concept_version["imported_at"]},
        "metrics": metrics,
    }
    try:
        meta = models.save(folder, extra)
        store.add_model(ws.conn, version, folder.relative_to(ws.root).as_posix(), meta)
    except BaseException:
        shutil.rmtree(folder, ignore_errors=True)
        raise
    return {"version": version, "models": models, "counts": models.counts_, "notes": notes,
            "metrics": metrics}


def _cross_validate(
    gold: list[tuple[Sentence, list[Span]]],
    corpus: list[Sentence],
    aliases: list[tuple[str, str, str]],
    tagger_params: dict[str, Any],
    settings: dict[str, Any],
) -> dict[str, Any]:
    """Cross-validate when the evaluation module is available."""
    from extractor import evaluate

    return evaluate.cross_validate(
        gold, corpus, aliases, k=5, seed=0,
        model_params={"tagger_params": tagger_params,
                      "link_threshold": float(settings["linking"]["threshold"])},
    )


def load_version(ws: Workspace, version: str | None = None) -> tuple[str, TraitModels]:
    """Load a saved model version (the newest by default)."""
    recorded = store.models(ws.conn)
    if not recorded:
        raise ModelError("No model is trained yet; run `traits train` or `traits run`.")
    chosen = recorded[-1] if version is None else next(
        (m for m in recorded if m["version"] == version), None)
    if chosen is None:
        raise ModelError(
            f"Model version {version!r} is not in this workspace; see `traits models`."
        )
    return chosen["version"], TraitModels.load(ws.root / chosen["path"])


def tag(ws: Workspace, models: TraitModels, version: str) -> dict[str, Any]:
    """Tag every sentence with a model version and store the predictions.

    Spans a person labeled keep the concepts the person gave.
    """
    labels = store.current_labels(ws.conn)
    gold_concepts = {
        sid: {(sp.start, sp.end): sp.concept for sp in label["spans"] if sp.concept}
        for sid, label in labels.items()
    }
    corpus = store.sentences(ws.conn)
    rows: list[dict[str, Any]] = []
    chunks = range(0, len(corpus), CHUNK)
    for start in track(chunks, "Tagging sentences", len(chunks)):
        batch = corpus[start : start + CHUNK]
        for sentence, prediction in zip(batch, models.predict(batch, gold_concepts), strict=True):
            rows.append({
                "sentence_id": sentence.id,
                "path_prob": prediction.tagged.probability,
                "scores": entropy_scores(prediction.tagged),
                "mentions": [m._asdict() | {"source": "predicted"} for m in prediction.mentions],
            })
    store.store_predictions(ws.conn, version, rows)
    mentions = sum(len(r["mentions"]) for r in rows)
    unlinked = sum(1 for r in rows for m in r["mentions"] if m["concept"] is None)
    return {"sentences": len(rows), "mentions": mentions, "unlinked": unlinked}


def run(ws: Workspace) -> dict[str, Any]:
    """Do the whole job: ingest what is new, import changed lists, train, tag and export."""
    before = store.counts(ws.conn)
    previous = store.latest_model(ws.conn)
    report: dict[str, Any] = {"files": [], "concepts": None, "varieties": None}
    files = interview_files(ws.path("interviews"))
    if files:
        report["files"] = add_files(ws, files)
    concepts_path = ws.path("concepts")
    if concepts_path.exists():
        report["concepts"] = import_concepts(ws, concepts_path)
    varieties_path = ws.path("varieties")
    if varieties_path.exists():
        report["varieties"] = import_concepts(ws, varieties_path, kind="variety")
    after = store.counts(ws.conn)
    report["new"] = {
        "respondents": after["respondents"] - before["respondents"],
        "sentences": after["sentences"] - before["sentences"],
        "languages": sorted(set(after["languages"]) - set(before["languages"])),
    }
    trained = train(ws)
    report["train"] = {k: v for k, v in trained.items() if k != "models"}
    report["tag"] = tag(ws, trained["models"], trained["version"])
    report["previous_version"] = None if previous is None else {
        "version": previous["version"], "metrics": previous["metrics"]}
    from extractor.results import export_workbook

    report["export"] = export_workbook(ws, trained["version"])
    report["counts"] = after
    return report
