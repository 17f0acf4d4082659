"""A fake tagger with fixed probabilities and a small invented study, for session tests.

Nothing here is trained: the fake predictor proposes a span wherever a known phrase
occurs and gives each sentence a path probability that the test chooses, so the order
in which a strategy asks is known in advance. All places, people, varieties and trait
IDs are invented.
"""

from __future__ import annotations

import re
import sqlite3
import time
from collections.abc import Callable, Sequence
from pathlib import Path

from extractor.loop.predictor import TrainingData
from extractor.models.bundle import Mention, SentencePrediction
from extractor.models.tagger import TagResult
from extractor.types import AliasEntry, AnswerRow, ConceptEntry, Sentence, Span
from extractor.workspace import store

CONCEPTS = [
    ConceptEntry("BTX:0002", None, "Time on the fire until soft."),
    ConceptEntry("BTX:0007", None, "Bitter taste of grain or leaves."),
    ConceptEntry("BTX:0011", None, "Size of the dry grain."),
    ConceptEntry("BTX:0015", None, "Amount harvested per plot."),
    ConceptEntry("BTX:0020", None, "Survives dry spells."),
]

ALIASES = [
    ("BTX:0002", "cooking time", "en", "preferred"),
    ("BTX:0002", "temps de cuisson", "fr", "preferred"),
    ("BTX:0002", "cooks fast", "en", "alternative"),
    ("BTX:0007", "bitterness", "en", "preferred"),
    ("BTX:0007", "amertume", "fr", "preferred"),
    ("BTX:0007", "bitter", "en", "alternative"),
    ("BTX:0011", "grain size", "en", "preferred"),
    ("BTX:0011", "gros grains", "fr", "alternative"),
    ("BTX:0015", "yield", "en", "preferred"),
    ("BTX:0015", "rendement", "fr", "preferred"),
    ("BTX:0015", "harvest", "en", "alternative"),
    ("BTX:0020", "drought tolerance", "en", "preferred"),
]

# Ten answers of two sentences each: twenty sentences, IDs 1..20 in this order.
ANSWERS = [
    ("Zamaro Red cooks fast on the fire.", "The children like it."),
    ("The harvest is small this year.", "Rain came late in Tinsoka."),
    ("The leaves are bitter when old.", "We sell the rest at Kalowa market."),
    ("It has big grains that traders want.", "Big grains fetch more money."),
    ("We would like a bean that survives the dry spell.", "The last one died."),
    ("My husband planted it near the river.", "It cooks fast and the broth is thick."),
    ("Lintu Yellow is bitter after storage.", "Nobody buys it then."),
    ("I want a bigger harvest from one plot.", "Land is short."),
    ("The soup turns dark.", "Customers complain about that."),
    ("It cooks fast but it is bitter.", "Still we grow it."),
]

KNOWN = {
    "cooks fast": ("BTX:0002", "liked"),
    "big grains": ("BTX:0011", "liked"),
    "bitter": ("BTX:0007", "disliked"),
}
"""Phrases the fake model recognises, with the concept and stance it suggests."""


def build_store(
    path: Path,
    answers: Sequence[tuple[str, ...]] = ANSWERS,
    *,
    question: str = "Why do you grow this bean?",
    lang: str = "en",
    aliases: Sequence[tuple[str, str, str, str]] = ALIASES,
) -> sqlite3.Connection:
    """Create a store holding the invented answers (sentence IDs 1..N) and concept list.

    Every answer replies to ``question`` and is in ``lang``; ``aliases`` are
    ``(concept, text, lang, kind)`` rows over the concepts of :data:`CONCEPTS`.
    """
    conn = store.connect(path, create=True)
    rows: list[AnswerRow] = []
    offsets: list[list[tuple[int, int]]] = []
    for k, parts in enumerate(answers):
        text = " ".join(parts)
        spans, pos = [], 0
        for part in parts:
            start = text.index(part, pos)
            spans.append((start, start + len(part)))
            pos = start + len(part)
        rows.append(
            AnswerRow(
                respondent=f"TS-{k % 4:03d}",
                question=question,
                answer=text,
                lang=lang,
                lang_origin="column",
                variety="Zamaro Red" if k % 2 else None,
                metadata={
                    "role": "farmer" if k % 3 else "trader",
                    "gender": "woman" if k % 2 else "man",
                    "district": "Tinsoka",
                },
                sheet=None,
                row=k + 2,
                is_group=k == 3,
            )
        )
        offsets.append(spans)
    store.add_source(
        conn,
        path="invented.csv",
        sha256=f"{len(answers)}",
        kind="csv",
        options={},
        rows=rows,
        sentence_offsets=offsets,
    )
    store.replace_concept_list(
        conn,
        kind="trait",
        path="traits.csv",
        sha256="x",
        concepts=CONCEPTS,
        aliases=[AliasEntry(*alias) for alias in aliases],
    )
    return conn


def words(text: str) -> list[tuple[int, int]]:
    """Whitespace tokens with punctuation split off, as character offsets."""
    return [m.span() for m in re.finditer(r"\w+|[^\w\s]", text)]


class FakeModel:
    """A predictor with fixed probabilities.

    Args:
        path_prob: gives each sentence's best-path probability; by default it rises with
            the sentence ID, so least confidence asks sentence 1 first.
        delay: seconds to sleep per call, to imitate a slow model.
        flip_every: tag every k-th token ``B-TRAIT`` as well (0 = never), to make
            successive models disagree on the stop set.
    """

    def __init__(
        self,
        path_prob: Callable[[Sentence], float] | None = None,
        delay: float = 0.0,
        flip_every: int = 0,
    ) -> None:
        self.path_prob = path_prob or (lambda s: 1.0 - 1.0 / (s.id + 1))
        self.delay = delay
        self.flip_every = flip_every
        self.calls = 0

    def __call__(self, sentences: Sequence[Sentence]) -> list[SentencePrediction]:
        """Tag sentences, after the configured delay."""
        self.calls += 1
        if self.delay:
            time.sleep(self.delay)
        return [self.predict(s) for s in sentences]

    def predict(self, sentence: Sentence) -> SentencePrediction:
        """Tag one sentence."""
        tokens = words(sentence.text)
        prob = self.path_prob(sentence)
        mentions = []
        tags = ["O"] * len(tokens)
        for phrase, (concept, stance) in KNOWN.items():
            for m in re.finditer(re.escape(phrase), sentence.text, flags=re.IGNORECASE):
                mentions.append(
                    Mention(
                        m.start(),
                        m.end(),
                        confidence=0.8,
                        concept=concept,
                        link_prob=0.7,
                        stance=stance,
                        stance_prob=0.9,
                        concept_probs={concept: 0.7, "BTX:0015": 0.3},
                        stance_probs={stance: 0.9, "neutral": 0.1},
                    )
                )
                inside = [k for k, (s, e) in enumerate(tokens) if s >= m.start() and e <= m.end()]
                for n, k in enumerate(inside):
                    tags[k] = "B-TRAIT" if n == 0 else "I-TRAIT"
        if self.flip_every:
            for k in range(0, len(tags), self.flip_every):
                tags[k] = "B-TRAIT"
        # Each token's best tag gets the n-th root of the path probability.
        p = prob ** (1.0 / max(len(tokens), 1))
        marginals = [
            {t: (p if t == tag else (1.0 - p) / 2) for t in ("O", "B-TRAIT", "I-TRAIT")}
            for tag in tags
        ]
        mentions.sort(key=lambda m: m.start)
        spans = [Span(m.start, m.end, m.concept, m.stance) for m in mentions]
        return SentencePrediction(mentions, TagResult(spans, tokens, tags, marginals, prob))


class FakeRetrain:
    """A retrain callable that records how many labels it was given and returns a FakeModel.

    Args:
        delay: seconds to sleep per call, to imitate slow training.
        flip_every: passed on to every FakeModel it returns.
    """

    def __init__(self, delay: float = 0.0, flip_every: int = 0) -> None:
        self.delay = delay
        self.flip_every = flip_every
        self.seen: list[int] = []

    def __call__(self, data: TrainingData) -> FakeModel:
        """Record ``len(data)`` and return a new FakeModel, after the configured delay."""
        self.seen.append(len(data))
        if self.delay:
            time.sleep(self.delay)
        return FakeModel(flip_every=self.flip_every)


def fake_retrain(delay: float = 0.0, flip_every: int = 0) -> FakeRetrain:
    """Return a retrain callable that records what it was given and returns a FakeModel."""
    return FakeRetrain(delay, flip_every)
