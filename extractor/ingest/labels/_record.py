"""A labeled sentence read from a file, and its spans snapped to token boundaries."""

from __future__ import annotations

from collections.abc import Sequence
from typing import NamedTuple

from extractor.errors import InputError
from extractor.nlp.text import tokenize
from extractor.types import Span


class LabelRecord(NamedTuple):
    """One labeled sentence read from a file.

    Attributes:
        text: The sentence as written.
        respondent: Who said it (``None`` when the file does not say).
        lang: Language tag (the file's, or the default).
        question: The question it answers, if known.
        spans: Gold spans, token-aligned (an empty tuple = no trait).
        line: Line of the file where the sentence starts, for messages.
        lang_given: Whether the language came from the file (not the default).
        snapped: How many spans were moved to token boundaries.
        variety: The variety the answer is about, if the file says.
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


def fail(source: str, line: int, message: str) -> InputError:
    """Return the error of one bad line: the file, the line, what is wrong, what to do."""
    return InputError(f"{source}, line {line}: {message}; fix or remove the line.")


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
