"""A labeled sentence read from a file, and its spans snapped to token boundaries."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from types import MappingProxyType
from typing import NamedTuple

from extractor.errors import InputError
from extractor.ingest.language import normalise_tag
from extractor.nlp.text import tokenize
from extractor.types import Implicit, Span


class LabelRecord(NamedTuple):
    """One labeled sentence read from a file.

    Attributes:
        text: The sentence as written.
        respondent: Who said it (``None`` when the file does not say).
        lang: Language tag (the file's, or the default).
        question: The question it answers, if known.
        spans: Gold trait mentions, token-aligned (the format's ``mentions``).
        line: Line of the file where the sentence starts, for messages.
        lang_given: Whether the language came from the file (not the default).
        snapped: How many spans were moved to token boundaries.
        variety: The variety the answer is about, if the file says.
        implicit: Traits the sentence states without a span. No spans and no implicit
            traits means "no trait here".
        metadata: Respondent metadata the file gives (gender, role ...), as text.
    """

    text: str
    respondent: str | None
    lang: str
    question: str | None
    spans: tuple[Span, ...]
    line: int
    lang_given: bool = True
    snapped: int = 0
    variety: str | None = None
    implicit: tuple[Implicit, ...] = ()
    metadata: Mapping[str, str] = MappingProxyType({})


def fail(source: str, line: int, message: str) -> InputError:
    """Return the error of one bad line: the file, the line, what is wrong, what to do."""
    return InputError(f"{source}, line {line}: {message}; fix or remove the line.")


def checked_lang(value: str, source: str, line: int) -> str:
    """Return a language tag in its conventional case, checked as interview readers check it.

    Raises:
        InputError: The tag is not well-formed BCP 47 or its language is unknown.
    """
    try:
        return normalise_tag(value)
    except InputError as exc:
        raise fail(
            source,
            line,
            f"language {value!r} is not a BCP 47 tag of a known language "
            "(use a code such as 'en', 'fr', 'es-419' or 'sw')",
        ) from exc


def align_spans(
    text: str, lang: str, spans: Sequence[Span], *, source: str, line: int
) -> tuple[tuple[Span, ...], int]:
    """Snap spans outwards to token boundaries and check that none overlap.

    Returns:
        The aligned spans sorted by start, and how many of them moved.

    Raises:
        InputError: A span touches no token, or two spans overlap.
    """
    tokens = tokenize(text, lang)
    out: list[Span] = []
    moved = 0
    for span in spans:
        touched = [(s, e) for s, e in tokens if s < span.end and e > span.start]
        if not touched:
            quoted = text[span.start : span.end]
            raise fail(source, line, f"span {span.start}-{span.end} ({quoted!r}) covers no word")
        snapped = span._replace(start=touched[0][0], end=touched[-1][1])
        moved += snapped != span
        out.append(snapped)
    out.sort(key=lambda s: (s.start, s.end))
    # Two spans that snap onto the same words are one mention: keep the first.
    out = [
        s
        for k, s in enumerate(out)
        if k == 0 or (s.start, s.end) != (out[k - 1].start, out[k - 1].end)
    ]
    for first, second in zip(out, out[1:], strict=False):
        if second.start < first.end:
            raise fail(
                source,
                line,
                f"spans {first.start}-{first.end} and "
                f"{second.start}-{second.end} overlap (after snapping to "
                "word boundaries)",
            )
    return tuple(out), moved
