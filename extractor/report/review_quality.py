"""Quality measured on a reviewed random sample: precision and recall with Wilson intervals.

For every reviewed sentence of a random sample of respondents, what the model found is
compared with the reviewer's final answer (the mentions kept or fixed, and the missed
traits added). A found mention is right when the reviewer kept its words; it is right
with its concept (and stance) when those were kept too. Recall counts the reviewer's
mentions the model had found with the same words (and concept). The respondent table is
compared as sets of (respondent, concept, stance). Each share gets a Wilson score
interval (statsmodels, through :func:`extractor.report.stats.wilson_interval`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, NamedTuple

from extractor.report.stats import wilson_interval
from extractor.types import Implicit, Span


class ReviewedSentence(NamedTuple):
    """A reviewed sentence: who said it, what the model found, the reviewer's answer.

    ``implied`` are traits the reviewer says the sentence states without words, and
    ``found_implied`` those the model found so; they count in the respondent table only
    (no words to compare).
    """

    respondent: str
    found: Sequence[Span]
    reviewed: Sequence[Span]
    implied: Sequence[Implicit] = ()
    found_implied: Sequence[Implicit] = ()


@dataclass(frozen=True)
class Share:
    """k of n, with its 95% Wilson interval (None when n is 0)."""

    k: int
    n: int

    @property
    def value(self) -> float | None:
        """The share, or None when there is nothing to share out."""
        return self.k / self.n if self.n else None

    @property
    def interval(self) -> tuple[float, float] | None:
        """The 95% Wilson score interval, or None when n is 0."""
        return wilson_interval(self.k, self.n) if self.n else None

    def text(self) -> str:
        """Return e.g. ``0.82 (95% CI 0.70–0.90; 41 of 50)``."""
        if not self.n:
            return "not measured (0 items)"
        low, high = self.interval or (0.0, 0.0)
        return f"{self.k / self.n:.2f} (95% CI {low:.2f}–{high:.2f}; {self.k} of {self.n})"


@dataclass(frozen=True)
class ConceptQuality:
    """Precision and recall of one concept on the reviewed sample."""

    concept: str
    precision: Share
    recall: Share


@dataclass(frozen=True)
class ReviewQuality:
    """The model's quality measured on reviewed respondents of a random sample."""

    respondents: int
    sentences: int
    mention_precision: Share
    concept_precision: Share
    full_precision: Share
    mention_recall: Share
    concept_recall: Share
    table_precision: Share
    table_recall: Share
    by_concept: tuple[ConceptQuality, ...]
    drawn: int | None = None
    """How many respondents the random sample drew (None: not recorded, an older workbook)."""

    @property
    def measured_on(self) -> str:
        """Return what the figures rest on: ``3 reviewed respondents of the 4 drawn (9 sentences)``.

        Without ``of the 4 drawn`` when the workbook did not record the draw.
        """
        people = "respondent" if self.respondents == 1 else "respondents"
        sentences = "sentence" if self.sentences == 1 else "sentences"
        drawn = f" of the {self.drawn} drawn" if self.drawn is not None else ""
        return f"{self.respondents} reviewed {people}{drawn} ({self.sentences} {sentences})"

    @property
    def caution(self) -> str | None:
        """Return the caution when the reviewer left some drawn respondents out, else None.

        The respondents reviewed are then a subset the reviewer chose, no longer a random
        sample, so the figures stand for the study only if the choice had no reason.
        """
        if self.drawn is None or self.respondents >= self.drawn:
            return None
        left = self.drawn - self.respondents
        return (
            f"Only {self.respondents} of the {self.drawn} respondents drawn were reviewed: "
            f"these figures hold for the whole study only if the {left} left out were not "
            "chosen for a reason (such as being harder to read)."
        )

    def as_metrics(self, version: str, reviewer: str) -> dict[str, Any]:
        """Return the figures as stored with the model version and shown on the About sheet."""
        caution = {"caution": self.caution} if self.caution else {}
        return {
            "measured on": self.measured_on,
            **caution,
            "model version": version,
            "reviewer": reviewer,
            "precision (words)": self.mention_precision.text(),
            "precision (words and concept)": self.concept_precision.text(),
            "precision (words, concept and stance)": self.full_precision.text(),
            "recall (words)": self.mention_recall.text(),
            "recall (words and concept)": self.concept_recall.text(),
            "respondent table precision": self.table_precision.text(),
            "respondent table recall": self.table_recall.text(),
        }


def _matches(found: Sequence[Span], reviewed: Sequence[Span], fields: int) -> int:
    """Return how many found spans agree with a reviewed one on the first ``fields`` fields."""
    keys = {tuple(s)[:fields] for s in reviewed}
    return sum(tuple(s)[:fields] in keys for s in found)


def _table(sentences: Sequence[ReviewedSentence], reviewed: bool) -> set[tuple[str, str, str]]:
    return {
        (s.respondent, trait.concept, trait.stance)
        for s in sentences
        for trait in _traits(s, reviewed)
        if trait.concept and trait.stance
    }


def _traits(sentence: ReviewedSentence, reviewed: bool) -> list[Span | Implicit]:
    """Return the traits of the reviewer's answer (with implied ones) or of the model's."""
    if not reviewed:
        return [*sentence.found, *sentence.found_implied]
    return [*sentence.reviewed, *sentence.implied]


def _by_concept(sentences: Sequence[ReviewedSentence]) -> tuple[ConceptQuality, ...]:
    concepts = sorted(
        {sp.concept for s in sentences for sp in [*s.found, *s.reviewed] if sp.concept}
    )
    out = []
    for concept in concepts:
        found = [[sp for sp in s.found if sp.concept == concept] for s in sentences]
        kept = [[sp for sp in s.reviewed if sp.concept == concept] for s in sentences]
        hits = sum(_matches(f, k, 3) for f, k in zip(found, kept, strict=True))
        out.append(
            ConceptQuality(
                concept,
                Share(hits, sum(map(len, found))),
                Share(hits, sum(map(len, kept))),
            )
        )
    return tuple(out)


def review_quality(
    sentences: Sequence[ReviewedSentence], drawn: int | None = None
) -> ReviewQuality:
    """Return precision and recall of what was found, against the reviewer's answers.

    ``drawn`` is how many respondents the random sample drew, when the workbook says.
    """
    n_found = sum(len(s.found) for s in sentences)
    n_reviewed = sum(len(s.reviewed) for s in sentences)
    words = sum(_matches(s.found, s.reviewed, 2) for s in sentences)
    concept = sum(_matches(s.found, s.reviewed, 3) for s in sentences)
    found_table, reviewed_table = _table(sentences, False), _table(sentences, True)
    both = len(found_table & reviewed_table)
    return ReviewQuality(
        respondents=len({s.respondent for s in sentences}),
        sentences=len(sentences),
        mention_precision=Share(words, n_found),
        concept_precision=Share(concept, n_found),
        full_precision=Share(sum(_matches(s.found, s.reviewed, 4) for s in sentences), n_found),
        mention_recall=Share(words, n_reviewed),
        concept_recall=Share(concept, n_reviewed),
        table_precision=Share(both, len(found_table)),
        table_recall=Share(both, len(reviewed_table)),
        by_concept=_by_concept(sentences),
        drawn=drawn,
    )
