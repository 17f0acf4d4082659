"""Reading a reviewed workbook back into labels (`traits review import`), all or nothing.

Every reviewed sentence becomes one label of the reviewer (origin ``review``), exactly
as a terminal label would be: the sentence's full set of mentions after the reviewer's
changes. Everything is checked before anything is written: concepts, stances and
verdicts (:mod:`extractor.ingest.review`), then against the store: the sentence is
unchanged since export, added words are in the sentence, every mention of a reviewed
sentence has a verdict, and spans do not overlap. Any bad row stops the import unless
``skip_bad`` is set; then the sentences with a bad row are left out and listed.

Importing a file again changes nothing: a sentence whose label by this reviewer is
already the same is not labeled again. When the workbook was a seeded random sample of
respondents, the model version's quality on the reviewed sentences is measured
(:mod:`extractor.report.review_quality`) and stored with that version.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import NamedTuple

from extractor.errors import InputError
from extractor.ingest.review import (
    DRAWN,
    IMPLIED,
    MODEL_IMPLIED,
    REVIEW_SHEET,
    Col,
    Problem,
    ReviewEntry,
    ReviewFile,
    RowKey,
    read_review,
    sentence_digest,
)
from extractor.jobs.review import SAMPLE_SELECTION, WORKSPACE_ID_KEY
from extractor.loop.marking import find_phrase
from extractor.report.results import concept_frame
from extractor.report.review_quality import ReviewedSentence, ReviewQuality, review_quality
from extractor.types import Implicit, Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace

REVIEW_ORIGIN = "review"
"""The origin of labels that come from a review workbook."""


class ReviewRowsError(InputError):
    """Rows of a review workbook are bad; nothing was imported. One line per bad row."""


@dataclass(frozen=True)
class ReviewImport:
    """What importing a review workbook did.

    Attributes:
        reviewed: Sentences the reviewer filled in (good ones).
        stored: Labels stored now.
        unchanged: Reviewed sentences whose label by this reviewer was already the same.
        skipped: One sentence per bad row left out (with ``skip_bad``).
        quality: The model's quality on a reviewed random sample, when it was one.
    """

    path: Path
    reviewer: str
    reviewed: int
    stored: int
    unchanged: int
    skipped: tuple[str, ...] = ()
    quality: ReviewQuality | None = None
    model_version: str | None = None


class Reviewed(NamedTuple):
    """A sentence's label after review: its mentions and the traits it states without words."""

    spans: list[Span]
    implicit: tuple[Implicit, ...]


class _Sentence:
    """Turns the reviewed rows of one sentence into its label, collecting problems."""

    def __init__(self, source: str, file: ReviewFile, sentence: Sentence) -> None:
        self.source, self.file, self.sentence = source, file, sentence
        self.problems: list[Problem] = []

    def problem(self, key: str, row: int, column: str, what: str) -> None:
        self.problems.append(
            Problem(
                key,
                f"{self.source}, sheet {REVIEW_SHEET}, row {row}, column {column!r}: {what}.",
                row,
            )
        )

    def _mention(
        self, key: RowKey, entries: Sequence[ReviewEntry], reviewed_row: int
    ) -> Span | None:
        """Return a shown mention as the reviewer left it (None: dropped or bad)."""
        if not entries and key.key not in self.file.rows:
            self.problem(
                key.key,
                reviewed_row,
                Col.KEY,
                f"the row with key {key.key!r} of this sentence was deleted; restore it "
                "(undo, or copy it from a fresh export) and give it a verdict",
            )
            return None
        row = entries[0].row if entries else self.file.rows[key.key]
        verdicts = {e.verdict for e in entries if e.verdict}
        if len(verdicts) > 1:
            self.problem(key.key, row, Col.VERDICT, "copies of this row give different verdicts")
            return None
        if not verdicts:
            self.problem(
                key.key,
                row,
                Col.VERDICT,
                "the sentence is reviewed on another row but this mention has no verdict; give one",
            )
            return None
        verdict = verdicts.pop()
        concept = next((e.concept for e in entries if e.concept), None)
        stance = next((e.stance for e in entries if e.stance), None)
        found = Span(key.start or 0, key.end or 0, key.concept, key.stance)
        if verdict == "wrong":
            return None
        if verdict == "correct":
            if (concept and concept != key.concept) or (stance and stance != key.stance):
                self.problem(
                    key.key,
                    row,
                    Col.VERDICT,
                    "the verdict is correct but the concept or stance was changed; choose fix",
                )
            return found
        if concept is None and stance is None:
            self.problem(
                key.key, row, Col.CONCEPT, "fix needs the right concept or stance; pick one"
            )
            return None
        return found._replace(concept=concept or key.concept, stance=stance or key.stance)

    def _added(self, entry: ReviewEntry, taken: list[Span]) -> Span | Implicit | None:
        """Return the missed trait a row adds: a span of its words, or an implied trait."""
        added = entry.added
        if added is None:
            return None
        if not added.words:
            return Implicit(added.concept, added.stance)
        places = find_phrase(self.sentence.text, added.words, self.sentence.lang)
        if not places:
            self.problem(
                entry.key,
                entry.row,
                Col.MISSED_WORDS,
                f"the words {added.words!r} are not in the sentence; copy them from it",
            )
            return None
        free = [p for p in places if not any(p[0] < s.end and s.start < p[1] for s in taken)]
        if not free:
            self.problem(
                entry.key,
                entry.row,
                Col.MISSED_WORDS,
                f"the words {added.words!r} overlap a mention kept in this sentence; mark that "
                "mention wrong or type other words",
            )
            return None
        return Span(free[0][0], free[0][1], added.concept, added.stance)

    def label(self, keys: Sequence[RowKey], entries: Sequence[ReviewEntry]) -> Reviewed | None:
        """Return the sentence's label after review, or None when a row of it is bad."""
        by_key: dict[str, list[ReviewEntry]] = defaultdict(list)
        for entry in entries:
            by_key[entry.key].append(entry)
        spans: list[Span] = []
        implicit: list[Implicit] = []
        for key in keys:
            got = by_key.get(key.key, [])
            if key.origin in (IMPLIED, MODEL_IMPLIED):
                kept = self._mention(key, got, entries[0].row)
                if kept is not None and kept.concept:
                    implicit.append(Implicit(kept.concept, kept.stance))
                continue
            if key.start is None:
                verdicts = {e.verdict for e in got if e.verdict}
                if verdicts - {"correct"} and not any(e.added for e in got):
                    row = got[0].row
                    self.problem(
                        key.key,
                        row,
                        Col.VERDICT,
                        "this sentence had no mention; mark correct, or add the missed trait",
                    )
                continue
            found = self._mention(key, got, entries[0].row)
            if found is not None:
                spans.append(found)
        self._no_overlap(spans, by_key)
        for entry in entries:
            added = self._added(entry, spans)
            if isinstance(added, Span):
                spans.append(added)
            elif added is not None:
                implicit.append(added)
        if self.problems:
            return None
        return Reviewed(
            sorted(spans), tuple(sorted(set(implicit), key=lambda t: (t.concept, t.stance or "")))
        )

    def _no_overlap(self, spans: Sequence[Span], by_key: dict[str, list[ReviewEntry]]) -> None:
        """Note a problem when two kept mentions share words (e.g. two annotators' versions)."""
        ordered = sorted(spans)
        for first, second in zip(ordered, ordered[1:], strict=False):
            if second.start < first.end:
                rows = [e.row for es in by_key.values() for e in es]
                key = next(iter(by_key))
                self.problem(
                    key,
                    min(rows),
                    Col.VERDICT,
                    f"two kept mentions share the words "
                    f"{self.sentence.text[second.start : first.end]!r}; mark one of them wrong",
                )
                return


def _check_workspace(ws: Workspace, file: ReviewFile, path: Path) -> None:
    if file.meta.get("Workspace ID") != store.get_meta(ws.conn, WORKSPACE_ID_KEY):
        raise InputError(
            f"{path.name} was exported from another workspace ({file.meta.get('Workspace')}); "
            "import it there, or export a review workbook from this one."
        )


def reviewed_labels(
    ws: Workspace, path: Path, file: ReviewFile
) -> tuple[dict[int, Reviewed], list[Problem]]:
    """Return each good reviewed sentence's label, and every problem found."""
    problems = list(file.problems)
    # A sentence with a bad row is not checked further: its other rows would only
    # repeat the same fault in other words.
    bad = {file.keys[p.key].sentence_id for p in problems if p.key in file.keys}
    entries: dict[int, list[ReviewEntry]] = defaultdict(list)
    for entry in file.entries:
        if file.keys[entry.key].sentence_id not in bad:
            entries[file.keys[entry.key].sentence_id].append(entry)
    keys: dict[int, list[RowKey]] = defaultdict(list)
    for key in file.keys.values():
        keys[key.sentence_id].append(key)
    sentences = {s.id: s for s in store.sentences(ws.conn, sorted(entries))}
    labels: dict[int, Reviewed] = {}
    for sid, got in sorted(entries.items()):
        sentence = sentences.get(sid)
        if sentence is None or sentence_digest(sentence.text) != keys[sid][0].digest:
            problems.append(
                Problem(
                    got[0].key,
                    f"{path.name}, sheet {REVIEW_SHEET}, row {got[0].row}, column "
                    f"{Col.SENTENCE!r}: the sentence changed in the workspace since the export; "
                    "export a new review workbook for it.",
                    got[0].row,
                )
            )
            continue
        checker = _Sentence(path.name, file, sentence)
        label = checker.label(keys[sid], got)
        problems.extend(checker.problems)
        if label is not None:
            labels[sid] = label
    return labels, problems


def _quality(
    file: ReviewFile, labels: dict[int, Reviewed], respondents: dict[int, str]
) -> ReviewQuality | None:
    """Return the model's quality on the reviewed sentences, if the file was a random sample."""
    if not file.meta.get("Selection", "").startswith(SAMPLE_SELECTION):
        return None
    measured = []
    for sid, final in labels.items():
        keys = [k for k in file.keys.values() if k.sentence_id == sid]
        if all(k.origin in ("model", "none", MODEL_IMPLIED) for k in keys):
            found = [
                Span(k.start, k.end or 0, k.concept, k.stance)
                for k in keys
                if k.start is not None and k.origin == "model"
            ]
            implied = [
                Implicit(k.concept, k.stance)
                for k in keys
                if k.origin == MODEL_IMPLIED and k.concept is not None
            ]
            measured.append(
                ReviewedSentence(
                    respondents[sid], sorted(found), final.spans, final.implicit, implied
                )
            )
    return review_quality(measured, _drawn(file)) if measured else None


def _drawn(file: ReviewFile) -> int | None:
    """Return how many respondents the sample drew, or None (a workbook that predates it)."""
    text = file.meta.get(DRAWN, "")
    return int(text) if text.isdigit() else None


def import_review(
    ws: Workspace, path: Path, *, reviewer: str, skip_bad: bool = False
) -> ReviewImport:
    """Store every reviewed sentence of a review workbook as a label of ``reviewer``.

    Raises:
        ReviewRowsError: Some rows are bad (and ``skip_bad`` is not set); one line each.
        InputError: The file is not a review workbook of this workspace.
    """
    if not reviewer.strip():
        raise InputError("Give the reviewer's name with --reviewer NAME.")
    concepts = concept_frame(ws)
    file = read_review(path, dict(zip(concepts["concept_id"], concepts["label"], strict=True)))
    _check_workspace(ws, file, path)
    labels, problems = reviewed_labels(ws, path, file)
    problems.sort(key=lambda p: p.row)
    if problems and not skip_bad:
        raise ReviewRowsError(
            f"{len(problems)} row{'s' if len(problems) != 1 else ''} of {path.name} "
            "cannot be imported, so nothing was (fix them, or import with --skip-bad to "
            "leave their sentences out):\n" + "\n".join(p.text for p in problems)
        )
    bad = {file.keys[p.key].sentence_id for p in problems if p.key in file.keys}
    labels = {sid: spans for sid, spans in labels.items() if sid not in bad}
    mine = {
        sid: lab
        for (sid, who), lab in store.labels_by_annotator(ws.conn).items()
        if who == reviewer
    }
    fresh = {
        sid: new
        for sid, new in labels.items()
        if sid not in mine
        or sorted(mine[sid].spans) != new.spans
        or set(mine[sid].implicit) != set(new.implicit)
    }
    with store.transaction(ws.conn):
        for sid, new in fresh.items():
            store.add_label(
                ws.conn, sid, new.spans, reviewer, origin=REVIEW_ORIGIN, implicit=new.implicit
            )
    respondents = {s.id: s.respondent or "" for s in store.sentences(ws.conn, labels)}
    quality = _quality(file, labels, respondents)
    version = file.meta.get("Model version")
    if quality is not None and version and version != "none":
        store.set_model_metrics(
            ws.conn, version, {"review_sample": quality.as_metrics(version, reviewer)}
        )
    return ReviewImport(
        path=path,
        reviewer=reviewer,
        reviewed=len(labels),
        stored=len(fresh),
        unchanged=len(labels) - len(fresh),
        skipped=tuple(p.text for p in problems),
        quality=quality,
        model_version=None if version in (None, "none") else version,
    )
