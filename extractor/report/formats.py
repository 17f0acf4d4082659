"""Plain exports other tools can read: CSV, JSON Lines, CoNLL IOB2 and W3C Web Annotations.

* :func:`write_mentions_csv` and :func:`write_mentions_jsonl` write the long table
  of mentions (the ``mentions`` frame described in :mod:`extractor.report.inputs`).
* :func:`write_labels` writes labeled sentences in the label format (JSON Lines with
  ``mentions`` and ``implicit``, :mod:`extractor.ingest.labels`), the format
  ``traits import-labels`` and ``traits simulate`` read.
* :func:`write_conll` writes labeled sentences as IOB2 token columns (token, tag,
  concept, stance) with CoNLL-U style ``# sent_id =`` / ``# text =`` comments and an
  ``# implicit =`` line per implicit trait; ``traits import-labels`` reads them back.
* :func:`write_web_annotations` writes each mention as a W3C Web Annotation
  (Web Annotation Data Model, W3C Recommendation 23 February 2017) inside one
  ``AnnotationCollection``.

Only the CSV is a format spreadsheet programs open by double-click, so only its text
cells are guarded against formula injection (:func:`spreadsheet_text`). JSON Lines and
JSON-LD are not spreadsheet formats (a spreadsheet does not evaluate a JSON string), and
the CoNLL columns are read back token by token by ``traits import-labels``, so a quote
added there would change the tokens.

These files hold interview text: pseudonymise the frames first
(:func:`extractor.report.privacy.pseudonymise_frames`) before they leave the machine.
"""

from __future__ import annotations

import csv
import json
from collections.abc import Callable, Iterable, Mapping, Sequence
from pathlib import Path
from typing import Any

import pandas as pd

from extractor.errors import InputError
from extractor.ingest.decode import FORMULA_GUARD, FORMULA_TRIGGERS
from extractor.ingest.labels import LabelRecord, record_to_dict
from extractor.nlp.text import tokenize
from extractor.report.inputs import plain_value
from extractor.types import Implicit, Sentence, Span
from extractor.workspace.files import atomic_open

ANNO_CONTEXT = "http://www.w3.org/ns/anno.jsonld"
QUOTE_CONTEXT_CHARS = 32
"""Characters of prefix and suffix kept in a TextQuoteSelector: enough to tell repeats apart."""
EMPTY = "_"
"""CoNLL placeholder for an empty column."""


def _open_for_writing(path: Path | str, newline: str | None = None) -> Any:
    """Open ``path`` for an atomic UTF-8 write (:func:`extractor.workspace.files.atomic_open`)."""
    return atomic_open(path, newline=newline)


def spreadsheet_text(value: object) -> object:
    """Put a single quote before text a spreadsheet would run as a formula; keep the rest.

    OWASP's "CSV Injection" guidance: a cell starting with ``=``, ``+``, ``-``, ``@``,
    tab or carriage return is prefixed with ``'``. Numbers are left alone, so negative
    numbers stay numbers.
    """
    if isinstance(value, str) and value.startswith(FORMULA_TRIGGERS):
        return FORMULA_GUARD + value
    return value


def write_mentions_csv(
    path: Path | str, mentions: pd.DataFrame, columns: Sequence[str] | None = None
) -> int:
    """Write mentions as RFC 4180 CSV (UTF-8, header row, quoted where needed).

    Text cells that a spreadsheet would read as a formula get a leading quote
    (:func:`spreadsheet_text`); numeric columns are written as they are.

    Args:
        path: File to write.
        mentions: The mentions frame.
        columns: Columns to keep, in order; all by default.

    Returns:
        The number of rows written.
    """
    frame = (mentions if columns is None else mentions.loc[:, list(columns)]).copy()
    for column in frame.select_dtypes(exclude=["number", "bool"]).columns:
        frame[column] = frame[column].map(spreadsheet_text)
    with _open_for_writing(path, newline="") as fh:
        # QUOTE_MINIMAL quotes fields with commas, quotes or line breaks, doubling quotes
        # (RFC 4180 section 2); CRLF line ends are what that RFC specifies.
        frame.to_csv(fh, index=False, quoting=csv.QUOTE_MINIMAL, lineterminator="\r\n")
    return len(frame)


def write_mentions_jsonl(path: Path | str, mentions: pd.DataFrame) -> int:
    """Write one JSON object per mention per line (JSON Lines), missing values as null.

    Returns:
        The number of lines written.
    """
    columns = [str(c) for c in mentions.columns]
    with _open_for_writing(path) as fh:
        for record in mentions.itertuples(index=False, name=None):
            obj = {c: plain_value(v) for c, v in zip(columns, record, strict=True)}
            fh.write(json.dumps(obj, ensure_ascii=False) + "\n")
    return len(mentions)


# --- CoNLL IOB2 ----------------------------------------------------------------------


def iob2_tags(text: str, lang: str, spans: Sequence[Span]) -> list[tuple[str, str, Span | None]]:
    """Return ``(token, tag, span)`` for each token; a token touching a span is inside it.

    Raises:
        InputError: If two spans overlap, or a span lies outside the text.
    """
    ordered = sorted(spans, key=lambda s: (s.start, s.end))
    for a, b in zip(ordered, ordered[1:], strict=False):
        if b.start < a.end:
            raise InputError(
                f"Spans [{a.start}, {a.end}) and [{b.start}, {b.end}) overlap; "
                "IOB2 allows one trait per token."
            )
    for s in ordered:
        if not 0 <= s.start < s.end <= len(text):
            raise InputError(
                f"Span [{s.start}, {s.end}) lies outside a sentence of {len(text)} characters."
            )
    out: list[tuple[str, str, Span | None]] = []
    previous: Span | None = None
    for start, end in tokenize(text, lang):
        span = next((s for s in ordered if start < s.end and s.start < end), None)
        if span is None:
            tag = "O"
        else:
            tag = "I-TRAIT" if span is previous else "B-TRAIT"
        out.append((text[start:end], tag, span))
        previous = span
    return out


def _one_line(text: str) -> str:
    return " ".join(text.split())


def write_labels(path: Path | str, records: Iterable[LabelRecord]) -> int:
    """Write labeled sentences in the label format, one JSON object per line.

    Returns:
        The number of sentences written.
    """
    count = 0
    with _open_for_writing(path) as fh:
        for record in records:
            fh.write(json.dumps(record_to_dict(record), ensure_ascii=False) + "\n")
            count += 1
    return count


def write_conll(
    path: Path | str,
    labeled_sentences: Iterable[tuple[Sentence, Sequence[Span]]],
    implicit: Mapping[int, Sequence[Implicit]] | None = None,
) -> int:
    """Write labeled sentences as tab-separated IOB2 columns: token, tag, concept, stance.

    A ``#`` header states the scheme; each sentence starts with ``# sent_id =``,
    ``# lang =`` and ``# text =`` comment lines (CoNLL-U convention), then one
    ``# implicit = CONCEPT STANCE`` line per trait the sentence states without a span
    (``implicit`` by sentence ID), and ends with a blank line. Tokens come from
    :func:`extractor.nlp.text.tokenize`; ``_`` marks an empty column.

    Returns:
        The number of sentences written.
    """
    count = 0
    with _open_for_writing(path) as fh:
        fh.write("# scheme = IOB2, one entity type: TRAIT\n")
        fh.write("# columns = token tag concept stance (tab-separated, _ = none)\n\n")
        for sentence, spans in labeled_sentences:
            fh.write(f"# sent_id = {sentence.id}\n")
            fh.write(f"# lang = {sentence.lang}\n")
            fh.write(f"# text = {_one_line(sentence.text)}\n")
            for trait in (implicit or {}).get(sentence.id, ()):
                fh.write(f"# implicit = {trait.concept} {trait.stance or EMPTY}\n")
            for token, tag, span in iob2_tags(sentence.text, sentence.lang, spans):
                concept = span.concept if span is not None and span.concept else EMPTY
                stance = span.stance if span is not None and span.stance else EMPTY
                fh.write(f"{token}\t{tag}\t{concept}\t{stance}\n")
            fh.write("\n")
            count += 1
    return count


def answer_urn(row: Mapping[str, Any]) -> str:
    """Return ``urn:traits:answer:<answer_id>``: a local URI with no personal ID in it."""
    return f"urn:traits:answer:{int(row['answer_id'])}"


def web_annotation(row: Mapping[str, Any], source: str, index: int) -> dict[str, Any]:
    """Return one mention as a W3C Web Annotation (without ``@context``).

    The body is the concept ID as a ``TextualBody`` with purpose ``classifying``,
    plus the stance as a second ``TextualBody`` with purpose ``tagging``; the
    target selects the span in the answer by quote (with prefix and suffix from
    the sentence) and by character position in the answer. An implicit trait (stated
    without a phrase naming it) selects its whole sentence: a ``TextQuoteSelector``
    whose ``exact`` is the sentence, and the sentence's position in the answer. A
    mention linked to no concept has no classifying body and the motivation
    ``highlighting`` (the model allows an annotation without a body, section 3.1), so
    every mention of the other exports is here too.
    """
    sentence = str(row["sentence"])
    start, end = int(row["start"]), int(row["end"])
    implicit = bool(plain_value(row.get("implicit")))
    if implicit:  # no quote span: the target is the whole sentence
        start, end = 0, len(sentence)
    concept = plain_value(row.get("concept_id"))
    body: list[dict[str, Any]] = []
    if concept is not None:
        body.append(
            {
                "type": "TextualBody",
                "purpose": "classifying",
                "value": str(concept),
                "format": "text/plain",
            }
        )
    stance = plain_value(row.get("stance"))
    if stance:
        body.append(
            {
                "type": "TextualBody",
                "purpose": "tagging",
                "value": str(stance),
                "format": "text/plain",
            }
        )
    quote = {"type": "TextQuoteSelector", "exact": sentence[start:end]}
    if not implicit:
        quote["prefix"] = sentence[max(0, start - QUOTE_CONTEXT_CHARS) : start]
        quote["suffix"] = sentence[end : end + QUOTE_CONTEXT_CHARS]
    selectors: list[dict[str, Any]] = [quote]
    a_start, a_end = plain_value(row.get("answer_start")), plain_value(row.get("answer_end"))
    if a_start is not None and a_end is not None:
        selectors.append({"type": "TextPositionSelector", "start": int(a_start), "end": int(a_end)})
    annotation: dict[str, Any] = {
        "id": f"urn:traits:annotation:{index}",
        "type": "Annotation",
        "motivation": "classifying" if concept is not None else "highlighting",
        "target": {"source": source, "selector": selectors},
    }
    if body:
        annotation["body"] = body
    return annotation


def write_web_annotations(
    path: Path | str,
    mentions: pd.DataFrame,
    source_uri_for: Callable[[Mapping[str, Any]], str] | None = None,
    *,
    label: str = "Trait mentions",
) -> int:
    """Write every mention as a W3C Web Annotation ``AnnotationCollection`` (JSON-LD).

    Args:
        path: File to write (``.jsonld`` or ``.json``).
        mentions: The mentions frame; a mention linked to no concept is written as a
            highlight (see :func:`web_annotation`), so ``total`` counts what the other
            exports count.
        source_uri_for: Maps a mention row to the URI of its answer; by default
            ``urn:traits:answer:<answer_id>``, which carries no personal ID.
        label: Human-readable label of the collection.

    Returns:
        The number of annotations written.

    Raises:
        InputError: If a needed column is missing or the folder does not exist.
    """
    needed = ["sentence", "start", "end", "concept_id"]
    if source_uri_for is None:
        needed.append("answer_id")
        source_uri_for = answer_urn
    missing = [c for c in needed if c not in mentions.columns]
    if missing:
        raise InputError(
            f"The mentions table lacks the column(s) {', '.join(missing)} "
            "needed for web annotations."
        )
    items = [
        web_annotation(row, source_uri_for(row), i)
        for i, row in enumerate(mentions.to_dict("records"), start=1)
    ]
    collection = {
        "@context": ANNO_CONTEXT,
        "id": "urn:traits:collection:mentions",
        "type": "AnnotationCollection",
        "label": label,
        "total": len(items),
    }
    if items:  # the model requires a first page only when there are annotations
        collection["first"] = {
            "id": "urn:traits:collection:mentions:page1",
            "type": "AnnotationPage",
            "startIndex": 0,
            "items": items,
        }
    with _open_for_writing(path) as fh:
        json.dump(collection, fh, ensure_ascii=False, indent=1)
    return len(items)
