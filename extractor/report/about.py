"""The About sheet: the review caution, facts about the run and counts of what was exported."""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import pandas as pd

from extractor.report.caution import REVIEW_CAUTION


@dataclass(frozen=True)
class RunFacts:
    """Facts about the model version and workspace behind an export.

    A quality figure is the nested mapping the model version recorded (for example
    ``{"span": {"f1": 0.61}}``); the About sheet shows each leaf as "parent / key".
    """

    model_version: str = "none (labels only)"
    model_trained: str | None = None
    quality_cross_validated: Mapping[str, Any] | None = None
    quality_evaluation_sample: Mapping[str, Any] | None = None
    concept_list: str | None = None
    concept_list_sha256: str | None = None
    concept_list_imported: str | None = None
    respondents: int | None = None
    sentences: int | None = None
    sentences_labeled: int | None = None
    exported: str | None = None

    def items(self) -> list[tuple[str, Any]]:
        """Return (item, value) pairs in sheet order, with the sheet's item names."""
        return [
            ("Model version", self.model_version),
            ("Model trained", self.model_trained),
            ("Quality (cross-validated)", self.quality_cross_validated),
            ("Quality (evaluation sample)", self.quality_evaluation_sample),
            ("Concept list", self.concept_list),
            ("Concept list SHA-256", self.concept_list_sha256),
            ("Concept list imported", self.concept_list_imported),
            ("Respondents in workspace", self.respondents),
            ("Sentences in workspace", self.sentences),
            ("Sentences labeled by a person", self.sentences_labeled),
            ("Exported", self.exported),
        ]


@dataclass(frozen=True)
class ExportCounts:
    """What one export holds, counted after merging, filtering and pseudonymising."""

    individuals: int
    focus_groups: int
    mentions: int
    linked: int
    unlinked: int
    by_person: int
    predicted: int
    from_dictionary: int
    concepts: int

    def items(self) -> list[tuple[str, int]]:
        """Return (item, count) pairs in sheet order, with the sheet's item names."""
        return [
            ("Individual respondents", self.individuals),
            ("Focus groups", self.focus_groups),
            ("Mentions exported", self.mentions),
            ("Mentions linked to a concept", self.linked),
            ("Mentions not linked", self.unlinked),
            ("Mentions labeled by a person", self.by_person),
            ("Mentions predicted by the tagger", self.predicted),
            ("Mentions from the dictionary", self.from_dictionary),
            ("Distinct concepts mentioned", self.concepts),
        ]


def export_counts(mentions: pd.DataFrame, respondents: pd.DataFrame) -> ExportCounts:
    """Return the counts shown on the About sheet for prepared frames."""
    source = mentions["source"].value_counts()
    return ExportCounts(
        individuals=int((~respondents["is_group"]).sum()),
        focus_groups=int(respondents["is_group"].sum()),
        mentions=len(mentions),
        linked=int(mentions["concept_id"].notna().sum()),
        unlinked=int(mentions["concept_id"].isna().sum()),
        by_person=int(source.get("person", 0)),
        predicted=int(source.get("predicted", 0)),
        from_dictionary=int(source.get("dictionary", 0)),
        concepts=int(mentions["concept_id"].nunique()),
    )


def _flatten(prefix: str, value: Any, rows: list[tuple[str, Any]]) -> None:
    """Append ``value`` to ``rows``: mappings as "parent / key" rows, lists as JSON text."""
    if isinstance(value, Mapping):
        for k, v in value.items():
            _flatten(f"{prefix} / {k}" if prefix else str(k), v, rows)
    elif isinstance(value, list | tuple | set):
        rows.append((prefix, json.dumps(list(value), ensure_ascii=False, default=str)))
    else:
        rows.append((prefix, value))


def about_table(
    facts: RunFacts, counts: ExportCounts, written: list[tuple[str, Any]]
) -> pd.DataFrame:
    """Return the About sheet as Item/Value rows: caution, run facts, counts, how it was written.

    Args:
        facts: The model version and workspace behind the export.
        counts: What the export holds.
        written: Further (item, value) rows about this export, such as its settings.
    """
    rows: list[tuple[str, Any]] = [("Caution", REVIEW_CAUTION)]
    for item, value in facts.items():
        _flatten(item, value, rows)
    rows.extend(counts.items())
    rows.extend(written)
    return pd.DataFrame(rows, columns=["Item", "Value"])
