"""Tokens and sentences from spaCy's blank per-language pipelines (no model downloads).

This is the one place that turns text into tokens and sentences, so every module
(ingest, dictionary, features, tagger, console) agrees on token boundaries. Tokens
are recomputed from text and language and never stored as the truth.
"""

from __future__ import annotations

from functools import lru_cache

import spacy
from spacy.language import Language

MULTI = "xx"
"""spaCy's multi-language code, used where spaCy has no pipeline for a language."""


def primary_subtag(tag: str) -> str:
    """Return the lower-case primary language subtag of a BCP 47 tag (``es-419`` -> ``es``)."""
    return tag.split("-")[0].split("_")[0].lower()


@lru_cache(maxsize=None)
def spacy_code(tag: str) -> str:
    """Return the spaCy language code used for a BCP 47 tag, ``xx`` where spaCy has none."""
    code = primary_subtag(tag)
    try:
        spacy.util.get_lang_class(code)
    except (ImportError, KeyError):
        return MULTI
    return code


def blank_pipeline(tag: str) -> Language:
    """Return a cached blank spaCy pipeline for the language, with a rule-based sentencizer.

    Pipelines are cached per spaCy language code, so ``es`` and ``es-419`` share one
    (building one costs seconds: spaCy compiles its tokenizer exceptions).
    """
    return _pipeline(spacy_code(tag))


@lru_cache(maxsize=None)
def _pipeline(code: str) -> Language:
    nlp = spacy.blank(code)
    nlp.add_pipe("sentencizer")
    return nlp


def tokenize(text: str, lang: str) -> list[tuple[int, int]]:
    """Return ``(start, end)`` character offsets of the non-space tokens of ``text``."""
    doc = blank_pipeline(lang).tokenizer(text)
    return [(t.idx, t.idx + len(t.text)) for t in doc if not t.is_space]


def token_texts(text: str, lang: str) -> list[str]:
    """Return the texts of the non-space tokens of ``text``."""
    return [text[s:e] for s, e in tokenize(text, lang)]


def split_sentences(text: str, lang: str) -> list[tuple[int, int]]:
    """Return ``(start, end)`` offsets of the sentences of ``text``, without outer whitespace.

    ``text[start:end]`` is always the sentence exactly as written; blank stretches
    yield no sentence.
    """
    out: list[tuple[int, int]] = []
    for sent in blank_pipeline(lang)(text).sents:
        start, end = sent.start_char, sent.end_char
        while start < end and text[start].isspace():
            start += 1
        while end > start and text[end - 1].isspace():
            end -= 1
        if end > start:
            out.append((start, end))
    return out
