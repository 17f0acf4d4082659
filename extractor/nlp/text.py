"""Tokens and sentences from spaCy's blank per-language pipelines (no model downloads).

This is the one place that turns text into tokens and sentences, so every module
(ingest, dictionary, features, tagger, console) agrees on token boundaries. Tokens
are recomputed from text and language and never stored as the truth.
"""

from __future__ import annotations

from collections.abc import Callable
from functools import cache

import spacy
from spacy.attrs import IDX, IS_SPACE, LENGTH
from spacy.language import Language
from spacy.tokenizer import Tokenizer
from spacy.tokens import Doc

from extractor.nlp.alternation import language_class

OPENING_MARKS = "¿¡"
"""Punctuation that opens a sentence (Spanish)."""

MULTI = "xx"
"""spaCy's multi-language code, used where spaCy has no pipeline for a language."""

_TOKEN_ATTRS = [IDX, LENGTH, IS_SPACE]
_STRETCH_LIMIT = 1 << 17
"""Distinct white-space-free stretches whose tokens are kept per language before starting afresh."""


def primary_subtag(tag: str) -> str:
    """Return the lower-case primary language subtag of a BCP 47 tag (``es-419`` -> ``es``)."""
    return tag.split("-")[0].split("_")[0].lower()


@cache
def spacy_code(tag: str) -> str:
    """Return the spaCy language code used for a BCP 47 tag, ``xx`` where spaCy has none."""
    code = primary_subtag(tag)
    try:
        language_class(code)
    except (ImportError, KeyError):
        return MULTI
    return code


def blank_pipeline(tag: str) -> Language:
    """Return a cached blank spaCy pipeline for the language, with a rule-based sentencizer.

    Pipelines are cached per spaCy language code, so ``es`` and ``es-419`` share one
    (building one costs seconds: spaCy compiles its tokenizer exceptions).
    """
    return _pipeline(spacy_code(tag))


@cache
def _pipeline(code: str) -> Language:
    nlp = spacy.blank(code)
    nlp.add_pipe("sentencizer")
    return nlp


def tokenize(text: str, lang: str) -> list[tuple[int, int]]:
    """Return ``(start, end)`` character offsets of the non-space tokens of ``text``.

    spaCy's tokenizer splits the text at white space and tokenizes each stretch between
    on its own (prefixes, suffixes, infixes, exceptions); only an exception that itself
    holds a space (Spanish "EE. UU.") joins stretches. So the tokens of each distinct
    stretch are computed once by spaCy and kept, and a text that may hold such an
    exception goes to spaCy whole: the tokens are spaCy's either way (the tests compare
    them on open data), and tokenizing is on the tagger's hot path.
    """
    if not isinstance(text, str):
        raise TypeError(f"tokenize reads a str, not {type(text).__name__}.")  # as spaCy does
    code = spacy_code(lang)
    tokenizer = _pipeline(code).tokenizer
    if not isinstance(tokenizer, Tokenizer) or any(
        all(piece in text for piece in pieces) for pieces in _spaced_exceptions(code)
    ):
        return _spacy_tokens(tokenizer, text)  # a language's own tokenizer reads texts whole
    known = _stretches(code)
    out: list[tuple[int, int]] = []
    at = 0
    for stretch in text.split():
        at = text.find(stretch, at)
        found = known.get(stretch)
        if found is None:
            if len(known) >= _STRETCH_LIMIT:
                known.clear()
            found = known[stretch] = tuple(_spacy_tokens(tokenizer, stretch))
        if len(found) == 1:
            out.append((at, at + len(stretch)))
        else:
            out += [(at + a, at + b) for a, b in found]
        at += len(stretch)
    return out


def _spacy_tokens(tokenizer: Callable[[str], Doc], text: str) -> list[tuple[int, int]]:
    """Return the offsets of the non-space tokens spaCy's tokenizer gives for ``text``."""
    # One array read instead of a Python Token object per token.
    rows = tokenizer(text).to_array(_TOKEN_ATTRS).tolist()
    return [(idx, idx + length) for idx, length, space in rows if not space]


@cache
def _stretches(code: str) -> dict[str, tuple[tuple[int, int], ...]]:
    """Return the kept tokens of white-space-free stretches, for one spaCy language code."""
    return {}


@cache
def _spaced_exceptions(code: str) -> tuple[tuple[str, ...], ...]:
    """Return the tokenizer exceptions of a language that hold white space, split at it."""
    tokenizer = _pipeline(code).tokenizer
    rules = (tokenizer.rules or {}) if isinstance(tokenizer, Tokenizer) else {}
    return tuple(tuple(k.split()) for k in rules if not k.isspace() and any(c.isspace() for c in k))


def split_sentences(text: str, lang: str) -> list[tuple[int, int]]:
    """Return ``(start, end)`` offsets of the sentences of ``text``, without outer whitespace.

    ``text[start:end]`` is always the sentence exactly as written; blank stretches
    yield no sentence.
    """
    nlp = blank_pipeline(lang)
    # spaCy refuses texts over max_length (a million characters) to spare the memory its
    # parser and NER need; a blank pipeline has neither, and tokenizing is linear, so a
    # long answer (a whole transcript pasted in one turn) is read, not refused.
    nlp.max_length = max(nlp.max_length, len(text) + 1)
    bounds = [(sent.start_char, sent.end_char) for sent in nlp(text).sents]
    # spaCy's sentencizer leaves Spanish opening marks (¿ ¡) at the end of the sentence
    # before the one they open; hand them to the sentence they belong to.
    for i in range(len(bounds) - 1):
        (a_start, a_end), (_, b_end) = bounds[i], bounds[i + 1]
        cut = a_end
        while cut > a_start and (text[cut - 1] in OPENING_MARKS or text[cut - 1].isspace()):
            cut -= 1
        if any(ch in OPENING_MARKS for ch in text[cut:a_end]):
            first_mark = cut + min(j for j, ch in enumerate(text[cut:a_end]) if ch in OPENING_MARKS)
            bounds[i], bounds[i + 1] = (a_start, first_mark), (first_mark, b_end)
    out: list[tuple[int, int]] = []
    for start, end in bounds:
        while start < end and text[start].isspace():
            start += 1
        while end > start and text[end - 1].isspace():
            end -= 1
        if end > start:
            out.append((start, end))
    return out
