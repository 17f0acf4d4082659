"""Drawing the labeling screen: labels, confidences and span marks, as pure functions.

Expected texts are built with plain string operations on the sentence, independently of
rich, which only renders them.
"""

from __future__ import annotations

import io
from types import SimpleNamespace

import pytest
from rich.console import Console

from extractor.cli.screen_draw import (
    STANCE_STYLE,
    agreement_words,
    concept_label,
    confidence_text,
    context_grid,
    progress_text,
    sentence_text,
)
from extractor.loop.items import Item
from extractor.loop.marking import ConceptEntry
from extractor.models.bundle import Mention
from extractor.types import Sentence, Span
from extractor.workspace.store import SentenceContext

# invented concept IDs and labels
ENTRIES = [
    ConceptEntry("BTX:0001", "cooking time", "en", True),
    ConceptEntry("BTX:0001", "temps de cuisson", "fr", True),
    ConceptEntry("BTX:0001", "cooks fast", "en", False),
    ConceptEntry("BTX:0009", "rendimiento", "es", True),
]
TEXT = "It cooks fast and the broth is thick."


def _item(context: SentenceContext | None = None) -> Item:
    sentence = Sentence(id=1, text=TEXT, lang="en", respondent="KA-01")
    ctx = context or SentenceContext(None, None, "KA-01", {}, False, None)
    return Item(sentence, ctx, (), None, "none", False)


@pytest.mark.parametrize(
    ("concept", "lang", "expected"),
    [
        ("BTX:0001", "fr", "BTX:0001 temps de cuisson"),
        ("BTX:0001", "es", "BTX:0001 cooking time"),
        ("BTX:0009", "en", "BTX:0009 rendimiento"),
        (None, "en", "no concept"),
    ],
    ids=["own-language", "english-fallback", "any-label", "none"],
)
def test_concept_label_prefers_the_sentence_language(
    concept: str | None, lang: str, expected: str
) -> None:
    assert concept_label(ENTRIES, concept, lang) == expected


def test_confidence_text_follows_the_drafted_concept_and_stance() -> None:
    mention = Mention(
        3, 13, 0.914, "BTX:0001", 0.8, "liked", 0.7, {"BTX:0001": 0.8}, {"liked": 0.7}
    )
    assert confidence_text(mention, Span(3, 13, "BTX:0001", "liked")) == (
        "span 0.91 concept 0.80 stance 0.70"
    )
    # the annotator chose another concept and stance: the model has no figure for them
    assert confidence_text(mention, Span(3, 13, "BTX:0002", "wanted")) == "span 0.91"


def test_sentence_text_numbers_each_span_and_underlines_its_words() -> None:
    draft = [Span(3, 13, "BTX:0001", "liked"), Span(22, 27, None, "disliked")]
    text = sentence_text(_item(), draft)
    expected = TEXT[:13] + "[1]" + TEXT[13:27] + "[2]" + TEXT[27:]
    assert text.plain == expected
    marked = {
        (expected[s.start : s.end], str(s.style)) for s in text.spans if "underline" in str(s.style)
    }
    assert marked == {
        ("cooks fast", f"underline {STANCE_STYLE['liked']}"),
        ("broth", f"underline {STANCE_STYLE['disliked']}"),
    }


def test_context_lists_the_question_and_who_answered_in_a_fixed_order() -> None:
    ctx = SentenceContext(
        "Why do you grow it?", None, "KA-01", {"village": "Vesk", "gender": "woman"}, True, "Zanobi"
    )
    console = Console(file=io.StringIO(), width=120)
    console.print(context_grid(_item(ctx)))
    out = console.file
    assert isinstance(out, io.StringIO)
    text = out.getvalue()
    assert "Why do you grow it?" in text
    assert "KA-01 · gender woman · village Vesk · group interview · variety Zanobi" in text


@pytest.mark.parametrize(
    ("kappa", "words"),
    [
        (0.908, "almost perfectly"),
        (0.75, "substantially"),
        (0.5, "moderately"),
        (0.3, "fairly"),
        (0.1, "slightly"),
        (-0.2, "poorly"),
    ],
    ids=["almost-perfect", "substantial", "moderate", "fair", "slight", "poor"],
)
def test_agreement_words_follow_landis_and_koch(kappa: float, words: str) -> None:
    # Landis & Koch (1977), Biometrics 33:159-174: 0.81-1 almost perfect, 0.61-0.80
    # substantial, 0.41-0.60 moderate, 0.21-0.40 fair, 0-0.20 slight, below 0 poor
    assert agreement_words(kappa) == words


@pytest.mark.parametrize(
    ("kappas", "stop", "steady_warning"),
    [((0.86,), False, True), ((0.5,), False, False), ((0.995, 0.996, 0.999), True, False)],
    ids=["high-not-steady", "moderate", "stop-sign"],
)
def test_high_agreement_does_not_read_as_a_stop_before_the_stop_sign(
    kappas: tuple[float, ...], stop: bool, steady_warning: bool
) -> None:
    # After a few labels two models can agree "almost perfectly" in Landis & Koch's words
    # (kappa above 0.80) long before the stop rule's 0.99 over three rounds (Bloodgood &
    # Vijay-Shanker, 2009); the words must not read as "you can stop".
    session = SimpleNamespace(
        behind=0, version="v002", kappas=list(kappas), last_error=None, stop_signal=stop
    )
    text = progress_text(session, None).plain  # type: ignore[arg-type, union-attr]
    assert ("not yet steadily" in text) is steady_warning
    assert ("good moment to stop" in text) is stop


def test_sentence_text_keeps_span_numbers_when_one_is_dropped() -> None:
    draft = [None, Span(22, 27, None, "disliked")]
    assert sentence_text(_item(), draft).plain == TEXT[:27] + "[2]" + TEXT[27:]


def test_context_shows_a_questions_wording_before_its_field_name() -> None:
    ctx = SentenceContext("q5_dislike", None, "KA-01", {}, False, None)
    console = Console(file=io.StringIO(), width=120)
    console.print(context_grid(_item(ctx), wording="What do you dislike about it?"))
    out = console.file
    assert isinstance(out, io.StringIO)
    assert "What do you dislike about it? (q5_dislike)" in out.getvalue()
