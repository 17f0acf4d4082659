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
        implicit: Implicit traits (no quote span) in those labels.
    """

    records: int
    matched: int
    added_sentences: int
    labels: int
    spans: int
    snapped: int
    implicit: int = 0


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
                metadata=record.metadata,
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


def check_concepts(conn: sqlite3.Connection, records: Sequence[LabelRecord], source: str) -> None:
    """Refuse a record naming a concept that the workspace's trait concept list lacks.

    Raises:
        InputError: The first such record, by line, with the unknown ID.
    """
    known = {c.id for c in store.concepts(conn, "trait")}
    for record in records:
        named = [s.concept for s in record.spans if s.concept] + [
            i.concept for i in record.implicit
        ]
        unknown = next((c for c in named if c not in known), None)
        if unknown is None:
            continue
        if not known:
            raise fail(
                source,
                record.line,
                f"concept {unknown!r} cannot be checked because the workspace has no concept "
                "list yet; import it first with `traits concepts import`",
            )
        raise fail(
            source,
            record.line,
            f"concept {unknown!r} is not in the workspace's concept list; correct the ID "
            "(`traits concepts list` shows them) or import the list that holds it",
        )


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
        InputError: A record names a concept the workspace's concept list lacks, a record
            without respondent matches no stored sentence, or a record's text is stored
            only as part of a longer answer.
    """
    check_concepts(conn, records, source)
    with store.transaction(conn):
        found = [store.find_sentence(conn, r.text, r.respondent) for r in records]
        new = [r for r, sid in zip(records, found, strict=True) if sid is None]
        added = _add_sentences(
            conn, new, annotator=annotator, default_lang=default_lang, source=source
        )
        for record, sid in zip(records, found, strict=True):
            if sid is None:
                sid = _added_sentence(conn, record, source)
            store.add_label(
                conn, sid, list(record.spans), annotator, origin="import", implicit=record.implicit
            )
    return LabelImport(
        records=len(records),
        matched=sum(sid is not None for sid in found),
        added_sentences=added,
        labels=len(records),
        spans=sum(len(r.spans) for r in records),
        snapped=sum(r.snapped for r in records),
        implicit=sum(len(r.implicit) for r in records),
    )
