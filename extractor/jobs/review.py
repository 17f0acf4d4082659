"""Review in a spreadsheet (`traits review export`): choose the rows, write the workbook.

A sentence is always exported whole (all its mentions, or one row when it has none), so
that the reviewed rows of a sentence make its complete label. The rows are the label in
force where a person labeled the sentence, else the predictions of a model version. What
to review: everything, a seeded random sample of respondents (for an honest quality
estimate, :mod:`extractor.jobs.review_import`), low-confidence mentions, one concept, or
the respondents of one group (``district=Ombala``).
"""

from __future__ import annotations

import uuid
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

import numpy as np

from extractor.errors import InputError
from extractor.ingest.review import DRAWN, IMPLIED, MODEL_IMPLIED, RowKey, sentence_digest
from extractor.jobs.inputs import question_codebook
from extractor.jobs.tag import ensure_tagged
from extractor.report.results import concept_frame
from extractor.report.review import ReviewLine, write_review_workbook
from extractor.types import Implicit, Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace

WORKSPACE_ID_KEY = "workspace_id"
"""Meta key of the random ID that matches a review workbook to the workspace it came from."""
SAMPLE_SELECTION = "random sample"
"""How the selection of a seeded random sample of respondents begins (read back on import)."""


@dataclass(frozen=True)
class ReviewSelection:
    """What to put in a review workbook; the options combine (all must hold)."""

    sample: int | None = None
    seed: int = 0
    low_confidence: float | None = None
    concept: str | None = None
    where: tuple[tuple[str, str], ...] = ()

    def describe(self) -> str:
        """Return the selection in words, as the hidden sheet records it."""
        parts = []
        if self.sample is not None:
            parts.append(f"{SAMPLE_SELECTION} of {self.sample} respondents (seed {self.seed})")
        parts.extend(f"{column}={value}" for column, value in self.where)
        if self.low_confidence is not None:
            parts.append(f"mentions below confidence {self.low_confidence}")
        if self.concept is not None:
            parts.append(f"concept {self.concept}")
        return "; ".join(parts) or "all"


@dataclass(frozen=True)
class ReviewExport:
    """The review workbook written: its path and what it holds."""

    path: Path
    rows: int
    sentences: int
    respondents: int
    model_version: str | None


def parse_where(text: str) -> tuple[str, str]:
    """Return ``(column, value)`` of a ``column=value`` group filter.

    Raises:
        InputError: The text has no ``=`` or an empty column name.
    """
    column, sep, value = text.partition("=")
    if not sep or not column.strip():
        raise InputError(f"A group filter reads column=value, like district=Ombala; got {text!r}.")
    return column.strip(), value.strip()


def workspace_id(ws: Workspace) -> str:
    """Return the workspace's random ID, creating it on first use."""
    found = store.get_meta(ws.conn, WORKSPACE_ID_KEY)
    if found is None:
        found = uuid.uuid4().hex
        store.set_meta(ws.conn, WORKSPACE_ID_KEY, found)
    return found


def _respondents(ws: Workspace, selection: ReviewSelection) -> list[str]:
    """Return the respondents the selection keeps, in store order."""
    people = store.respondents(ws.conn)
    for column, value in selection.where:
        known = sorted({k for p in people for k in p if k not in ("respondent", "is_group")})
        if column not in known:
            raise InputError(
                f"No respondent column {column!r} to filter on; choose from "
                f"{', '.join(known) or 'none (the interviews hold no respondent columns)'}."
            )
        people = [p for p in people if str(p.get(column, "")).casefold() == value.casefold()]
    chosen = [str(p["respondent"]) for p in people]
    if selection.sample is not None:
        if selection.sample < 1:
            raise InputError(f"The sample size must be 1 or more; got {selection.sample}.")
        rng = np.random.default_rng(selection.seed)
        size = min(selection.sample, len(chosen))
        keep = set(rng.choice(len(chosen), size=size, replace=False).tolist()) if size else set()
        chosen = [r for k, r in enumerate(chosen) if k in keep]
    return chosen


class _Found:
    """The mentions shown for each sentence: a person's label, else a model's predictions."""

    def __init__(self, ws: Workspace, version: str | None) -> None:
        self.labels = store.current_labels(ws.conn)
        self.predicted = store.predictions(ws.conn, version) if version else {}

    def implicit(self, sid: int) -> tuple[Implicit, ...]:
        """Return the traits a person's label, else the model, finds stated without words."""
        if sid in self.labels:
            return self.labels[sid].implicit
        found = self.predicted.get(sid)
        ms = found.mentions if found is not None else []
        return tuple(
            Implicit(str(m["concept"]), m.get("stance"))
            for m in ms
            if m.get("implicit") and m.get("concept")
        )

    def mentions(self, sid: int) -> tuple[str, list[Span], list[float | None]]:
        """Return who found the sentence's mentions with a quote span, them, and confidences.

        A model's trait without a quote span (stored over the whole sentence) is not
        one: :meth:`implicit` returns it, so that it is reviewed and imported as such.
        """
        if sid in self.labels:
            spans = list(self.labels[sid].spans)
            return "person", spans, [None] * len(spans)
        found = self.predicted.get(sid)
        ms = [m for m in (found.mentions if found is not None else []) if not m.get("implicit")]
        spans = [Span(m["start"], m["end"], m.get("concept"), m.get("stance")) for m in ms]
        return "model", spans, [m.get("confidence") for m in ms]


def _keeps(
    origin: str, spans: Sequence[Span], conf: Sequence[float | None], s: ReviewSelection
) -> bool:
    """Return whether a sentence's mentions pass the confidence and concept filters."""
    if s.low_confidence is not None and not any(
        origin == "model" and c is not None and c < s.low_confidence for c in conf
    ):
        return False
    return s.concept is None or any(span.concept == s.concept for span in spans)


def sentence_lines(
    sentence: Sentence,
    origin: str,
    spans: Sequence[Span],
    conf: Sequence[float | None],
    labels: Mapping[str, str],
    found_by: Sequence[str] = (),
    implicit: Sequence[Implicit] = (),
    implicit_by: Sequence[str] = (),
    implicit_origin: str = IMPLIED,
) -> list[ReviewLine]:
    """Return a sentence's review rows: one per mention, or one saying it has none.

    Args:
        sentence: The stored sentence.
        origin: ``model`` or ``person``: where the mentions come from.
        spans: Its mentions.
        conf: The tagger's confidence of each mention (None for a person's).
        labels: Concept ID -> display label.
        found_by: Who found each mention, when several people did (else the origin).
        implicit: Traits a person's label states without words: one row each.
        implicit_by: Who stated each of those, when several people did.
        implicit_origin: :data:`IMPLIED` when they are a person's, ``MODEL_IMPLIED``
            when the model's.
    """
    digest = sentence_digest(sentence.text)

    def line(key: RowKey, words: str, confidence: float | None) -> ReviewLine:
        return ReviewLine(
            key=key,
            respondent=sentence.respondent or "",
            question=sentence.question,
            sentence=sentence.text,
            words=words,
            concept_label=None if key.concept is None else labels.get(key.concept, key.concept),
            confidence=confidence,
        )

    implied = [
        line(
            RowKey(
                f"S{sentence.id}-i{k}",
                sentence.id,
                None,
                None,
                digest,
                implicit_origin,
                t.concept,
                t.stance,
            ),
            "",
            None,
        )._replace(
            found_by=implicit_by[k - 1]
            if implicit_by
            else ("model" if implicit_origin == MODEL_IMPLIED else "person")
        )
        for k, t in enumerate(implicit, start=1)
    ]
    if not spans and implied:
        return implied
    if not spans:
        none = "none" if origin == "model" else "person"
        return [
            line(
                RowKey(f"S{sentence.id}", sentence.id, None, None, digest, none, None, None),
                "",
                None,
            )
        ]
    return [
        line(
            RowKey(
                f"S{sentence.id}-{k}",
                sentence.id,
                sp.start,
                sp.end,
                digest,
                origin,
                sp.concept,
                sp.stance,
            ),
            sentence.text[sp.start : sp.end],
            c,
        )._replace(found_by=found_by[k - 1] if found_by else "")
        for k, (sp, c) in enumerate(zip(spans, conf, strict=True), start=1)
    ] + implied


def review_lines(
    ws: Workspace, version: str | None, selection: ReviewSelection
) -> list[ReviewLine]:
    """Return the review rows the selection keeps, by respondent, answer and sentence."""
    concepts = concept_frame(ws)
    labels = dict(zip(concepts["concept_id"], concepts["label"], strict=True))
    if selection.concept is not None and selection.concept not in labels:
        raise InputError(
            f"{selection.concept!r} is not a concept ID of the workspace's list; see "
            "`traits concepts list`."
        )
    people = set(_respondents(ws, selection))
    found = _Found(ws, version)
    wording = {key: code.text for key, code in question_codebook(ws).items() if code.text}
    kept = [s for s in store.sentences(ws.conn) if s.respondent in people]
    kept.sort(key=lambda s: (s.respondent or "", s.answer_id or 0, s.offset))
    lines: list[ReviewLine] = []
    for sentence in kept:
        origin, spans, conf = found.mentions(sentence.id)
        if _keeps(origin, spans, conf, selection):
            implicit = found.implicit(sentence.id)
            implied = MODEL_IMPLIED if origin == "model" else IMPLIED
            asked = sentence.question or ""
            if asked in wording:  # a survey field name: the codebook's wording, then the name
                sentence = sentence._replace(question=f"{wording[asked]} ({asked})")
            lines.extend(
                sentence_lines(
                    sentence,
                    origin,
                    spans,
                    conf,
                    labels,
                    implicit=implicit,
                    implicit_origin=implied,
                )
            )
    return lines


def write_lines(
    ws: Workspace,
    lines: Sequence[ReviewLine],
    out: Path,
    version: str | None,
    selection: str,
    *,
    drawn: int | None = None,
) -> Path:
    """Write review rows as a review workbook of this workspace; return its path.

    ``drawn`` is how many respondents of a random sample the rows hold (None: not a
    sample); the import says how many of them were reviewed.
    """
    out.parent.mkdir(parents=True, exist_ok=True)
    concepts = concept_frame(ws)
    meta = {
        "Workspace": str(ws.root.resolve()),
        "Workspace ID": workspace_id(ws),
        "Model version": version or "none",
        "Selection": selection,
        **({DRAWN: str(drawn)} if drawn is not None else {}),
        "Exported": datetime.now(UTC).isoformat(timespec="seconds"),
    }
    write_review_workbook(
        out, lines, list(zip(concepts["concept_id"], concepts["label"], strict=True)), meta
    )
    return out


def export_review(
    ws: Workspace,
    selection: ReviewSelection = ReviewSelection(),
    *,
    version: str | None = None,
    out: Path | None = None,
) -> ReviewExport:
    """Write a review workbook of the rows the selection keeps.

    Args:
        ws: The open workspace.
        selection: Which respondents and sentences to review.
        version: The model version whose mentions are shown (the newest by default;
            sentences are tagged with it first if needed).
        out: The ``.xlsx`` to write; ``exports/review.xlsx`` by default.

    Raises:
        InputError: Nothing matches the selection, or a filter names an unknown column
            or concept.
    """
    version = ensure_tagged(ws, version)
    lines = review_lines(ws, version, selection)
    if not lines:
        raise InputError(
            f"No sentence matches the selection ({selection.describe()}); widen it and export "
            "again."
        )
    respondents = len({line.respondent for line in lines})
    out = write_lines(
        ws,
        lines,
        out or ws.exports_dir / "review.xlsx",
        version,
        selection.describe(),
        drawn=respondents if selection.sample is not None else None,
    )
    return ReviewExport(
        path=out,
        rows=len(lines),
        sentences=len({line.key.sentence_id for line in lines}),
        respondents=respondents,
        model_version=version,
    )
