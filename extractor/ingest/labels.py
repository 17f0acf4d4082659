"""Reading labeled sentences from files, and importing them into the workspace store.

Two formats are read:

* **Gold JSONL**: one sentence per line, ``{"respondent", "text", "lang", "spans":
  [{"start", "end", "concept"?, "stance"?}], "question"?, "variety"?}``; ``"spans": []``
  means the sentence was labeled as holding no trait. Offsets are characters of ``text``.
* **CoNLL-style IOB2 columns**: one token per line, ``token tag [concept [stance]]``
  separated by whitespace, a blank line between sentences, ``_`` for an empty column.
  Lines starting with ``#`` are comments; ``# text = ...``, ``# respondent = ...``,
  ``# lang = ...`` and ``# question = ...`` before a sentence's tokens are honoured.
  Without ``# text`` the sentence text is the tokens joined by single spaces. Tags are
  ``O``, ``B-<type>`` and ``I-<type>`` of any one type (read as TRAIT); an ``I-`` that
  does not continue an entity of its type is an error (the file is probably IOB1), not
  silently repaired. An entity takes the concept and stance columns of its ``B-`` token.

Spans that do not fall on token boundaries are **snapped outwards** to the tokens they
touch (:func:`extractor.nlp.text.tokenize` for the sentence's language): the tagger learns
per token anyway, and strict span scores compare token-aligned offsets, so a span ending
mid-word would be unmatchable. Snapping is counted (``snapped``) and reported, never
silent; two spans that snap onto the same words become one (the first one's concept and
stance). A span that touches no token (whitespace only), or spans that still overlap
after snapping, are rejected with the line number.

Every line of a file is checked before anything is returned, and :func:`import_labels`
stores all records in one transaction, so a bad file leaves the store unchanged.
"""

from __future__ import annotations

import hashlib
import json
import sqlite3
from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path
from typing import Any, NamedTuple

from extractor.errors import InputError
from extractor.nlp.text import tokenize
from extractor.types import STANCES, Sentence, Span
from extractor.workspace import store

JSONL_SUFFIXES = (".jsonl", ".json", ".ndjson")
CONLL_SUFFIXES = (".conll", ".iob", ".bio", ".tsv", ".txt")
EMPTY = "_"
"""The placeholder of an empty concept or stance column in CoNLL files."""


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


def _fail(source: str, line: int, message: str) -> InputError:
    return InputError(f"{source}, line {line}: {message}; fix or remove the line.")


# --------------------------------------------------------------------------- spans


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
            raise _fail(source, line, f"span {span.start}-{span.end} ({quoted!r}) covers no word")
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
            raise _fail(
                source,
                line,
                f"spans {first.start}-{first.end} and "
                f"{second.start}-{second.end} overlap (after snapping to "
                "word boundaries)",
            )
    return tuple(out), moved


# --------------------------------------------------------------------------- JSONL


def _int(value: Any) -> bool:
    return isinstance(value, int) and not isinstance(value, bool)


def _optional_str(obj: Mapping[str, Any], key: str, source: str, line: int) -> str | None:
    value = obj.get(key)
    if value is None or value == "":
        return None
    if not isinstance(value, str):
        raise _fail(source, line, f"{key!r} must be text; got {value!r}")
    return value


def _span_from_dict(obj: Any, text: str, source: str, line: int, k: int) -> Span:
    if not isinstance(obj, Mapping):
        raise _fail(
            source, line, f"span {k + 1} must be an object with 'start' and 'end'; got {obj!r}"
        )
    for key in ("start", "end"):
        if not _int(obj.get(key)):
            raise _fail(
                source, line, f"span {k + 1} needs a whole-number {key!r}; got {obj.get(key)!r}"
            )
    start, end = int(obj["start"]), int(obj["end"])
    if start < 0:
        raise _fail(source, line, f"'start' {start} of span {k + 1} is negative")
    if end > len(text):
        raise _fail(source, line, f"'end' {end} is beyond the sentence's {len(text)} characters")
    if end <= start:
        raise _fail(source, line, f"'end' {end} of span {k + 1} must be after 'start' {start}")
    concept = _optional_str(obj, "concept", source, line)
    stance = _optional_str(obj, "stance", source, line)
    if stance is not None and stance not in STANCES:
        raise _fail(source, line, f"'stance' must be one of {', '.join(STANCES)}; got {stance!r}")
    return Span(start, end, concept, stance)


def record_from_dict(obj: Any, *, source: str, line: int, default_lang: str) -> LabelRecord:
    """Return a validated record from one gold-format object (one JSONL line).

    Raises:
        InputError: The object breaks the gold format; the message names ``source`` and
            ``line``.
    """
    if not isinstance(obj, Mapping):
        raise _fail(source, line, f"each line must be a JSON object; got {type(obj).__name__}")
    text = obj.get("text")
    if not isinstance(text, str) or not text.strip():
        raise _fail(source, line, "'text' must be non-empty text")
    spans = obj.get("spans")
    if not isinstance(spans, list):
        raise _fail(source, line, "'spans' must be a list (use [] for a sentence with no trait)")
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
            raise _fail(source, number, message) from exc
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


# --------------------------------------------------------------------------- CoNLL


class _Token(NamedTuple):
    text: str
    tag: str
    concept: str | None
    stance: str | None
    line: int


def _conll_token(raw: str, source: str, number: int) -> _Token:
    cols = raw.split()
    if not 2 <= len(cols) <= 4:
        raise _fail(
            source,
            number,
            f"a token line needs 2 to 4 columns (token, tag, concept, stance); got {len(cols)}",
        )
    tag = cols[1]
    if tag != "O" and not (tag[:2] in ("B-", "I-") and len(tag) > 2):
        raise _fail(source, number, f"tag {tag!r} must be 'O', 'B-<type>' or 'I-<type>'")
    extra = [None if c == EMPTY else c for c in cols[2:]] + [None, None]
    stance = extra[1]
    if stance is not None and stance not in STANCES:
        raise _fail(
            source, number, f"stance {stance!r} must be one of {', '.join(STANCES)} or '{EMPTY}'"
        )
    return _Token(cols[0], tag, extra[0], stance, number)


def _conll_sentence(
    tokens: list[_Token], meta: dict[str, str], first_line: int, source: str, default_lang: str
) -> LabelRecord:
    text = meta.get("text")
    offsets: list[tuple[int, int]] = []
    if text is None:
        position = 0
        for token in tokens:
            offsets.append((position, position + len(token.text)))
            position += len(token.text) + 1
        text = " ".join(t.text for t in tokens)
    else:
        position = 0
        for token in tokens:
            found = text.find(token.text, position)
            if found < 0:
                raise _fail(
                    source,
                    token.line,
                    f"token {token.text!r} is not in the '# text' line after the previous token",
                )
            offsets.append((found, found + len(token.text)))
            position = found + len(token.text)
    spans: list[Span] = []
    kind: str | None = None
    for i, token in enumerate(tokens):
        if token.tag.startswith("I-"):
            if kind != token.tag[2:]:
                raise _fail(
                    source,
                    token.line,
                    f"tag {token.tag!r} does not continue an entity "
                    f"of type {token.tag[2:]!r}; IOB2 opens every "
                    "entity with 'B-'",
                )
            spans[-1] = spans[-1]._replace(end=offsets[i][1])
        elif token.tag.startswith("B-"):
            kind = token.tag[2:]
            spans.append(Span(offsets[i][0], offsets[i][1], token.concept, token.stance))
        else:
            kind = None
    lang = meta.get("lang") or default_lang
    aligned, moved = align_spans(text, lang, spans, source=source, line=first_line)
    return LabelRecord(
        text=text, respondent=meta.get("respondent"), lang=lang, question=meta.get("question"),
        spans=aligned, line=first_line, lang_given="lang" in meta, snapped=moved,
        variety=meta.get("variety"),
    )  # fmt: skip


def parse_conll(lines: Iterable[str], *, source: str, default_lang: str) -> list[LabelRecord]:
    """Return the records of CoNLL-style IOB2 lines (see the module docstring).

    Raises:
        InputError: A line breaks the format (first such line).
    """
    out: list[LabelRecord] = []
    tokens: list[_Token] = []
    meta: dict[str, str] = {}
    first = 0
    for number, raw in enumerate([*lines, ""], start=1):
        line = raw.rstrip("\r\n")
        if not line.strip():
            if tokens:
                out.append(_conll_sentence(tokens, meta, first, source, default_lang))
            elif meta:
                raise _fail(source, first, "comment lines with no token lines after them")
            tokens, meta, first = [], {}, 0
            continue
        first = first or number
        if line.lstrip().startswith("#"):
            key, sep, value = line.lstrip()[1:].partition("=")
            key = key.strip()
            if sep and key in ("text", "respondent", "lang", "question", "variety"):
                # The text keeps its own inner and trailing spaces: offsets depend on them.
                meta[key] = value.removeprefix(" ") if key == "text" else value.strip()
            continue
        tokens.append(_conll_token(line, source, number))
    return out


# --------------------------------------------------------------------------- files


def read_labels(path: Path, *, default_lang: str) -> list[LabelRecord]:
    """Read a gold JSONL or CoNLL file (chosen by its suffix), checking every line.

    Raises:
        InputError: The file cannot be read, its suffix is unknown, or a line is bad.
    """
    suffix = path.suffix.lower()
    if suffix not in JSONL_SUFFIXES + CONLL_SUFFIXES:
        raise InputError(
            f"{path.name}: labels must be a {', '.join(JSONL_SUFFIXES)} file (gold JSONL) or a "
            f"{', '.join(CONLL_SUFFIXES)} file (CoNLL IOB2 columns); got {suffix or 'no suffix'}."
        )
    try:
        lines = path.read_text(encoding="utf-8-sig").splitlines()
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"{path} cannot be read as UTF-8 text ({exc}); check the path.") from exc
    parse = parse_jsonl if suffix in JSONL_SUFFIXES else parse_conll
    records = parse(lines, source=path.name, default_lang=default_lang)
    if not records:
        raise InputError(f"{path.name} holds no labeled sentence; check that it is the right file.")
    return records


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


# --------------------------------------------------------------------------- store


def _digest(records: Sequence[LabelRecord]) -> str:
    payload = json.dumps([[r.respondent, r.question, r.text, r.lang] for r in records])
    return hashlib.sha256(payload.encode("utf-8")).hexdigest()


def import_labels(
    conn: sqlite3.Connection,
    records: Sequence[LabelRecord],
    *,
    annotator: str,
    default_lang: str,
    source: str = "imported-labels",
) -> dict[str, int]:
    """Store the records' labels, adding sentences the workspace does not hold yet.

    Each record is matched to a stored sentence by exact text and respondent
    (:func:`extractor.workspace.store.find_sentence`); a record with no match becomes a new
    one-sentence answer of its respondent under one source named ``source`` (the file
    name). Everything happens in one transaction: on any error nothing is stored.

    Args:
        conn: The workspace store.
        records: Validated records (from :func:`read_labels`).
        annotator: Who the labels are attributed to.
        default_lang: Language of new answers whose record names none.
        source: Name of the source the new answers are filed under (the file name).

    Returns:
        ``{"records", "matched", "added_sentences", "labels", "spans", "snapped"}``.

    Raises:
        InputError: A record without respondent matches no stored sentence, or a record's
            text is stored only as part of a longer answer.
    """
    counts = {"records": len(records), "matched": 0, "added_sentences": 0, "labels": 0,
              "spans": 0, "snapped": sum(r.snapped for r in records)}  # fmt: skip
    with store.transaction(conn):
        found = [store.find_sentence(conn, r.text, r.respondent) for r in records]
        counts["matched"] = sum(sid is not None for sid in found)
        new = [r for r, sid in zip(records, found, strict=True) if sid is None]
        for record in new:
            if record.respondent is None:
                raise _fail(
                    source,
                    record.line,
                    "the sentence is not in the workspace and the "
                    "file does not say who said it (add a "
                    "respondent)",
                )
        if new:
            rows: list[dict[str, Any]] = [
                {"respondent": r.respondent, "question": r.question, "answer": r.text,
                 "lang": r.lang if r.lang_given else default_lang,
                 "lang_origin": "column" if r.lang_given else "default",
                 "variety": r.variety, "metadata": {}, "sheet": None, "row": r.line,
                 "is_group": False}
                for r in new
            ]  # fmt: skip
            added = store.add_source(
                conn,
                path=source,
                sha256=_digest(new),
                kind="labels",
                options={"annotator": annotator},
                rows=rows,
                sentence_offsets=[[(0, len(r.text))] for r in new],
            )
            counts["added_sentences"] = added["sentences"]
        for i, (record, sid) in enumerate(zip(records, found, strict=True)):
            if sid is None:
                sid = store.find_sentence(conn, record.text, record.respondent)
                if sid is None:
                    raise _fail(
                        source,
                        record.line,
                        "this respondent's answer holding the text is "
                        "stored as several sentences; label each "
                        "sentence separately",
                    )
                found[i] = sid
            store.add_label(conn, sid, list(record.spans), annotator, origin="import")
            counts["labels"] += 1
            counts["spans"] += len(record.spans)
    return counts
