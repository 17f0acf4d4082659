"""Invented tagger training data shared by the tagger tests.

Invented answers about invented varieties (Velora, Tolvane, Mirasol-3).
"""

from __future__ import annotations

from extractor.models.tagger import sentence_items
from extractor.nlp.spans import spans_to_iob
from extractor.types import Sentence, Span

TEMPLATES = [
    "We like the {t} of Velora .",
    "Tolvane has a poor {t} in the rainy season .",
    "My wife sells it because the {t} is good .",
    "The {t} of Mirasol-3 is better than the old one .",
]
TRAITS = ["taste", "cooking time", "yield", "firmness", "grain colour"]


def labelled(text: str, trait: str) -> tuple[Sentence, list[Span]]:
    """Return a sentence and the span of ``trait`` in it."""
    start = text.index(trait)
    return Sentence(0, text, "en"), [Span(start, start + len(trait))]


def toy_gold() -> list[tuple[Sentence, list[Span]]]:
    """Return every template filled with every trait, the trait labelled."""
    return [labelled(tpl.format(t=t), t) for tpl in TEMPLATES for t in TRAITS]


def toy_xy(data: list[tuple[Sentence, list[Span]]]) -> tuple[list, list]:
    """Return CRF features and IOB2 tags of labelled sentences, without dictionary or clusters."""
    X, y = [], []
    for sentence, spans in data:
        offsets, feats, _ = sentence_items(sentence, None, None)
        X.append(feats)
        y.append(spans_to_iob(offsets, spans))
    return X, y
