"""The labeling session's wiring from a workspace, and importing labels from files.

:func:`labeling_setup` turns the workspace's settings and newest model version into
what a labeling screen needs (the screen itself lives in the command line). When labels
were given after the newest version was trained, it trains a new version from them
first (or, when asked not to, reports how many labels the suggestions lack).
"""

from __future__ import annotations

import dataclasses
import sqlite3
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from extractor.errors import InputError
from extractor.ingest.labels import LabelImport, convert_legacy_lines, import_labels, read_labels
from extractor.jobs.evaluate import stored_quality
from extractor.jobs.inputs import (
    alias_tuples,
    model_params,
    question_codebook,
    session_settings,
)
from extractor.jobs.train import load_version, train
from extractor.loop.predictor import Predictor, Retrain
from extractor.loop.samples import SessionSettings
from extractor.models.bundle import TraitModels
from extractor.progress import track
from extractor.report.results import respondent_metadata
from extractor.types import Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace


@dataclass(frozen=True)
class LabelingSetup:
    """Everything a labeling screen needs to run a session over a workspace.

    Attributes:
        version: the saved model version the suggestions come from (None: no model).
        newer_labels: labels given after that version was trained, which it lacks.
        trained_from: the previous newest version, when a new one was trained first
            because ``trained_labels`` labels were newer than it.
        respondents: respondent ID -> metadata, read through ``[metadata]`` as the
            workbook reads them, for the screen to show.
        questions: question as stored (a survey field name) -> its wording in the
            question codebook, for the screen to show.
    """

    conn: sqlite3.Connection
    annotator: str
    batch_size: int
    strategy: str
    predictor: Predictor | None
    retrain: Retrain
    settings: SessionSettings
    quality: Callable[[], Mapping[str, float | str] | None]
    version: str | None = None
    newer_labels: int = 0
    trained_from: str | None = None
    trained_labels: int = 0
    respondents: Mapping[str, Mapping[str, Any]] = field(default_factory=dict)
    questions: Mapping[str, str] = field(default_factory=dict)


def labels_newer_than(ws: Workspace, version: store.ModelVersion) -> int:
    """Return how many labels (and withdrawn labels) were given after ``version`` was saved.

    Labels of the evaluation sample are not counted: training keeps them out anyway.
    """
    held_out = set(store.sample_ids(ws.conn, "evaluation"))
    return sum(
        1
        for row in store.label_history(ws.conn)
        if row["created_at"] > version.created_at and row["sentence_id"] not in held_out
    )


def retrainer(ws: Workspace) -> Retrain:
    """Return a function that fits new models on the session's labels, off the main thread.

    The corpus, aliases and settings are read now, so the background thread never
    touches the store.
    """
    corpus = store.sentences(ws.conn)
    aliases = alias_tuples(ws)
    params = model_params(ws)
    clusters_box: dict[str, Any] = {}

    def retrain(gold: Sequence[tuple[Sentence, Sequence[Span]]]) -> Predictor:
        models = TraitModels(**params)
        models.fit(list(gold), corpus, aliases, clusters=clusters_box.get("clusters"))
        clusters_box["clusters"] = models.clusters_
        return models.predict

    return retrain


def labeling_setup(
    ws: Workspace,
    *,
    annotator: str,
    batch_size: int | None = None,
    strategy: str | None = None,
    evaluation: bool = False,
    train_first: bool = True,
) -> LabelingSetup:
    """Return a labeling session's setup over the newest model version (or a cold start).

    With ``evaluation``, the sentences come from the unlabeled part of the random
    evaluation sample instead, so that quality can be measured honestly. Options left
    as None come from the workspace's settings. With ``train_first``, labels given since
    the newest version was trained are learned first: a new version is trained and
    saved (without cross-validation, so it is quick), with a progress bar.
    """
    active = ws.settings.active
    predictor = version = trained_from = None
    newer = trained = 0
    latest = store.latest_model(ws.conn)
    if latest is not None:
        newer = labels_newer_than(ws, latest)
        if newer and train_first:
            described = f"Learning the {newer} labels newer than model {latest.version}"
            for _ in track(range(1), described, 1):
                fresh = train(ws, cross_validate=False)
            version, models = fresh.report.version, fresh.models
            trained_from, trained, newer = latest.version, newer, 0
        else:
            version, models = load_version(ws)
        predictor = models.predict
    return LabelingSetup(
        conn=ws.conn,
        annotator=annotator,
        batch_size=batch_size or active.batch_size,
        strategy=strategy or active.strategy,
        predictor=predictor,
        retrain=retrainer(ws),
        settings=dataclasses.replace(session_settings(ws), offer_evaluation=evaluation),
        quality=lambda: stored_quality(ws),
        version=version,
        newer_labels=newer,
        trained_from=trained_from,
        trained_labels=trained,
        respondents=respondent_metadata(ws),
        questions={key: code.text for key, code in question_codebook(ws).items() if code.text},
    )


def import_label_file(ws: Workspace, path: Path, *, annotator: str) -> LabelImport:
    """Import labels from the label format (JSON Lines) or CoNLL IOB2 columns.

    Every line is checked, and every concept against the workspace's concept list,
    before anything is stored; a bad file stores nothing.

    Returns:
        The counts of the import: labels, spans, implicit traits, matched and added sentences.
    """
    default_lang = ws.settings.workspace.default_language
    records = read_labels(path, default_lang=default_lang)
    return import_labels(
        ws.conn, records, annotator=annotator, default_lang=default_lang, source=path.name
    )


def convert_label_file(old: Path, new: Path) -> int:
    """Write a label file of earlier versions (``text``/``spans``) in the label format.

    Returns:
        The number of labeled sentences written.

    Raises:
        InputError: ``old`` cannot be read or breaks the format (by line), or ``new``
            exists already or cannot be written.
    """
    if new.exists():
        raise InputError(f"{new} exists already; name a new file to write the labels to.")
    try:
        text = old.read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"{old} cannot be read as UTF-8 text ({exc}); check the path.") from exc
    lines = convert_legacy_lines(text.splitlines(), source=old.name)
    try:
        new.write_text("".join(line + "\n" for line in lines), encoding="utf-8")
    except OSError as exc:
        raise InputError(f"Cannot write {new}: {exc.strerror or exc}; check the folder.") from exc
    return len(lines)
