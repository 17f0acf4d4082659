"""CoNLL-style IOB2 columns: one token per line (see :mod:`extractor.ingest.labels`)."""

from __future__ import annotations

from collections.abc import Iterable
from typing import NamedTuple

from extractor.ingest.labels._record import LabelRecord, align_spans, checked_lang, fail
from extractor.types import STANCES, Implicit, Span

EMPTY = "_"
"""The placeholder of an empty concept or stance column in CoNLL files."""

_META_KEYS = ("text", "respondent", "lang", "question", "variety")
"""The ``# key = value`` comment lines honoured before a sentence's tokens."""
IMPLICIT_KEY = "implicit"
"""``# implicit = CONCEPT STANCE``: a trait the sentence states without a span (repeatable)."""


class _Token(NamedTuple):
    text: str
    tag: str
    concept: str | None
    stance: str | None
    line: int


def _conll_token(raw: str, source: str, number: int) -> _Token:
    cols = raw.split()
    if not 2 <= len(cols) <= 4:
        raise fail(
            source,
            number,
            f"a token line needs 2 to 4 columns (token, tag, concept, stance); got {len(cols)}",
        )
    tag = cols[1]
    if tag != "O" and not (tag[:2] in ("B-", "I-") and len(tag) > 2):
        raise fail(source, number, f"tag {tag!r} must be 'O', 'B-<type>' or 'I-<type>'")
    extra = [None if c == EMPTY else c for c in cols[2:]] + [None, None]
    stance = extra[1]
    if stance is not None and stance not in STANCES:
        raise fail(
            source, number, f"stance {stance!r} must be one of {', '.join(STANCES)} or '{EMPTY}'"
        )
    return _Token(cols[0], tag, extra[0], stance, number)


def _token_offsets(
    tokens: list[_Token], text: str | None, source: str
) -> tuple[str, list[tuple[int, int]]]:
    """Return the sentence text and each token's offsets in it.

    Without a ``# text`` line the text is the tokens joined by single spaces; with one,
    each token is looked up after the previous one.
    """
    offsets: list[tuple[int, int]] = []
    position = 0
    if text is None:
        for token in tokens:
            offsets.append((position, position + len(token.text)))
            position += len(token.text) + 1
        return " ".join(t.text for t in tokens), offsets
    for token in tokens:
        found = text.find(token.text, position)
        if found < 0:
            raise fail(
                source,
                token.line,
                f"token {token.text!r} is not in the '# text' line after the previous token",
            )
        offsets.append((found, found + len(token.text)))
        position = found + len(token.text)
    return text, offsets


def _entity_spans(tokens: list[_Token], offsets: list[tuple[int, int]], source: str) -> list[Span]:
    """Return the IOB2 entities as spans; an entity takes its ``B-`` token's columns."""
    spans: list[Span] = []
    kind: str | None = None
    for token, (start, end) in zip(tokens, offsets, strict=True):
        if token.tag.startswith("I-"):
            if kind != token.tag[2:]:
                raise fail(
                    source,
                    token.line,
                    f"tag {token.tag!r} does not continue an entity "
                    f"of type {token.tag[2:]!r}; IOB2 opens every "
                    "entity with 'B-'",
                )
            spans[-1] = spans[-1]._replace(end=end)
        elif token.tag.startswith("B-"):
            kind = token.tag[2:]
            spans.append(Span(start, end, token.concept, token.stance))
        else:
            kind = None
    return spans


def _implicit(value: str, source: str, number: int) -> Implicit:
    """Return the trait of one ``# implicit = CONCEPT [STANCE]`` line."""
    cols = value.split()
    if not 1 <= len(cols) <= 2:
        raise fail(source, number, "'# implicit =' takes a concept ID and a stance")
    stance = cols[1] if len(cols) == 2 and cols[1] != EMPTY else None
    if stance is not None and stance not in STANCES:
        raise fail(
            source, number, f"stance {stance!r} must be one of {', '.join(STANCES)} or '{EMPTY}'"
        )
    return Implicit(cols[0], stance)


def _conll_sentence(
    tokens: list[_Token],
    meta: dict[str, str],
    implicit: list[Implicit],
    first_line: int,
    source: str,
    default_lang: str,
) -> LabelRecord:
    text, offsets = _token_offsets(tokens, meta.get("text"), source)
    spans = _entity_spans(tokens, offsets, source)
    lang = checked_lang(meta["lang"], source, first_line) if "lang" in meta else default_lang
    aligned, moved = align_spans(text, lang, spans, source=source, line=first_line)
    return LabelRecord(
        text=text, respondent=meta.get("respondent"), lang=lang, question=meta.get("question"),
        spans=aligned, line=first_line, lang_given="lang" in meta, snapped=moved,
        variety=meta.get("variety"), implicit=tuple(dict.fromkeys(implicit)),
    )  # fmt: skip


def parse_conll(lines: Iterable[str], *, source: str, default_lang: str) -> list[LabelRecord]:
    """Return the records of CoNLL-style IOB2 lines (see :mod:`extractor.ingest.labels`).

    Raises:
        InputError: A line breaks the format (first such line).
    """
    out: list[LabelRecord] = []
    tokens: list[_Token] = []
    meta: dict[str, str] = {}
    implicit: list[Implicit] = []
    first = 0
    for number, raw in enumerate([*lines, ""], start=1):
        line = raw.rstrip("\r\n")
        if not line.strip():
            if tokens:
                out.append(_conll_sentence(tokens, meta, implicit, first, source, default_lang))
            elif meta or implicit:
                raise fail(source, first, "comment lines with no token lines after them")
            tokens, meta, implicit, first = [], {}, [], 0
            continue
        first = first or number
        if line.lstrip().startswith("#"):
            key, sep, value = line.lstrip()[1:].partition("=")
            key = key.strip()
            if sep and key == IMPLICIT_KEY:
                implicit.append(_implicit(value, source, number))
            elif sep and key in _META_KEYS:
                # The text keeps its own inner and trailing spaces: offsets depend on them.
                meta[key] = value.removeprefix(" ") if key == "text" else value.strip()
            continue
        tokens.append(_conll_token(line, source, number))
    return out
