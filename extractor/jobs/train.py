"""Train a model version of a workspace, cross-validate it, and load saved versions."""

from __future__ import annotations

import re
import shutil
import time
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from extractor.errors import ModelError, TraitsError, WorkspaceError
from extractor.jobs.inputs import (
    alias_tuples,
    gold_examples,
    gold_implicit,
    masked,
    model_params,
    screening,
    session_settings,
)
from extractor.loop.samples import ensure_samples
from extractor.models import metrics
from extractor.models.bundle import TrainingCounts, TraitModels
from extractor.models.cue_file import Cues, has_stance_cues
from extractor.models.tagger import ALGORITHMS
from extractor.models.tagger_training import SILVER_FILTERS
from extractor.models.validation import CrossValidation, cross_validate
from extractor.nlp.clusters import corpus_fingerprint, load_clusters
from extractor.nlp.text import primary_subtag
from extractor.types import Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import SETTINGS_FILE, Workspace

MIN_LABELS_FOR_CV = 20
"""Cross-validate a new version only when at least this many sentences are labeled."""
VERSION_NAME = re.compile(r"v\d{3,}-\d{8}T\d{6}")
"""The shape of :func:`new_version_name`: only such folders are ever removed."""
ORPHAN_AGE_S = 600
"""An unrecorded version folder younger than this may be another training saving now."""


@dataclass(frozen=True)
class TrainReport:
    """What training a version did: its name, what it learned from, notes and figures.

    ``stance_gaps`` are the languages a note says have neither stance cues nor stance
    labels (see :func:`stance_gaps`), so that nothing else need say it again.
    """

    version: str
    counts: TrainingCounts
    notes: tuple[str, ...]
    metrics: Mapping[str, Any]
    stance_gaps: tuple[str, ...] = ()


@dataclass(frozen=True)
class TrainedVersion:
    """A freshly trained and saved version: the report and the fitted models."""

    report: TrainReport
    models: TraitModels


def new_version_name(ws: Workspace) -> str:
    """Return a fresh, sortable model version name such as ``v003-20261201T221500``."""
    n = len(store.models(ws.conn)) + 1
    stamp = datetime.now(UTC).strftime("%Y%m%dT%H%M%S")
    name = f"v{n:03d}-{stamp}"
    while (ws.models_dir / name).exists():
        n += 1
        name = f"v{n:03d}-{stamp}"
    return name


def reusable_clusters(ws: Workspace, corpus: Sequence[Sentence]) -> dict[str, Any] | None:
    """Return the latest version's word clusters when the corpus has not changed since.

    Clusters learned before the pretrained space's main axes were (no ``space_axes``
    parameter) are learned again, so the tagger can read the axes on few labels.
    """
    latest = store.latest_model(ws.conn)
    if latest is None:
        return None
    if latest.meta.get("clusters_fingerprint") != corpus_fingerprint(
        (s.text, s.lang) for s in corpus
    ):
        return None
    try:
        clusters = load_clusters(Path(ws.root / latest.path))
    except TraitsError:
        return None
    return clusters if "space_axes" in clusters.get("params", {}) else None


_NOTHING_TO_TRAIN_ON = (
    "There is nothing to train on yet: import a concept list with "
    "`traits concepts import FILE`, or label sentences with `traits label`."
)


def _training_notes(held_out: frozenset[int], has_aliases: bool) -> list[str]:
    notes = []
    if held_out:
        one = len(held_out) == 1
        notes.append(
            f"{len(held_out)} labeled {'sentence' if one else 'sentences'} of the evaluation "
            f"sample {'is' if one else 'are'} kept out of training, so `traits evaluate` can "
            f"score on {'it' if one else 'them'} honestly."
        )
    if not has_aliases:
        notes.append("No concept list is imported, so the tagger learns from labels alone.")
    return notes


def check_tagger_settings(ws: Workspace) -> None:
    """Refuse a tagger setting that training would reject, before anything is written.

    Raises:
        WorkspaceError: naming ``traits.toml``, the ``[tagger]`` section and the key.
    """
    tagger = ws.settings.tagger
    problems = [
        ("algorithm", tagger.algorithm, tagger.algorithm in ALGORITHMS, f"one of {ALGORITHMS}"),
        (
            "silver_filter",
            tagger.silver_filter,
            tagger.silver_filter in SILVER_FILTERS,
            f"one of {SILVER_FILTERS}",
        ),
        ("gold_weight", tagger.gold_weight, tagger.gold_weight >= 1, "a whole number from 1"),
        ("max_iterations", tagger.max_iterations, tagger.max_iterations >= 1, "from 1"),
        ("c1", tagger.c1, tagger.c1 >= 0, "zero or more"),
        ("c2", tagger.c2, tagger.c2 >= 0, "zero or more"),
    ]
    for key, value, ok, allowed in problems:
        if not ok:
            raise WorkspaceError(
                f"{str(ws.root / SETTINGS_FILE)!r}, section [tagger]: {key} must be "
                f"{allowed}; got {value!r}. Fix it and train again (nothing was written)."
            )


def tidy_model_folders(ws: Workspace) -> list[str]:
    """Remove version folders the store never recorded (a killed training); report others.

    Only folders named like a version (:data:`VERSION_NAME`) and untouched for
    :data:`ORPHAN_AGE_S` seconds are removed: a younger one may be another training's
    save in progress, and a folder of another name is the user's own.

    Returns:
        One note per folder removed or left in place.
    """
    if not ws.models_dir.is_dir():
        return []
    recorded = {(ws.root / m.path).resolve() for m in store.models(ws.conn)}
    removed, left = [], []
    for folder in sorted(p for p in ws.models_dir.iterdir() if p.is_dir()):
        if folder.resolve() in recorded:
            continue
        old = time.time() - folder.stat().st_mtime > ORPHAN_AGE_S
        if VERSION_NAME.fullmatch(folder.name) and old:
            shutil.rmtree(folder, ignore_errors=True)
            removed.append(folder.name)
        else:
            left.append(folder.name)
    notes = []
    if removed:
        notes.append(
            "Removed model folders an interrupted training left unrecorded: "
            + ", ".join(removed)
            + "."
        )
    if left:
        notes.append(
            f"Folders in {str(ws.models_dir)!r} that no model version records were left in "
            "place: " + ", ".join(left) + " (delete them if no training is running)."
        )
    return notes


def stance_gaps(
    corpus: Sequence[Sentence], gold: Sequence[tuple[Sentence, Sequence[Span]]], cues: Cues
) -> list[str]:
    """Return the languages of the corpus that have neither stance cues nor stance labels."""
    labelled = {primary_subtag(s.lang) for s, spans in gold if any(sp.stance for sp in spans)}
    found = sorted({primary_subtag(s.lang) for s in corpus if s.lang})
    return [lang for lang in found if lang not in labelled and not has_stance_cues(cues, lang)]


def _stance_note(gaps: Sequence[str]) -> list[str]:
    if not gaps:
        return []
    return [
        f"Answers in {', '.join(gaps)} have neither stance cue words nor stance labels: their "
        "stances come from the question, negation and the labels of other languages only. "
        "Label a few of their mentions, or add cue words (README: 'Stance cues for your "
        "language')."
    ]


def train(ws: Workspace, *, cross_validate: bool = True) -> TrainedVersion:
    """Train and save a new model version from the workspace's labels and concept list.

    Returns:
        The report (version, counts, notes such as "no concept list", metrics) and the
        fitted models.

    Raises:
        ModelError: neither a concept list nor labels are there to learn from.
    """
    # Everything that can refuse is checked before the samples below are written.
    check_tagger_settings(ws)
    # Model files must not hold words that identify someone (phones, e-mails, IDs,
    # names): those stretches are masked, offsets unchanged, before anything is learned.
    screen = screening(ws)
    found = gold_examples(ws)
    labeled = list(zip(masked([s for s, _ in found], screen), [sp for _, sp in found], strict=True))
    aliases = alias_tuples(ws)
    if not labeled and not aliases:
        raise ModelError(_NOTHING_TO_TRAIN_ON)
    if not store.counts(ws.conn)["sentences"]:
        raise ModelError("The workspace holds no sentences; add interviews with `traits add FILE`.")
    evaluation = set(ensure_samples(ws.conn, session_settings(ws))[0])
    gold = [(s, spans) for s, spans in labeled if s.id not in evaluation]
    held_out = frozenset(s.id for s, _ in labeled if s.id in evaluation)
    if not gold and not aliases:
        raise ModelError(_NOTHING_TO_TRAIN_ON)
    notes = tidy_model_folders(ws) + _training_notes(held_out, bool(aliases))
    corpus = masked(store.sentences(ws.conn), screen)
    models = TraitModels(**model_params(ws))
    models.fit(
        gold,
        corpus,
        aliases,
        clusters=reusable_clusters(ws, corpus),
        held_out=held_out,
        implicit=gold_implicit(ws),
    )
    gaps = stance_gaps(corpus, labeled, models.stance_.cues)
    notes += _stance_note(gaps)
    figures: dict[str, Any] = {}
    if cross_validate:
        cv, why = cross_validation(ws, gold, corpus, models.clusters_)
        if cv is not None:
            figures["cross_validation"] = cv.to_dict()
        elif len(gold) >= MIN_LABELS_FOR_CV:
            notes.append(why)
    version = _save_version(ws, models, figures)
    report = TrainReport(version, models.counts_, tuple(notes), figures, tuple(gaps))
    return TrainedVersion(report, models)


def _save_version(ws: Workspace, models: TraitModels, figures: dict[str, Any]) -> str:
    """Save fitted models as a new version and record it; nothing is left on failure."""
    version = new_version_name(ws)
    folder = ws.models_dir / version
    concept_version = store.current_concept_version(ws.conn)
    extra = {
        "version": version,
        "concept_list": None
        if concept_version is None
        else {
            "path": concept_version.path,
            "sha256": concept_version.sha256,
            "imported_at": concept_version.imported_at,
        },
        "metrics": figures,
    }
    try:
        meta = models.save(folder, extra)
        store.add_model(ws.conn, version, folder.relative_to(ws.root).as_posix(), meta)
    except BaseException:
        shutil.rmtree(folder, ignore_errors=True)
        raise
    return version


def cross_validation(
    ws: Workspace,
    gold: list[tuple[Sentence, list[Span]]],
    corpus: list[Sentence],
    clusters: dict[str, Any] | None,
    k: int = 5,
) -> tuple[CrossValidation | None, str]:
    """Return k-fold figures grouped by respondent, or None and the reason there are none.

    ``gold`` is the labels outside the evaluation sample, as in training, so that
    `traits train` and `traits evaluate` measure the same thing.
    """
    if len(gold) < MIN_LABELS_FOR_CV:
        return None, (
            f"only {len(gold)} sentences outside the evaluation sample are labeled; "
            f"label at least {MIN_LABELS_FOR_CV} (`traits label` or "
            "`traits import-labels`)."
        )
    if len({metrics.respondent_key(s) for s, _ in gold}) < 2:
        return None, (
            "all labels come from one respondent, so there is no cross-validation "
            "(its folds keep each respondent's sentences together); label another's."
        )
    return cross_validate(
        gold,
        corpus,
        alias_tuples(ws),
        k=k,
        seed=0,
        model_params=model_params(ws),
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
        else next((m for m in recorded if m.version == version), None)
    )
    if chosen is None:
        raise ModelError(
            f"Model version {version!r} is not in this workspace; see `traits models`."
        )
    return chosen.version, TraitModels.load(ws.root / chosen.path)
