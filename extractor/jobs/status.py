"""What a workspace holds: counts for `traits status` and the model versions."""

from __future__ import annotations

from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from extractor.nlp import pretrained
from extractor.nlp.text import primary_subtag
from extractor.report.metadata import Harmonised
from extractor.report.results import harmonised_respondents
from extractor.report.value_suggest import (
    MergeSuggestion,
    suggest_merges,
    values_line,
    wide_columns,
)
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


@dataclass(frozen=True)
class ValueSuggestions:
    """Suggested merges of wide metadata columns, and the ``values`` line that makes them."""

    merges: tuple[MergeSuggestion, ...]
    values_line: str


def metadata_suggestions(
    ws: Workspace, merged: Harmonised | None = None, *, space: str | None = pretrained.DEFAULT
) -> ValueSuggestions:
    """Return suggested value merges for metadata columns too wide for the pivot.

    Nothing is applied: the analyst adds the line to ``[metadata]`` in ``traits.toml``.
    """
    merged = merged or harmonised_respondents(ws)
    if not wide_columns(merged.records):
        return ValueSuggestions((), "")  # nothing too wide: no need to read every answer
    answer_langs: dict[str, Counter[str]] = {}
    for answer in store.answers(ws.conn):
        tag = primary_subtag(answer.lang or "")
        answer_langs.setdefault(str(answer.respondent), Counter())[tag] += 1
    by_value: dict[str, dict[str, Counter[str]]] = {}
    for rec in merged.records:
        langs = answer_langs.get(str(rec["respondent"]), Counter())
        for key, value in rec.items():
            if isinstance(value, str):
                by_value.setdefault(key, {}).setdefault(value, Counter()).update(langs)
    value_langs = {
        col: {v: c.most_common(1)[0][0] for v, c in values.items() if c}
        for col, values in by_value.items()
    }
    settings = ws.settings
    first = (settings.workspace.languages or (settings.workspace.default_language,))[0]
    merges = suggest_merges(
        merged.records, value_langs=value_langs, first_language=first, space=space
    )
    line = values_line(merges, settings.metadata.values) if merges else ""
    return ValueSuggestions(merges, line)
