"""The About sheet: the review caution, facts about the run and counts of what was exported."""

from __future__ import annotations

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
    quality_reviewed_sample: Mapping[str, Any] | None = None
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
            ("Quality (reviewed sample)", self.quality_reviewed_sample),
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


QUALITY_MEANINGS = {
    "span_f1": "How well the tagger finds the words a person marked as a trait (0 to 1, 1 best)",
    "span_concept_f1": "As span F1, counting a mention only when its trait ID is right too",
    "stance_accuracy": "Share of found mentions whose stance (liked, disliked...) is right",
    "respondent_f1": "How well each respondent's trait lists match a person's reading",
}
"""Headline quality figure -> its one-line meaning on the About sheet."""
QUALITY_NAMES = {
    "span_f1": "span F1",
    "span_concept_f1": "span + trait ID F1",
    "stance_accuracy": "stance accuracy",
    "respondent_f1": "respondent F1",
}
FACT_MEANINGS = {
    "Model version": "The model whose mentions this export holds",
    "Model trained": "When that model was trained (UTC)",
    "Concept list": "The validated trait list the mentions are linked to",
    "Concept list SHA-256": "Fingerprint of that list's file, to tell versions apart",
    "Concept list imported": "When the list was imported (UTC)",
    "Respondents in workspace": "Everyone stored, before any filter of this export",
    "Sentences in workspace": "Sentences stored, all respondents",
    "Sentences labeled by a person": "Sentences a person marked; their marks replace the model's",
    "Exported": "When this export was made (UTC)",
    "Individual respondents": "People interviewed one by one: the n behind every share",
    "Focus groups": "Group interviews, counted as groups and never as individuals",
    "Mentions exported": "Trait mentions in this export, after the confidence floor",
    "Mentions linked to a concept": "Mentions given a trait ID of the list",
    "Mentions not linked": "Mentions no trait ID fitted well enough; see Unlinked terms",
    "Mentions labeled by a person": "Mentions a person marked",
    "Mentions predicted by the tagger": "Mentions the tagger found; review them",
    "Mentions from the dictionary": "Mentions matched from the list's synonyms",
    "Distinct concepts mentioned": "Trait IDs named by at least one respondent",
    "Minimum tagger confidence": "Predicted mentions below this were left out",
    "Pseudonymised": "Whether respondent IDs are pseudonyms and quotes screened",
    "Columns dropped as identifying": "Respondent columns left out of this export, and why",
    "Phone formats screened": "The phone numbers quotes were screened for; others may remain",
    "Written": "When the file was written (local time)",
}
"""About item -> its one-line meaning."""
ABOUT_COLUMNS = ["Item", "Value", "Meaning"]

STANCE_READING = (
    "A stance judges a variety on the trait, whatever the trait's name: bitterness liked "
    "means the variety was praised on bitterness (not bitter), bitterness disliked that it "
    "is too bitter, bitterness wanted that a variety should do better on it. Neutral: "
    "the trait was named without a judgement."
)
"""The About sheet's row on how to read the stances of traits named by a fault."""


def _figure(value: Any) -> Any:
    """Return a figure rounded for reading: two decimals; whole numbers and text as they are."""
    if isinstance(value, float):
        return round(value, 2)
    return value


def _mean_sd(entry: Any) -> str | None:
    """Return "0.61 ± 0.05" for a cross-validated ``{"mean", "sd"}`` entry, or None."""
    if not isinstance(entry, Mapping) or entry.get("mean") is None:
        return None
    sd = entry.get("sd")
    return f"{entry['mean']:.2f}" + (f" ± {sd:.2f}" if isinstance(sd, int | float) else "")


def quality_rows(where: str, figures: Mapping[str, Any] | None) -> list[tuple[str, Any, str]]:
    """Return About rows for one set of quality figures: each headline figure, rounded.

    Args:
        where: ``cross-validated`` or ``evaluation sample``.
        figures: What the model version recorded: per figure a number, or a
            ``{"mean", "sd"}`` mapping (cross-validation), with ``k`` folds or
            ``n_gold_spans``; None when not measured.
    """
    if not figures:
        return [(f"Quality ({where})", "not measured", "Label sentences to measure it")]
    rows: list[tuple[str, Any, str]] = []
    for key, meaning in QUALITY_MEANINGS.items():
        entry = figures.get(key)
        value = _mean_sd(entry) if isinstance(entry, Mapping) else entry
        if value is None:
            continue
        rows.append((f"Quality ({where}): {QUALITY_NAMES[key]}", _figure(value), meaning))
    if isinstance(figures.get("k"), int):
        rows.append((f"Quality ({where}): folds", figures["k"], "Figures are mean ± sd over these"))
    if isinstance(figures.get("n_gold_spans"), int):
        rows.append(
            (
                f"Quality ({where}): spans a person marked",
                figures["n_gold_spans"],
                "Below 30 the figures are too few to mean much",
            )
        )
    return rows


REVIEW_MEANINGS = {
    "measured on": "Respondents of a random sample whose sentences a person reviewed",
    "caution": "Some respondents drawn were not reviewed",
    "model version": "The model whose mentions were reviewed",
    "reviewer": "Who reviewed them",
    "precision (words)": "Share of found mentions whose words the reviewer kept (95% interval)",
    "precision (words and concept)": "As above, with the trait ID kept too",
    "precision (words, concept and stance)": "As above, with the stance kept too",
    "recall (words)": "Share of the reviewer's mentions the model had found",
    "recall (words and concept)": "As above, with the same trait ID",
    "respondent table precision": "Share of (respondent, trait, stance) rows the review kept",
    "respondent table recall": "Share of the reviewed (respondent, trait, stance) rows found",
}
"""Figure of a reviewed sample (:mod:`extractor.report.review_quality`) -> its meaning."""


def reviewed_rows(figures: Mapping[str, Any] | None) -> list[tuple[str, Any, str]]:
    """Return About rows for the quality measured on a reviewed random sample."""
    if not figures:
        return [
            (
                "Quality (reviewed sample)",
                "not measured",
                "Review a random sample: traits review export --sample N, then import it",
            )
        ]
    return [
        (f"Quality (reviewed sample): {key}", value, REVIEW_MEANINGS.get(key, ""))
        for key, value in figures.items()
    ]


def about_table(
    facts: RunFacts, counts: ExportCounts, written: list[tuple[str, Any]]
) -> pd.DataFrame:
    """Return the About sheet as Item/Value/Meaning rows: caution, facts, quality, counts.

    Figures are rounded for reading and each has a one-line meaning; nested records
    (quality) become one row per headline figure.

    Args:
        facts: The model version and workspace behind the export.
        counts: What the export holds.
        written: Further (item, value) rows about this export, such as its settings.
    """
    rows: list[tuple[str, Any, str]] = [
        ("Caution", REVIEW_CAUTION, "Read this first"),
        ("Stances", STANCE_READING, "How to read liked, disliked and wanted"),
    ]
    for item, value in facts.items():
        if item == "Quality (cross-validated)":
            rows += quality_rows("cross-validated", value)
        elif item == "Quality (evaluation sample)":
            rows += quality_rows("evaluation sample", value)
        elif item == "Quality (reviewed sample)":
            rows += reviewed_rows(value)
        else:
            rows.append((item, _figure(value), FACT_MEANINGS.get(item, "")))
    rows += [(item, n, FACT_MEANINGS.get(item, "")) for item, n in counts.items()]
    rows += [(item, _figure(v), FACT_MEANINGS.get(item, "")) for item, v in written]
    return pd.DataFrame(rows, columns=ABOUT_COLUMNS)
