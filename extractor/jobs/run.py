"""The whole job over a workspace (`traits run`): ingest, import lists, train, tag, export."""

from __future__ import annotations

import hashlib
import json
from collections.abc import Mapping, Sequence
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any

from extractor.errors import TraitsError
from extractor.ingest.intake import (
    ConceptImport,
    FileReport,
    add_files,
    import_concepts,
    imported_lists,
    interview_files,
    stored_path,
)
from extractor.jobs.add import AddReport, intake_report
from extractor.jobs.export import ExportResult, export_workbook
from extractor.jobs.inputs import question_codebook, stance_params
from extractor.jobs.status import WorkspaceCounts
from extractor.jobs.tag import TagReport, ensure_tagged, tag
from extractor.jobs.train import TrainReport, train
from extractor.models.bundle import TrainingCounts
from extractor.nlp.text import primary_subtag
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace, is_workspace


@dataclass(frozen=True)
class NewSince:
    """What the run added since the last one."""

    respondents: int
    sentences: int
    languages: tuple[str, ...]


@dataclass(frozen=True)
class VersionQuality:
    """A model version's name, its stored figures and how many labeled sentences it learned."""

    version: str
    metrics: Mapping[str, Any]
    labeled: int = 0


@dataclass(frozen=True)
class TrainTagReport:
    """A new version trained, then every sentence tagged with it."""

    train: TrainReport
    tag: TagReport


@dataclass(frozen=True)
class RunReport:
    """Everything `traits run` did, for the command line to print.

    ``retrained`` is False when nothing a version learns from changed since the latest
    one, which was then reused (``train`` describes it, ``previous_version`` is None).
    ``intake`` is what `traits add` would have said of the files read, when any brought
    new answers (their languages, those outside the study's, uncoded questions).
    ``lists_in_interviews`` are the concept or variety lists (path, kind, whether
    traits.toml names it) found in the interviews folder and so not read as interviews.
    ``silent`` are the languages in whose sentences no trait was found (see
    :func:`silent_languages`).
    """

    files: Sequence[FileReport]
    concepts: ConceptImport | None
    varieties: ConceptImport | None
    new: NewSince
    train: TrainReport
    tag: TagReport
    previous_version: VersionQuality | None
    export: ExportResult
    counts: WorkspaceCounts
    retrained: bool = True
    first_run: bool = False
    intake: AddReport | None = None
    silent: tuple[tuple[str, int], ...] = ()
    lists_in_interviews: tuple[tuple[str, str, bool], ...] = ()


MIN_SILENT = 10
"""Sentences a language needs before finding no trait in any of them is worth saying."""


def silent_languages(ws: Workspace, version: str) -> tuple[tuple[str, int], ...]:
    """Return the languages (tag, sentences) in whose sentences no trait was found.

    A language counts when it has :data:`MIN_SILENT` sentences or more and neither the
    model version nor a person's label links a trait to a concept in any of them (an
    unlinked mention fills no cell of the workbook): a language the concept list has no
    synonyms in, and no label has taught, is read as holding no trait at all.
    """
    predicted = store.predictions(ws.conn, version)
    labels = store.current_labels(ws.conn)
    total: dict[str, int] = {}
    found: set[str] = set()
    for sentence in store.sentences(ws.conn):
        tag = primary_subtag(sentence.lang)
        total[tag] = total.get(tag, 0) + 1
        prediction, label = predicted.get(sentence.id), labels.get(sentence.id)
        if (prediction is not None and any(m.get("concept") for m in prediction.mentions)) or (
            label is not None and (any(s.concept for s in label.spans) or label.implicit)
        ):
            found.add(tag)
    return tuple(
        (tag, n) for tag, n in sorted(total.items()) if n >= MIN_SILENT and tag not in found
    )


TRAINED_INPUTS_KEY = "trained_inputs"
"""Meta key of the newest version trained and the digest of what it was trained on."""


def training_inputs(ws: Workspace) -> str:
    """Return a digest of everything a model version learns from or is tagged with.

    The interview files and the answers and sentences stored from them (with their
    languages), every imported concept and variety list, every alias (accepted ones too),
    the label history (append-only, so undo counts as a change) and the model settings.
    """
    counts = store.counts(ws.conn)
    history = store.label_history(ws.conn)
    parts = {
        "sources": [(s["path"], s["sha256"]) for s in store.sources(ws.conn)],
        "answers": counts["answers"],
        "sentences": counts["sentences"],
        "language_tags": counts["language_tags"],
        "lists": [(v.kind, v.sha256) for v in store.concept_versions(ws.conn)],
        "aliases": sorted(
            (kind, a.concept_id, a.lang, a.text, a.kind)
            for kind in ("trait", "variety")
            for a in store.aliases(ws.conn, kind)
        ),
        "labels": (len(history), history[-1]["id"] if history else None),
        "tagger": asdict(ws.settings.tagger),
        "linking": asdict(ws.settings.linking),
        "stance": stance_params(ws),
        "stance_cues": _file_digest(ws.path("stance_cues"))
        if ws.settings.workspace.stance_cues
        else None,
    }
    text = json.dumps(parts, sort_keys=True, default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _file_digest(path: Path) -> str | None:
    """Return the SHA-256 of a file's bytes, or None when it cannot be read."""
    try:
        return hashlib.sha256(path.read_bytes()).hexdigest()
    except OSError:
        return None


def _unchanged_version(ws: Workspace, digest: str) -> store.ModelVersion | None:
    """Return the newest version when it was trained on exactly these inputs, else None."""
    latest = store.latest_model(ws.conn)
    recorded = store.get_meta(ws.conn, TRAINED_INPUTS_KEY)
    if latest is None or recorded is None:
        return None
    found = json.loads(recorded)
    same = found.get("version") == latest.version and found.get("digest") == digest
    return latest if same else None


def train_and_tag(ws: Workspace, *, cross_validate: bool = True) -> TrainTagReport:
    """Train a new model version, then tag every sentence with it.

    What it was trained on is recorded, so that `traits run` can tell when nothing changed.
    """
    digest = training_inputs(ws)
    trained = train(ws, cross_validate=cross_validate)
    tagged = tag(ws, trained.models, trained.report.version)
    store.set_meta(
        ws.conn,
        TRAINED_INPUTS_KEY,
        json.dumps({"version": trained.report.version, "digest": digest}),
    )
    return TrainTagReport(trained.report, tagged)


def reuse_version(ws: Workspace, version: store.ModelVersion) -> TrainTagReport:
    """Describe a saved version as training would have, tagging every sentence if needed."""
    ensure_tagged(ws, version.version)
    predicted = store.predictions(ws.conn, version.version)
    mentions = [m for row in predicted.values() for m in row.mentions]
    return TrainTagReport(
        TrainReport(
            version=version.version,
            counts=TrainingCounts.from_meta(version.meta.get("counts", {})),
            notes=(),
            metrics=version.metrics,
        ),
        TagReport(
            sentences=len(predicted),
            mentions=len(mentions),
            unlinked=sum(1 for m in mentions if m.get("concept") is None),
        ),
    )


def run(ws: Workspace, *, retrain: bool = False) -> RunReport:
    """Do the whole job: ingest what is new, import changed lists, train, tag and export.

    When nothing a version learns from changed since the latest version, that version is
    reused (and exported) instead of training an identical one, unless ``retrain``.
    """
    before = store.counts(ws.conn)
    previous = store.latest_model(ws.conn)
    # The lists first: language detection chooses among the concept list's languages too.
    concepts_path = ws.path("concepts")
    concepts = import_concepts(ws, concepts_path) if concepts_path.exists() else None
    varieties_path = ws.path("varieties")
    varieties = (
        import_concepts(ws, varieties_path, kind="variety") if varieties_path.exists() else None
    )
    files = interview_files(ws.path("interviews"))
    lists = imported_lists(ws, files)
    files = [path for path in files if path not in lists]
    added = add_files(ws, files, coded=question_codebook(ws)) if files else []
    intake = intake_report(ws, added) if any(report.answers for report in added) else None
    after = store.counts(ws.conn)
    new = NewSince(
        respondents=after["respondents"] - before["respondents"],
        sentences=after["sentences"] - before["sentences"],
        languages=tuple(sorted(set(after["languages"]) - set(before["languages"]))),
    )
    unchanged = None if retrain else _unchanged_version(ws, training_inputs(ws))
    done = train_and_tag(ws) if unchanged is None else reuse_version(ws, unchanged)
    return RunReport(
        files=added,
        concepts=concepts,
        varieties=varieties,
        new=new,
        train=done.train,
        tag=done.tag,
        previous_version=None
        if previous is None or unchanged is not None
        else VersionQuality(
            previous.version,
            previous.metrics,
            TrainingCounts.from_meta(previous.meta.get("counts", {})).gold_sentences,
        ),
        export=export_workbook(ws, done.train.version),
        counts=WorkspaceCounts(**after),
        retrained=unchanged is None,
        first_run=previous is None,
        intake=intake,
        silent=silent_languages(ws, done.train.version),
        lists_in_interviews=tuple(
            (stored_path(ws, p), kind, named) for p, (kind, named) in lists.items()
        ),
    )


def run_in(root: Path, *, retrain: bool = False) -> RunReport:
    """Run the whole job in a folder, making it a workspace first if it holds interviews.

    Raises:
        TraitsError: the folder is neither a workspace nor holds interviews.
    """
    if not is_workspace(root):
        if not (root / "sample_interviews").is_dir() and not (root / "interviews").is_dir():
            raise TraitsError(
                f"{root.resolve()} is not a workspace; run `traits init` there first, or run "
                "`traits run` in a folder holding interviews/."
            )
        init_workspace(root)
    with Workspace.open(root) as ws:
        return run(ws, retrain=retrain)
