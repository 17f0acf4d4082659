"""What a labeling session hands to a screen: the sentence to show, and its summary at the end."""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

from extractor.models.bundle import SentencePrediction
from extractor.types import Implicit, Sentence, Span
from extractor.workspace import store


class Item(NamedTuple):
    """A sentence to show, with its context and the answer proposed for it.

    Attributes:
        sentence: the sentence.
        context: question, previous sentence, respondent and metadata, variety.
        suggestion: the proposed spans (empty = "no trait here").
        prediction: the model's prediction, if there is a model.
        origin: ``"model"``, ``"previous"`` (the annotator's undone label) or ``"none"``.
        in_evaluation: the sentence belongs to the evaluation sample.
        implicit_suggestion: the proposed traits without a quote span (the model's
            sentence-level detections, or the annotator's undone ones).
    """

    sentence: Sentence
    context: store.SentenceContext
    suggestion: tuple[Span, ...]
    prediction: SentencePrediction | None
    origin: str
    in_evaluation: bool
    implicit_suggestion: tuple[Implicit, ...] = ()


@dataclass(frozen=True)
class SessionSummary:
    """A session's counts and stopping state.

    Attributes:
        annotator: who labeled.
        strategy: the query strategy's name.
        labeled: labels given in this session (less those undone).
        skipped: sentences skipped in this session.
        undone: labels retracted in this session.
        total_labels: sentences with a label in force, from anyone.
        model_version: models installed in this session (the starting one included).
        kappas: agreement of successive models on the stop set.
        stop_signal: successive models agree enough that further labels change little.
    """

    annotator: str
    strategy: str
    labeled: int
    skipped: int
    undone: int
    total_labels: int
    model_version: int
    kappas: tuple[float, ...]
    stop_signal: bool
