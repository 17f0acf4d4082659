"""The whole job over a workspace (`traits run`): ingest, import lists, train, tag, export."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from extractor.errors import TraitsError
from extractor.ingest.intake import (
    ConceptImport,
    FileReport,
    add_files,
    import_concepts,
    interview_files,
)
from extractor.jobs.export import ExportResult, export_workbook
from extractor.jobs.status import WorkspaceCounts
from extractor.jobs.tag import TagReport, tag
from extractor.jobs.train import TrainReport, train
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
    """A model version's name and its stored figures."""

    version: str
    metrics: Mapping[str, Any]


@dataclass(frozen=True)
class TrainTagReport:
    """A new version trained, then every sentence tagged with it."""

    train: TrainReport
    tag: TagReport


@dataclass(frozen=True)
class RunReport:
    """Everything `traits run` did, for the command line to print."""

    files: Sequence[FileReport]
    concepts: ConceptImport | None
    varieties: ConceptImport | None
    new: NewSince
    train: TrainReport
    tag: TagReport
    previous_version: VersionQuality | None
    export: ExportResult
    counts: WorkspaceCounts


def train_and_tag(ws: Workspace, *, cross_validate: bool = True) -> TrainTagReport:
    """Train a new model version, then tag every sentence with it."""
    trained = train(ws, cross_validate=cross_validate)
    tagged = tag(ws, trained.models, trained.report.version)
    return TrainTagReport(trained.report, tagged)


def run(ws: Workspace) -> RunReport:
    """Do the whole job: ingest what is new, import changed lists, train, tag and export."""
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
    added = add_files(ws, files) if files else []
    after = store.counts(ws.conn)
    new = NewSince(
        respondents=after["respondents"] - before["respondents"],
        sentences=after["sentences"] - before["sentences"],
        languages=tuple(sorted(set(after["languages"]) - set(before["languages"]))),
    )
    done = train_and_tag(ws)
    return RunReport(
        files=added,
        concepts=concepts,
        varieties=varieties,
        new=new,
        train=done.train,
        tag=done.tag,
        previous_version=None
        if previous is None
        else VersionQuality(previous.version, previous.metrics),
        export=export_workbook(ws, done.train.version),
        counts=WorkspaceCounts(**after),
    )


def run_in(root: Path) -> RunReport:
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
        return run(ws)
