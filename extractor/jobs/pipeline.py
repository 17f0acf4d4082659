"""The whole job over a workspace: train a model version, tag every sentence, run end to end.

Each function takes an open :class:`~extractor.workspace.folder.Workspace`, does one step
through the store and the model modules, and returns plain data for the command line
to print.
"""

from __future__ import annotations

import dataclasses
import shutil
from collections.abc import Sequence
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from extractor.errors import ModelError, TraitsError
from extractor.ingest.intake import add_files, import_concepts, interview_files
from extractor.loop.session import (
    Prediction,
    Predictor,
    Retrain,
    SessionSettings,
    Suggestion,
    ensure_samples,
)
from extractor.models.bundle import TraitModels
from extractor.nlp.clusters import corpus_fingerprint, load_clusters
from extractor.progress import track
from extractor.types import Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace

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
    evaluation = set(ensure_samples(ws.conn, session_settings(ws))[0])
    labeled = gold_examples(ws)
    gold = [(s, spans) for s, spans in labeled if s.id not in evaluation]
    held_out = frozenset(s.id for s, _ in labeled if s.id in evaluation)
    aliases = alias_tuples(ws)
    if not gold and not aliases:
        raise ModelError(
            "There is nothing to train on yet: import a concept list with "
            "`traits concepts import FILE`, or label sentences with `traits label`."
        )
    if not store.counts(ws.conn)["sentences"]:
        raise ModelError("The workspace holds no sentences; add interviews with `traits add FILE`.")
    notes = []
    if held_out:
        notes.append(
            f"{len(held_out)} labeled sentences of the evaluation sample are "
            "kept out of training, so `traits evaluate` can score on them honestly."
        )
    if not aliases:
        notes.append("No concept list is imported, so the tagger learns from labels alone.")
    corpus = store.sentences(ws.conn)
    settings = ws.settings
    tagger_params = dict(settings["tagger"])
    models = TraitModels(
        tagger_params=tagger_params, link_threshold=float(settings["linking"]["threshold"])
    )
    models.fit(gold, corpus, aliases, clusters=_reusable_clusters(ws, corpus), held_out=held_out)
    metrics: dict[str, Any] = {}
    if cross_validate:
        cv, why = _cross_validate(ws, gold, corpus, models.clusters_)
        if cv is not None:
            metrics["cross_validation"] = cv
        elif len(gold) >= MIN_LABELS_FOR_CV:
            notes.append(why)
    version = new_version_name(ws)
    folder = ws.models_dir / version
    concept_version = store.current_concept_version(ws.conn)
    extra = {
        "version": version,
        "concept_list": None
        if concept_version is None
        else {
            "path": concept_version["path"],
            "sha256": concept_version["sha256"],
            "imported_at": concept_version["imported_at"],
        },
        "metrics": metrics,
    }
    try:
        meta = models.save(folder, extra)
        store.add_model(ws.conn, version, folder.relative_to(ws.root).as_posix(), meta)
    except BaseException:
        shutil.rmtree(folder, ignore_errors=True)
        raise
    return {
        "version": version,
        "models": models,
        "counts": models.counts_,
        "notes": notes,
        "metrics": metrics,
    }


def _cross_validate(
    ws: Workspace,
    gold: list[tuple[Sentence, list[Span]]],
    corpus: list[Sentence],
    clusters: dict[str, Any] | None,
    k: int = 5,
) -> tuple[dict[str, Any] | None, str]:
    """Return k-fold figures grouped by respondent, or None and the reason there are none.

    ``gold`` is the labels outside the evaluation sample, as in training, so that
    `traits train` and `traits evaluate` measure the same thing.
    """
    from extractor.models import metrics as evaluate

    if len(gold) < MIN_LABELS_FOR_CV:
        return None, (
            f"only {len(gold)} sentences outside the evaluation sample are labeled; "
            f"label at least {MIN_LABELS_FOR_CV} (`traits label` or "
            "`traits import-labels`)."
        )
    if len({evaluate.respondent_key(s) for s, _ in gold}) < 2:
        return None, (
            "all labels come from one respondent, so there is no cross-validation "
            "(its folds keep each respondent's sentences together); label another's."
        )
    return evaluate.cross_validate(
        gold,
        corpus,
        alias_tuples(ws),
        k=k,
        seed=0,
        model_params={
            "tagger_params": dict(ws.settings["tagger"]),
            "link_threshold": float(ws.settings["linking"]["threshold"]),
        },
        clusters=clusters,
    ), ""


def load_version(ws: Workspace, version: str | None = None) -> tuple[str, TraitModels]:
    """Load a saved model version (the newest by default)."""
    recorded = store.models(ws.conn)
    if not recorded:
        raise ModelError("No model is trained yet; run `traits train` or `traits run`.")
    chosen = (
        recorded[-1]
        if version is None
        else next((m for m in recorded if m["version"] == version), None)
    )
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
            rows.append(
                {
                    "sentence_id": sentence.id,
                    "path_prob": prediction.tagged.probability,
                    "mentions": [
                        m._asdict()
                        | {"source": "predicted", "concept_probs": None, "stance_probs": None}
                        for m in prediction.mentions
                    ],
                }
            )
    attribute_varieties(ws, corpus, rows)
    store.store_predictions(ws.conn, version, rows)
    mentions = sum(len(r["mentions"]) for r in rows)
    unlinked = sum(1 for r in rows for m in r["mentions"] if m["concept"] is None)
    return {"sentences": len(rows), "mentions": mentions, "unlinked": unlinked}


def attribute_varieties(
    ws: Workspace, corpus: Sequence[Sentence], rows: Sequence[dict[str, Any]]
) -> None:
    """Set ``variety`` and ``ref_variety`` on every predicted mention, in place.

    A mention is about the nearest variety named before it in its answer, else the
    answer's variety column, else the variety named in the question; a comparison also
    records the variety compared with. Needs a variety list (`traits concepts import
    --varieties`); without one, only the variety column is used, as written.
    """
    from extractor.models.variety import attribute_variety, find_varieties
    from extractor.nlp.dictionary import build_dictionary

    names = alias_tuples(ws, "variety")
    matcher = build_dictionary(names) if names else None
    column = {a["id"]: a["variety"] for a in store.answers(ws.conn)}
    by_answer: dict[int, list[tuple[Sentence, dict[str, Any]]]] = {}
    for sentence, row in zip(corpus, rows, strict=True):
        by_answer.setdefault(sentence.answer_id or 0, []).append((sentence, row))

    def ids_in(text: str | None, lang: str) -> list[str]:
        if not text or matcher is None:
            return []
        return [v for _, _, v in find_varieties(text, lang, matcher)]

    for answer_id, items in by_answer.items():
        mentions = [
            (i, Span(m["start"], m["end"]))
            for i, (_, row) in enumerate(items)
            for m in row["mentions"]
        ]
        if not mentions:
            continue
        sentences = [s for s, _ in items]
        lang = sentences[0].lang
        written = column.get(answer_id)
        answer_variety = (ids_in(written, lang) or [written])[0] if written else None
        found = attribute_variety(
            sentences,
            mentions,
            [find_varieties(s.text, s.lang, matcher) if matcher else [] for s in sentences],
            answer_variety,
            ids_in(sentences[0].question, lang),
        )
        flat = [m for _, row in items for m in row["mentions"]]
        for mention, (subject, reference) in zip(flat, found, strict=True):
            mention["variety"], mention["ref_variety"] = subject, reference


def ensure_tagged(ws: Workspace, version: str | None = None) -> str | None:
    """Tag every sentence with a version (the newest by default) unless already done.

    Returns:
        The version, or None when no model is trained yet.
    """
    if not store.models(ws.conn):
        return None
    name, models = load_version(ws, version)
    if store.count_predictions(ws.conn, name) < store.counts(ws.conn)["sentences"]:
        tag(ws, models, name)
    return name


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
    report["previous_version"] = (
        None
        if previous is None
        else {"version": previous["version"], "metrics": previous["metrics"]}
    )
    from extractor.report.results import export_workbook

    report["export"] = export_workbook(ws, trained["version"])
    report["counts"] = after
    return report


# --------------------------------------------------------------------------- labeling


def predictor_for(models: TraitModels) -> Predictor:
    """Return the labeling session's view of a model version: paths, marginals, suggestions."""

    def predict(sentences: Sequence[Sentence]) -> list[Prediction]:
        out = []
        for found in models.predict(sentences):
            suggestions = tuple(
                Suggestion(
                    Span(m.start, m.end, m.concept, m.stance),
                    m.confidence,
                    m.concept_probs,
                    m.stance_probs,
                )
                for m in found.mentions
            )
            out.append(
                Prediction(
                    tuple(found.tagged.tags),
                    tuple(found.tagged.marginals),
                    found.tagged.probability,
                    suggestions,
                )
            )
        return out

    return predict


def retrainer(ws: Workspace) -> Retrain:
    """Return a function that fits new models on the session's labels, off the main thread.

    The corpus, aliases and settings are read now, so the background thread never
    touches the store.
    """
    corpus = store.sentences(ws.conn)
    aliases = alias_tuples(ws)
    params = dict(ws.settings["tagger"])
    threshold = float(ws.settings["linking"]["threshold"])
    clusters_box: dict[str, Any] = {}

    def retrain(gold: Sequence[tuple[Sentence, Sequence[Span]]]) -> Predictor:
        models = TraitModels(tagger_params=params, link_threshold=threshold)
        models.fit(list(gold), corpus, aliases, clusters=clusters_box.get("clusters"))
        clusters_box["clusters"] = models.clusters_
        return predictor_for(models)

    return retrain


def session_settings(ws: Workspace) -> SessionSettings:
    """Return the labeling session's settings from ``traits.toml``."""
    active = ws.settings["active"]
    return SessionSettings(
        retrain_every=int(active["retrain_every"]),
        evaluation_fraction=float(active["evaluation_share"]),
        evaluation_min=int(active["evaluation_min"]),
        stop_set_size=int(active["stop_set_size"]),
        kappa_threshold=float(active["stop_kappa"]),
        kappa_rounds=int(active["stop_rounds"]),
        subpool=int(active["subpool"]) or None,
    )


def label(
    ws: Workspace,
    *,
    annotator: str,
    batch_size: int | None,
    strategy: str | None,
    evaluation: bool = False,
    console: Any = None,
    input_stream: Any = None,
) -> dict[str, Any]:
    """Run a labeling session over the newest model version (or a cold start).

    With ``evaluation``, the sentences come from the unlabeled part of the random
    evaluation sample instead, so that quality can be measured honestly.
    """
    from extractor.cli.screen import run_console

    active = ws.settings["active"]
    predictor = None
    if store.models(ws.conn):
        _, models = load_version(ws)
        predictor = predictor_for(models)
    return run_console(
        ws.conn,
        annotator=annotator,
        batch_size=batch_size or int(active["batch_size"]),
        strategy=strategy or str(active["strategy"]),
        model_provider=predictor,
        retrain=retrainer(ws),
        console=console,
        input_stream=input_stream,
        settings=dataclasses.replace(session_settings(ws), offer_evaluation=evaluation),
        quality=lambda: stored_quality(ws),
    )


def stored_quality(ws: Workspace) -> dict[str, float] | None:
    """Return the newest measured quality on the evaluation sample (`traits evaluate`)."""
    latest = store.latest_model(ws.conn)
    found = (latest or {}).get("metrics", {}).get("evaluation_sample") or {}
    if not isinstance(found.get("span_f1"), (int, float)):
        return None
    return {"span F1": float(found["span_f1"]), "of version": latest["version"]}  # type: ignore[index]


# --------------------------------------------------------------------------- quality, curation


def evaluate_workspace(ws: Workspace, *, k: int = 5) -> dict[str, Any]:
    """Cross-validate on the labels and score the newest version on the evaluation sample.

    Both figures are stored with the newest model version.
    """
    from extractor.models import metrics as evaluate

    ensure_samples(ws.conn, session_settings(ws))
    gold = gold_examples(ws)
    sample = set(store.sample_ids(ws.conn, "evaluation"))
    results: dict[str, Any] = {"notes": {}}
    corpus = store.sentences(ws.conn)
    outside = [(s, spans) for s, spans in gold if s.id not in sample]
    cv, why = _cross_validate(ws, outside, corpus, _reusable_clusters(ws, corpus), k)
    if cv is None:
        results["notes"]["cross-validation"] = why
    else:
        results["cross_validation"] = cv
    latest = store.latest_model(ws.conn)
    held_out = [(s, spans) for s, spans in gold if s.id in sample]
    if latest is None:
        results["notes"]["evaluation sample"] = "no model version yet; run `traits train`."
    elif not held_out:
        results["notes"]["evaluation sample"] = (
            "none of the evaluation sample is labeled yet; `traits label` offers it."
        )
    else:
        version, models = load_version(ws)
        results["evaluation_sample"] = evaluate.evaluate_on(models, held_out)
        learned = int(latest["meta"].get("counts", {}).get("gold_sentences", 0))
        if learned != len(outside):
            results["notes"]["stale version"] = (
                f"model version {version} learned from {learned} labeled sentences, but "
                f"{len(outside)} are labeled now (outside the evaluation sample); "
                "run `traits train` and evaluate again to score a model that learned from them."
            )
    if latest is not None:
        results["version"] = latest["version"]
        store.set_model_metrics(
            ws.conn,
            latest["version"],
            {
                key: results[key]
                for key in ("cross_validation", "evaluation_sample")
                if key in results
            },
        )
    return results


def suggest_terms(ws: Workspace, *, min_count: int = 2) -> list[dict[str, Any]]:
    """Return frequent mentions of the newest version that no concept was linked to."""
    from extractor.models.linking import suggest_terms as rank_terms

    version, models = load_version(ws)
    predicted = store.predictions(ws.conn, version)
    sentences = {s.id: s for s in store.sentences(ws.conn, predicted)}
    unlinked = [
        (sentences[sid], Span(m["start"], m["end"]))
        for sid, row in predicted.items()
        if sid in sentences
        for m in row["mentions"]
        if m.get("concept") is None
    ]
    return rank_terms(unlinked, models.linker_, models.clusters_, min_count=min_count)


def export_concepts(ws: Workspace, out: Path | None = None) -> Path:
    """Write the concept list in its import format, one row per concept and language.

    Aliases from the imported list fill ``synonyms`` and ``hidden`` as they were; aliases
    accepted by annotators are listed apart in ``accepted_aliases`` (with who accepted
    them), for curators to review and, if they agree, move into ``synonyms``.
    """
    import csv

    out = out or ws.exports_dir / "concepts_with_accepted_aliases.csv"
    out.parent.mkdir(parents=True, exist_ok=True)
    concepts = {c["id"]: c for c in store.concepts(ws.conn)}
    rows: dict[tuple[str, str], dict[str, list[str]]] = {}
    for alias in store.aliases(ws.conn):
        key = (alias["concept_id"], alias["lang"])
        row = rows.setdefault(key, {"alternative": [], "hidden": [], "accepted": []})
        if alias["origin"] == "annotator":
            row["accepted"].append(f"{alias['text']} (by {alias['added_by'] or 'unknown'})")
        elif alias["kind"] != "preferred":
            row[alias["kind"]].append(alias["text"])
    with out.open("w", encoding="utf-8", newline="") as handle:
        writer = csv.writer(handle)
        writer.writerow(
            [
                "id",
                "label",
                "lang",
                "synonyms",
                "hidden",
                "parent",
                "definition",
                "accepted_aliases",
            ]
        )
        for (concept_id, lang), row in sorted(rows.items()):
            concept = concepts.get(concept_id, {})
            writer.writerow(
                [
                    concept_id,
                    concept.get("labels", {}).get(lang, ""),
                    lang,
                    "|".join(row["alternative"]),
                    "|".join(row["hidden"]),
                    concept.get("parent") or "",
                    concept.get("definition") or "",
                    "|".join(row["accepted"]),
                ]
            )
    return out
