"""Converting label files of earlier versions (``text`` and ``spans``) to the label format."""

from __future__ import annotations

import json
from collections.abc import Iterable, Mapping
from typing import Any

from extractor.ingest.labels._jsonl import KEYS, json_lines, record_from_dict
from extractor.ingest.labels._record import fail

RENAMED = {"text": "sentence", "spans": "mentions"}
"""Old key -> key of the label format; every other key keeps its name."""


def _converted(obj: Any, source: str, line: int) -> dict[str, Any]:
    if not isinstance(obj, Mapping):
        raise fail(source, line, f"each line must be a JSON object; got {type(obj).__name__}")
    if "sentence" in obj:
        return dict(obj)  # already in the label format
    out: dict[str, Any] = {RENAMED.get(str(k), str(k)): v for k, v in obj.items()}
    out.setdefault("implicit", [])
    return {k: out[k] for k in KEYS if k in out} | {k: v for k, v in out.items() if k not in KEYS}


def convert_legacy_lines(
    lines: Iterable[str], *, source: str, default_lang: str = "en"
) -> list[str]:
    """Return the lines of an old label file as lines of the label format.

    ``text`` becomes ``sentence``, ``spans`` becomes ``mentions`` and an empty ``implicit``
    list is added; offsets, concepts and stances are kept exactly. Lines already in the
    label format are kept. Every converted line is checked as ``traits import-labels``
    checks it, so the result imports.

    Raises:
        InputError: A line is not JSON, or breaks the format once converted (first such line).
    """
    out = []
    for number, obj in json_lines(lines, source):
        new = _converted(obj, source, number)
        record_from_dict(new, source=source, line=number, default_lang=default_lang)
        out.append(json.dumps(new, ensure_ascii=False))
    return out
