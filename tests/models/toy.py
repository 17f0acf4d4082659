"""Invented data shared by the model tests: tagger sentences, a concept list, mentions.

Invented answers about invented varieties (Velora, Tolvane, Mirasol-3) and invented trait IDs.
"""

from __future__ import annotations

from extractor.models.cue_file import load_cues
from extractor.models.stance_features import stance_features
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


# Invented trait IDs, one alias per language.
ALIASES = [
    ("TX:01", "cooking time", "en"),
    ("TX:01", "temps de cuisson", "fr"),
    ("TX:01", "tiempo de cocción", "es"),
    ("TX:02", "seed size", "en"),
    ("TX:02", "taille des grains", "fr"),
    ("TX:02", "tamaño del grano", "es"),
    ("TX:03", "drought tolerance", "en"),
    ("TX:03", "tolérance à la sécheresse", "fr"),
    ("TX:03", "tolerancia a la sequía", "es"),
]

CUES = load_cues()


def mention(
    text: str,
    term: str,
    lang: str = "en",
    question: str | None = None,
    nth: int = 0,
    sid: int = 0,
) -> tuple[Sentence, Span]:
    """Build a sentence and the span of the ``nth`` occurrence of ``term`` in it."""
    start = -1
    for _ in range(nth + 1):
        start = text.index(term, start + 1)
    return Sentence(id=sid, text=text, lang=lang, question=question), Span(start, start + len(term))


def features(text: str, term: str, lang: str = "en", question: str | None = None) -> dict:
    """Return the stance features of ``term`` in ``text`` with the packaged cues."""
    sentence, span = mention(text, term, lang, question)
    return stance_features(sentence, span, CUES)
