"""Setting or detecting again the language of stored answers (`traits language`).

A wrong language is fixed in place: the answers keep their sentences, so every label
stays attached, and the model's predictions for those sentences, made from the old
language's tokens, are dropped as stale; the next export or run tags them again.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from extractor.errors import InputError
from extractor.ingest.intake import detection_languages, stored_path
from extractor.ingest.language import detect_languages, normalise_tag
from extractor.jobs.add import LanguageFound, stored_languages
from extractor.workspace import store
from extractor.workspace.folder import Workspace

GIVEN = "column"
"""The store's origin for a language a person gave (a language column, a label file or
`traits language set`), as against ``detected`` and ``default``."""


@dataclass(frozen=True)
class Selection:
    """Which stored answers to change: all, or those of a file, a respondent or an answer ID."""

    file: str | None = None
    respondent: str | None = None
    answer: int | None = None


@dataclass(frozen=True)
class LanguageChange:
    """What setting or detecting languages did.

    Attributes:
        selected: Answers selected.
        changed: Answers whose language changed.
        undecided: Answers detection could not tell (too short or unclear); kept as they were.
        stale: Sentences whose predictions were dropped, to be tagged again.
        languages: The languages of the stored sentences afterwards.
        given: Selected answers whose language a person gave (a language column or
            `traits language set`); detection leaves them alone.
        undecided_answers: The undecided answers themselves (number, language kept,
            text), for the user to set.
    """

    selected: int
    changed: int
    undecided: int
    stale: int
    languages: Sequence[LanguageFound]
    given: int = 0
    undecided_answers: tuple[tuple[int, str, str], ...] = ()


def _select(ws: Workspace, selection: Selection) -> list[store.AnswerLanguage]:
    """Return the selected answers, refusing a selection that matches none."""
    path = None
    if selection.file is not None:
        given = Path(selection.file)
        known = {source["path"] for source in store.sources(ws.conn)}
        path = stored_path(ws, given) if stored_path(ws, given) in known else selection.file
    found = store.select_answers(
        ws.conn, source_path=path, respondent=selection.respondent, answer_id=selection.answer
    )
    if found:
        return found
    if selection.file is not None:
        what = f"file '{selection.file}'"
    elif selection.respondent is not None:
        what = f"respondent {selection.respondent!r}"
    elif selection.answer is not None:
        what = f"answer {selection.answer}"
    else:
        what = "this workspace"
    raise InputError(
        f"No stored answer comes from {what}; check the spelling (`traits status` counts what "
        "is stored; the file as it was added, the respondent ID as in the interviews)."
    )


def _apply(
    ws: Workspace,
    chosen: list[store.AnswerLanguage],
    new: Sequence[tuple[str, str] | None],
    given: int = 0,
) -> LanguageChange:
    """Store the new languages that differ from the old ones and report the change."""
    changes = [
        (answer.id, pick[0], pick[1])
        for answer, pick in zip(chosen, new, strict=True)
        if pick is not None and pick[0] != answer.lang
    ]
    stale = store.set_answer_languages(ws.conn, changes)
    return LanguageChange(
        selected=len(chosen) + given,
        changed=len(changes),
        undecided=sum(pick is None for pick in new),
        undecided_answers=tuple(
            (answer.id, answer.lang, answer.text)
            for answer, pick in zip(chosen, new, strict=True)
            if pick is None
        ),
        stale=stale,
        languages=stored_languages(ws),
        given=given,
    )


def set_language(ws: Workspace, tag: str, selection: Selection) -> LanguageChange:
    """Set the language of the selected answers to ``tag``.

    Raises:
        InputError: the tag is not a BCP 47 tag, or the selection matches no answer.
    """
    normalised = normalise_tag(tag)
    chosen = _select(ws, selection)
    return _apply(ws, chosen, [(normalised, GIVEN)] * len(chosen))


def detect_language_again(ws: Workspace, selection: Selection) -> LanguageChange:
    """Detect the language of the selected answers again, among the study's languages.

    The candidates are those of :func:`~extractor.ingest.intake.detection_languages`, so a
    concept list imported after the interviews brings its languages in. An answer
    detection cannot tell keeps the language it has, and so does one whose language a
    person gave (change those with :func:`set_language`).

    Raises:
        InputError: the selection matches no answer.
    """
    chosen = _select(ws, selection)
    todo = [answer for answer in chosen if answer.origin != GIVEN]
    default = ws.settings.workspace.default_language
    found = detect_languages([a.text for a in todo], detection_languages(ws), default)
    picks = [None if origin == "default" else (tag, origin) for tag, origin in found]
    return _apply(ws, todo, picks, given=len(chosen) - len(todo))
