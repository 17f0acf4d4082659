"""What a workspace holds: counts for `traits status` and the model versions."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from extractor.report.metadata import Harmonised
from extractor.report.results import harmonised_respondents
from extractor.workspace import store
from extractor.workspace.folder import Workspace


@dataclass(frozen=True)
class WorkspaceCounts:
    """The counts of `traits status`, in the order they are shown.

    ``languages`` counts sentences by primary language subtag, most first;
    ``language_tags`` by the full tag.
    """

    sources: int
    respondents: int
    answers: int
    sentences: int
    languages: Mapping[str, int]
    language_tags: Mapping[str, int]
    concepts: int
    aliases: int
    varieties: int
    labels: int
    models: int


def workspace_status(ws: Workspace) -> WorkspaceCounts:
    """Return the counts of what the workspace holds."""
    return WorkspaceCounts(**store.counts(ws.conn))


def model_versions(ws: Workspace) -> Sequence[store.ModelVersion]:
    """Return the recorded model versions, oldest first, with their metadata and metrics."""
    return store.models(ws.conn)


def metadata_merges(ws: Workspace) -> Harmonised:
    """Return the respondents' metadata as exports read it, with the columns and values merged."""
    return harmonised_respondents(ws)
