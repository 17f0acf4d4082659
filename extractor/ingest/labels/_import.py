"""Importing labeled sentences into the workspace store, all or nothing."""

from __future__ import annotations

import hashlib
import json
import sqlite3
from collections.abc import Sequence
from dataclasses import dataclass

from extractor.ingest.labels._record import LabelRecord, fail
from extractor.types import AnswerRow
from extractor.workspace import store


@dataclass(frozen=True)
class LabelImport:
    """What importing labeled sentences did.

    Attributes:
        records: Labeled sentences given.
        matched: Of those, how many matched a stored sentence.
        added_sentences: Sentences added to the workspace for the others.
        labels: Labels stored (one per record).
        spans: Spans in those labels.
        snapped: Spans that were moved to token boundaries when read.
    """

    records: int
    matched: int
    added_sentences: int
    labels: int
    spans: int
    snapped: int


def _digest(records: Sequence[LabelRecord]) -> str:
    payload = json.dumps([[r.respondent, r.question, r.text, r.lang] for r in records])
    return hashlib.sha256(payload.encode("utf-8")).hexdigest()


def _add_sentences(
    conn: sqlite3.Connection,
    new: Sequence[LabelRecord],
    *,
    annotator: str,
    default_lang: str,
    source: str,
) -> int:
    """Store records that match no stored sentence as one-sentence answers; return how many.

    Raises:
        InputError: A record without respondent (it could not be filed under anyone).
    """
    rows: list[AnswerRow] = []
    for record in new:
        if record.respondent is None:
            raise fail(
                source,
                record.line,
                "the sentence is not in the workspace and the "
                "file does not say who said it (add a "
                "respondent)",
            )
        rows.append(
            AnswerRow(
                respondent=record.respondent,
                answer=record.text,
                lang=record.lang if record.lang_given else default_lang,
                lang_origin="column" if record.lang_given else "default",
                question=record.question,
                variety=record.variety,
                row=record.line,
            )
        )
    if not rows:
        return 0
    added = store.add_source(
        conn,
        path=source,
        sha256=_digest(new),
        kind="labels",
        options={"annotator": annotator},
        rows=rows,
        sentence_offsets=[[(0, len(r.text))] for r in new],
    )
    return added["sentences"]


def _added_sentence(conn: sqlite3.Connection, record: LabelRecord, source: str) -> int:
    """Return the ID of the sentence just added for a record.

    Raises:
        InputError: The record's text is stored only inside a longer answer.
    """
    sid = store.find_sentence(conn, record.text, record.respondent)
    if sid is None:
        raise fail(
            source,
            record.line,
            "this respondent's answer holding the text is "
            "stored as several sentences; label each "
            "sentence separately",
        )
    return sid


def import_labels(
    conn: sqlite3.Connection,
    records: Sequence[LabelRecord],
    *,
    annotator: str,
    default_lang: str,
    source: str = "imported-labels",
) -> LabelImport:
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

    Raises:
        InputError: A record without respondent matches no stored sentence, or a record's
            text is stored only as part of a longer answer.
    """
    with store.transaction(conn):
        found = [store.find_sentence(conn, r.text, r.respondent) for r in records]
        new = [r for r, sid in zip(records, found, strict=True) if sid is None]
        added = _add_sentences(
            conn, new, annotator=annotator, default_lang=default_lang, source=source
        )
        for record, sid in zip(records, found, strict=True):
            if sid is None:
                sid = _added_sentence(conn, record, source)
            store.add_label(conn, sid, list(record.spans), annotator, origin="import")
    return LabelImport(
        records=len(records),
        matched=sum(sid is not None for sid in found),
        added_sentences=added,
        labels=len(records),
        spans=sum(len(r.spans) for r in records),
        snapped=sum(r.snapped for r in records),
    )
