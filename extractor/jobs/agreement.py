"""Agreement between annotators of a workspace (`traits agreement`), and their disagreements.

Each annotator's label in force per sentence is read from the store, whether it was
given in the terminal, imported from a file or from a review workbook. The figures come
from :mod:`extractor.models.agreement`; the sentences the annotators labeled differently
are written as a review workbook of only those sentences, one row per distinct mention
(saying who marked it), so that a third person can settle them and import the result
like any review (`traits review import`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from extractor.errors import InputError
from extractor.jobs.review import sentence_lines, write_lines
from extractor.models.agreement import AgreementReport, agreement
from extractor.report.results import concept_frame
from extractor.report.review import ReviewLine
from extractor.types import Implicit, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from extractor.workspace.store import StoredLabel


@dataclass(frozen=True)
class AgreementResult:
    """The agreement figures, and the workbook of disagreements (None when there are none)."""

    report: AgreementReport
    disagreements: Path | None


def annotator_labels(
    ws: Workspace, annotators: Sequence[str] | None = None
) -> dict[str, dict[int, StoredLabel]]:
    """Return each annotator's label in force per sentence (all annotators, or those named).

    Raises:
        InputError: A named annotator has no label in the workspace.
    """
    found: dict[str, dict[int, StoredLabel]] = {}
    for (sid, who), label in store.labels_by_annotator(ws.conn).items():
        found.setdefault(who, {})[sid] = label
    if annotators:
        missing = [a for a in annotators if a not in found]
        if missing:
            raise InputError(
                f"No labels by {missing[0]!r} in this workspace; annotators with labels: "
                f"{', '.join(sorted(found)) or 'none'}."
            )
        found = {a: found[a] for a in annotators}
    return found


def _disagreement_lines(
    ws: Workspace, labels: dict[str, dict[int, StoredLabel]], sentence_ids: Sequence[int]
) -> list[ReviewLine]:
    """Return review rows of the sentences: each distinct trait once, with who gave it."""
    concepts = concept_frame(ws)
    names = dict(zip(concepts["concept_id"], concepts["label"], strict=True))
    lines: list[ReviewLine] = []
    for sentence in store.sentences(ws.conn, sentence_ids):
        marked: dict[Span, list[str]] = {}
        stated: dict[Implicit, list[str]] = {}
        for who in sorted(labels):
            label = labels[who].get(sentence.id)
            for span in label.spans if label else ():
                marked.setdefault(Span(*span), []).append(who)
            for trait in label.implicit if label else ():
                stated.setdefault(trait, []).append(who)
        spans = sorted(marked)
        implicit = sorted(stated, key=lambda t: (t.concept, t.stance or ""))
        lines.extend(
            sentence_lines(
                sentence,
                "person",
                spans,
                [None] * len(spans),
                names,
                found_by=[", ".join(marked[s]) for s in spans],
                implicit=implicit,
                implicit_by=[", ".join(stated[t]) for t in implicit],
            )
        )
    return lines


def workspace_agreement(
    ws: Workspace, *, annotators: Sequence[str] | None = None, out: Path | None = None
) -> AgreementResult:
    """Measure agreement between annotators and write their disagreements for review.

    Args:
        ws: The open workspace.
        annotators: The annotators to compare (all who labeled by default).
        out: The disagreements workbook; ``exports/disagreements.xlsx`` by default.

    Raises:
        InputError: Fewer than two annotators, or no sentence labeled by two of them.
    """
    labels = annotator_labels(ws, annotators)
    report = agreement(
        {who: {sid: lab.spans for sid, lab in got.items()} for who, got in labels.items()},
        {who: {sid: lab.implicit for sid, lab in got.items()} for who, got in labels.items()},
    )
    if len(labels) < 2 or report.sentences == 0:
        raise InputError(
            "Agreement needs sentences labeled by at least two annotators; annotators with "
            f"labels: {', '.join(sorted(labels)) or 'none'}. Have a second person review the "
            "same sentences (`traits review import FILE --reviewer NAME`)."
        )
    path = None
    if report.disagreements:
        path = write_lines(
            ws,
            _disagreement_lines(ws, labels, report.disagreements),
            out or ws.exports_dir / "disagreements.xlsx",
            None,
            "disagreements between " + ", ".join(report.annotators),
        )
    return AgreementResult(report, path)
