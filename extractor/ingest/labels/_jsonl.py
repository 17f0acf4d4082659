"""The label format: JSON Lines, one labeled sentence per line (see :mod:`extractor.ingest.labels`).

Both directions live here, so the reader and every writer agree: :func:`record_from_dict`
checks one object, :func:`record_to_dict` makes one.
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Iterator, Mapping
from typing import Any

from extractor.ingest.labels._record import LabelRecord, align_spans, checked_lang, fail
from extractor.types import STANCES, Implicit, Span

KEYS = ("respondent", "sentence", "lang", "mentions", "implicit", "question", "variety", "metadata")
"""The keys a line may hold, in the order writers put them."""
CONVERT_HINT = "convert the file with `traits convert-labels OLD.jsonl NEW.jsonl` and import that"
"""What to do with a file in the label format of earlier versions (``text`` and ``spans``)."""


def _int(value: Any) -> bool:
    return isinstance(value, int) and not isinstance(value, bool)


def _optional_str(obj: Mapping[str, Any], key: str, source: str, line: int) -> str | None:
    value = obj.get(key)
    if value is None or value == "":
        return None
    if not isinstance(value, str):
        raise fail(source, line, f"{key!r} must be text; got {value!r}")
    return value


def _stance(obj: Mapping[str, Any], what: str, source: str, line: int) -> str | None:
    stance = _optional_str(obj, "stance", source, line)
    if stance is not None and stance not in STANCES:
        raise fail(
            source,
            line,
            f"the stance of {what} must be one of {', '.join(STANCES)}; got {stance!r}",
        )
    return stance


def _span_from_dict(obj: Any, text: str, source: str, line: int, k: int) -> Span:
    what = f"mention {k + 1}"
    if not isinstance(obj, Mapping):
        raise fail(source, line, f"{what} must be an object with 'start' and 'end'; got {obj!r}")
    for key in ("start", "end"):
        if not _int(obj.get(key)):
            raise fail(source, line, f"{what} needs a whole-number {key!r}; got {obj.get(key)!r}")
    start, end = int(obj["start"]), int(obj["end"])
    if start < 0:
        raise fail(source, line, f"'start' {start} of {what} is negative")
    if end > len(text):
        raise fail(source, line, f"'end' {end} is beyond the sentence's {len(text)} characters")
    if end <= start:
        raise fail(source, line, f"'end' {end} of {what} must be after 'start' {start}")
    concept = _optional_str(obj, "concept", source, line)
    return Span(start, end, concept, _stance(obj, what, source, line))


def _implicit_from_dict(obj: Any, source: str, line: int, k: int) -> Implicit:
    what = f"implicit trait {k + 1}"
    if not isinstance(obj, Mapping):
        raise fail(
            source, line, f"{what} must be an object with 'concept' and 'stance'; got {obj!r}"
        )
    concept = _optional_str(obj, "concept", source, line)
    if concept is None:
        raise fail(source, line, f"{what} needs a 'concept' (an ID of the concept list)")
    return Implicit(concept, _stance(obj, what, source, line))


def _metadata(obj: Mapping[str, Any], source: str, line: int) -> dict[str, str]:
    value = obj.get("metadata")
    if value is None:
        return {}
    if not isinstance(value, Mapping) or not all(
        isinstance(v, str | int | float) and not isinstance(v, bool) for v in value.values()
    ):
        raise fail(
            source, line, '\'metadata\' must be an object of text values, like {"gender": "f"}'
        )
    return {str(k): str(v) for k, v in value.items()}


def _check_keys(obj: Mapping[str, Any], source: str, line: int) -> None:
    if "sentence" not in obj and ("text" in obj or "spans" in obj):
        raise fail(
            source, line, f"this line is in the label format of earlier versions; {CONVERT_HINT}"
        )
    unknown = [str(k) for k in obj if k not in KEYS]
    if unknown:
        raise fail(
            source,
            line,
            f"unknown key {unknown[0]!r}; a line may hold {', '.join(map(repr, KEYS))}",
        )


def record_from_dict(obj: Any, *, source: str, line: int, default_lang: str) -> LabelRecord:
    """Return a validated record from one object of the label format (one JSONL line).

    Raises:
        InputError: The object breaks the format; the message names ``source`` and ``line``.
    """
    if not isinstance(obj, Mapping):
        raise fail(source, line, f"each line must be a JSON object; got {type(obj).__name__}")
    _check_keys(obj, source, line)
    text = obj.get("sentence")
    if not isinstance(text, str) or not text.strip():
        raise fail(source, line, "'sentence' must be non-empty text")
    mentions = obj.get("mentions")
    if not isinstance(mentions, list):
        raise fail(
            source, line, "'mentions' must be a list (use [] for a sentence with no quote span)"
        )
    implicit = obj.get("implicit", [])
    if not isinstance(implicit, list):
        raise fail(source, line, '\'implicit\' must be a list of {"concept", "stance"} objects')
    given_lang = _optional_str(obj, "lang", source, line)
    lang = checked_lang(given_lang, source, line) if given_lang else default_lang
    raw = [_span_from_dict(s, text, source, line, k) for k, s in enumerate(mentions)]
    aligned, moved = align_spans(text, lang, raw, source=source, line=line)
    traits = [_implicit_from_dict(i, source, line, k) for k, i in enumerate(implicit)]
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
        implicit=tuple(dict.fromkeys(traits)),  # a trait said twice is one trait
        metadata=_metadata(obj, source, line),
    )


def record_to_dict(record: LabelRecord) -> dict[str, Any]:
    """Return a record as one object of the label format (optional keys only when set)."""
    out: dict[str, Any] = {"respondent": record.respondent, "sentence": record.text}
    out["lang"] = record.lang
    out["mentions"] = [
        {"start": s.start, "end": s.end, "concept": s.concept, "stance": s.stance}
        for s in record.spans
    ]
    out["implicit"] = [{"concept": i.concept, "stance": i.stance} for i in record.implicit]
    for key, value in (("question", record.question), ("variety", record.variety)):
        if value:
            out[key] = value
    if record.metadata:
        out["metadata"] = dict(record.metadata)
    return out


def json_lines(lines: Iterable[str], source: str) -> Iterator[tuple[int, Any]]:
    """Yield ``(line number, parsed object)`` for each non-blank line.

    Raises:
        InputError: A line is not JSON (naming the file, line and column).
    """
    for number, raw in enumerate(lines, start=1):
        if not raw.strip():
            continue
        try:
            yield number, json.loads(raw)
        except json.JSONDecodeError as exc:
            message = f"not valid JSON ({exc.msg} at column {exc.colno})"
            raise fail(source, number, message) from exc


def parse_jsonl(lines: Iterable[str], *, source: str, default_lang: str) -> list[LabelRecord]:
    """Return the records of label-format lines; blank lines are skipped.

    Raises:
        InputError: A line is not JSON or breaks the format (first such line).
    """
    out = []
    for number, obj in json_lines(lines, source):
        out.append(record_from_dict(obj, source=source, line=number, default_lang=default_lang))
    return out


def records_from_dicts(
    objects: Iterable[Any], *, source: str = "data", default_lang: str = "en"
) -> list[LabelRecord]:
    """Return validated records from label-format dicts (e.g. a dataset already in memory)."""
    return [
        record_from_dict(obj, source=source, line=n, default_lang=default_lang)
        for n, obj in enumerate(objects, start=1)
    ]
