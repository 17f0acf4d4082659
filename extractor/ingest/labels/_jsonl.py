"""Gold JSON Lines: one labeled sentence per line (see :mod:`extractor.ingest.labels`)."""

from __future__ import annotations

import json
from collections.abc import Iterable, Mapping
from typing import Any

from extractor.ingest.labels._record import LabelRecord, align_spans, fail
from extractor.types import STANCES, Span


def _int(value: Any) -> bool:
    return isinstance(value, int) and not isinstance(value, bool)


def _optional_str(obj: Mapping[str, Any], key: str, source: str, line: int) -> str | None:
    value = obj.get(key)
    if value is None or value == "":
        return None
    if not isinstance(value, str):
        raise fail(source, line, f"{key!r} must be text; got {value!r}")
    return value


def _span_from_dict(obj: Any, text: str, source: str, line: int, k: int) -> Span:
    if not isinstance(obj, Mapping):
        raise fail(
            source, line, f"span {k + 1} must be an object with 'start' and 'end'; got {obj!r}"
        )
    for key in ("start", "end"):
        if not _int(obj.get(key)):
            raise fail(
                source, line, f"span {k + 1} needs a whole-number {key!r}; got {obj.get(key)!r}"
            )
    start, end = int(obj["start"]), int(obj["end"])
    if start < 0:
        raise fail(source, line, f"'start' {start} of span {k + 1} is negative")
    if end > len(text):
        raise fail(source, line, f"'end' {end} is beyond the sentence's {len(text)} characters")
    if end <= start:
        raise fail(source, line, f"'end' {end} of span {k + 1} must be after 'start' {start}")
    concept = _optional_str(obj, "concept", source, line)
    stance = _optional_str(obj, "stance", source, line)
    if stance is not None and stance not in STANCES:
        raise fail(source, line, f"'stance' must be one of {', '.join(STANCES)}; got {stance!r}")
    return Span(start, end, concept, stance)


def record_from_dict(obj: Any, *, source: str, line: int, default_lang: str) -> LabelRecord:
    """Return a validated record from one gold-format object (one JSONL line).

    Raises:
        InputError: The object breaks the gold format; the message names ``source`` and
            ``line``.
    """
    if not isinstance(obj, Mapping):
        raise fail(source, line, f"each line must be a JSON object; got {type(obj).__name__}")
    text = obj.get("text")
    if not isinstance(text, str) or not text.strip():
        raise fail(source, line, "'text' must be non-empty text")
    spans = obj.get("spans")
    if not isinstance(spans, list):
        raise fail(source, line, "'spans' must be a list (use [] for a sentence with no trait)")
    given_lang = _optional_str(obj, "lang", source, line)
    lang = given_lang or default_lang
    raw = [_span_from_dict(s, text, source, line, k) for k, s in enumerate(spans)]
    aligned, moved = align_spans(text, lang, raw, source=source, line=line)
    return LabelRecord(
        text=text,
        respondent=_optional_str(obj, "respondent", source, line),
        lang=lang,
        question=_optional_str(obj, "question", source, line),
        spans=aligned,
        line=line,
        lang_given=given_lang is not None,
        snapped=moved,
        variety=_optional_str(obj, "variety", source, line),
    )


def parse_jsonl(lines: Iterable[str], *, source: str, default_lang: str) -> list[LabelRecord]:
    """Return the records of gold JSONL lines; blank lines are skipped.

    Raises:
        InputError: A line is not JSON or breaks the gold format (first such line).
    """
    out = []
    for number, raw in enumerate(lines, start=1):
        if not raw.strip():
            continue
        try:
            obj = json.loads(raw)
        except json.JSONDecodeError as exc:
            message = f"not valid JSON ({exc.msg} at column {exc.colno})"
            raise fail(source, number, message) from exc
        out.append(record_from_dict(obj, source=source, line=number, default_lang=default_lang))
    return out


def records_from_dicts(
    objects: Iterable[Any], *, source: str = "data", default_lang: str = "en"
) -> list[LabelRecord]:
    """Return validated records from gold-format dicts (e.g. a dataset already in memory)."""
    return [
        record_from_dict(obj, source=source, line=n, default_lang=default_lang)
        for n, obj in enumerate(objects, start=1)
    ]
