"""Label files by suffix, and records as gold ``(Sentence, spans)`` pairs."""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

from extractor.errors import InputError
from extractor.ingest.decode import bom_encoding
from extractor.ingest.labels._conll import parse_conll
from extractor.ingest.labels._jsonl import parse_jsonl, record_from_dict
from extractor.ingest.labels._record import LabelRecord
from extractor.types import Sentence, Span

JSONL_SUFFIXES = (".jsonl", ".json", ".ndjson")
CONLL_SUFFIXES = (".conll", ".iob", ".bio", ".tsv", ".txt")


def read_labels(path: Path, *, default_lang: str) -> list[LabelRecord]:
    """Read a label-format JSONL or CoNLL file (chosen by its suffix), checking every line.

    Raises:
        InputError: The file cannot be read, its suffix is unknown, or a line is bad.
    """
    suffix = path.suffix.lower()
    if suffix not in JSONL_SUFFIXES + CONLL_SUFFIXES:
        raise InputError(
            f"{path.name}: labels must be a {', '.join(JSONL_SUFFIXES)} file (label JSON Lines) "
            f"or a {', '.join(CONLL_SUFFIXES)} file (CoNLL IOB2 columns); "
            f"got {suffix or 'no suffix'}."
        )
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise InputError(f"{path} cannot be read ({exc.strerror}); check the path.") from exc
    try:
        lines = _decode(data).splitlines()
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise InputError(
            f"{path.name}, line {line}: the file is not UTF-8 text, which label files are; "
            "save it as UTF-8 and import it again."
        ) from exc
    parse = parse_jsonl if suffix in JSONL_SUFFIXES else parse_conll
    records = parse(lines, source=path.name, default_lang=default_lang)
    if not records:
        raise InputError(f"{path.name} holds no labeled sentence; check that it is the right file.")
    return records


def _decode(data: bytes) -> str:
    """Decode a label file by its byte order mark (UTF-8 or UTF-16 "Unicode text"), else UTF-8."""
    marked = bom_encoding(data)
    if marked is None:
        return data.decode("utf-8")
    encoding, body = marked
    return body.decode("utf-8" if encoding == "utf-8-sig" else encoding)


def to_gold(
    records: Iterable[LabelRecord | Mapping[str, Any]],
    *,
    first_id: int = 0,
    default_lang: str = "en",
) -> list[tuple[Sentence, list[Span]]]:
    """Return records (or gold-format dicts) as ``(Sentence, spans)`` with made-up IDs.

    Dicts are validated and snapped like file lines (:func:`record_from_dict`).
    """
    out = []
    for n, item in enumerate(records):
        record = (
            item
            if isinstance(item, LabelRecord)
            else record_from_dict(item, source="data", line=n + 1, default_lang=default_lang)
        )
        sentence = Sentence(
            id=first_id + n,
            text=record.text,
            lang=record.lang,
            question=record.question,
            respondent=record.respondent,
        )
        out.append((sentence, list(record.spans)))
    return out
