"""Tokens and sentences: agreement with spaCy's own tokenizer, offsets that round-trip."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import spacy

from extractor.nlp.text import spacy_code, split_sentences, tokenize
from tests.mams import SKIP_REASON, load_mams

SAMPLE = Path(__file__).resolve().parents[2] / "sample_interviews"

EXAMPLES = [
    ("en", "It cooks fast, but the grains are too small. My children finish the plate!"),
    ("fr", "Les grains sont trop petits ; j'aimerais qu'il mûrisse plus tôt."),
    ("es", "No se pica en el granero. ¿Por qué no lo siembran más? ¡Es rapidito!"),
    ("sw", "Maharagwe haya yanaiva haraka."),
]


@pytest.mark.parametrize(("lang", "text"), EXAMPLES, ids=[e[0] for e in EXAMPLES])
def test_tokenize_agrees_with_spacy_blank_pipeline(lang: str, text: str) -> None:
    # Outside reference: spaCy's own tokenizer for the same language.
    reference = spacy.blank(spacy_code(lang)).tokenizer(text)
    expected = [(t.idx, t.idx + len(t.text)) for t in reference if not t.is_space]
    assert tokenize(text, lang) == expected


@pytest.mark.parametrize(("lang", "text"), EXAMPLES, ids=[e[0] for e in EXAMPLES])
def test_split_sentences_round_trips(lang: str, text: str) -> None:
    bounds = split_sentences(text, lang)
    assert bounds, "every example holds at least one sentence"
    for start, end in bounds:
        sentence = text[start:end]
        assert sentence == sentence.strip() and sentence


def test_split_sentences_keeps_spanish_opening_marks_with_their_sentence() -> None:
    text = "No se pica. ¿Por qué? ¡Qué bien!"
    sentences = [text[s:e] for s, e in split_sentences(text, "es")]
    assert sentences == ["No se pica.", "¿Por qué?", "¡Qué bien!"]


def test_gold_sentences_of_the_demo_are_segmenter_sentences() -> None:
    # Demo data only (a smoke check of the demo's consistency, not of correctness).
    path = SAMPLE / "gold.jsonl"
    if not path.exists():
        pytest.skip("the demo gold file is not there")
    for line in path.read_text(encoding="utf-8").splitlines():
        record = json.loads(line)
        assert split_sentences(record["sentence"], record["lang"]) == [(0, len(record["sentence"]))]


def test_split_sentences_reads_an_answer_longer_than_spacys_limit() -> None:
    # spaCy's Language.max_length is 1,000,000 characters (its docs); an answer of a whole
    # transcript pasted in one cell or turn is longer, and must be read, not refused.
    sentence = "The beans cook fast and the broth is thick. "
    text = sentence * (1_000_000 // len(sentence) + 1)
    assert len(text) > 1_000_000
    found = split_sentences(text, "en")
    assert len(found) == text.count(".")
    assert text[slice(*found[-1])] == sentence.strip()


SPACING = [
    ("es", "Los EE. UU. venden maíz; EE.  UU. y Ee. Uu. también."),
    (
        "en",
        "  double  space\t\ttab\nnew line \xa0nbsp (e.g. this) don't 3.5kg http://x.org/a?b=1 :-)",
    ),
    ("fr", "«ça» l'épaisseur, c'est-à-dire   aujourd'hui..."),
]


@pytest.mark.parametrize(("lang", "text"), SPACING, ids=[e[0] for e in SPACING])
def test_tokenize_agrees_with_spacy_across_spacing_and_exceptions(lang: str, text: str) -> None:
    # Outside reference: spaCy's tokenizer on the whole text, including the Spanish
    # exception that holds a space ("EE. UU."), which joins two white-space stretches.
    reference = spacy.blank(spacy_code(lang)).tokenizer(text)
    expected = [(t.idx, t.idx + len(t.text)) for t in reference if not t.is_space]
    assert tokenize(text, lang) == expected
    assert tokenize(text, lang) == expected  # again, from the kept stretches


def test_tokenize_agrees_with_spacy_on_mams_and_the_demo() -> None:
    # Outside reference on open data: MAMS sentences (Jiang et al. 2019, Apache-2.0) and
    # the demo's answers, each read with spaCy's tokenizer of its language and of two others.
    mams = load_mams("test")
    if mams is None:
        pytest.skip(SKIP_REASON)
    demo = [json.loads(line) for line in (SAMPLE / "gold.jsonl").read_text("utf-8").splitlines()]
    texts = [(r["sentence"], r["lang"]) for r in mams + demo]
    tokenizers = {code: spacy.blank(code).tokenizer for code in ("en", "fr", "es")}
    compared = 0
    for text, _ in texts:
        for code, tokenizer in tokenizers.items():
            expected = [(t.idx, t.idx + len(t.text)) for t in tokenizer(text) if not t.is_space]
            assert tokenize(text, code) == expected, (code, text)
            compared += len(expected)
    assert compared > 50_000
