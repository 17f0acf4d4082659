"""Adding interview files to a workspace (`traits add`), and what its languages get."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from extractor.ingest.intake import FileReport, add_files, detection_languages
from extractor.ingest.language import languages_outside
from extractor.jobs.inputs import question_codebook, stance_params
from extractor.models.cue_file import Cues, has_stance_cues, load_cues
from extractor.models.cues import lexicon
from extractor.models.languages import LanguageSupport, language_support
from extractor.models.stance_features import question_features
from extractor.nlp.text import primary_subtag
from extractor.workspace import store
from extractor.workspace.folder import Workspace


@dataclass(frozen=True)
class LanguageFound:
    """One language of the stored answers and what it lacks.

    Attributes:
        tag: The primary language subtag (``es`` for ``es`` and ``es-419``).
        sentences: Stored sentences in this language.
        synonyms: Aliases of the current concept list in this language.
        support: What the installed libraries give this language.
        concept_list: Whether a concept list is stored at all: before one is imported,
            no language lacks synonyms of its own (the list is what is missing).
    """

    tag: str
    sentences: int
    synonyms: int
    support: LanguageSupport
    concept_list: bool = True

    @property
    def lacks(self) -> tuple[str, ...]:
        """What the language has none of: synonyms (of a stored list), stance cues, spaCy."""
        missing = []
        if self.concept_list and not self.synonyms:
            missing.append("synonyms")
        if not self.support.stance_cues:
            missing.append("stance cues")
        if not self.support.spacy_pipeline:
            missing.append("spaCy pipeline")
        return tuple(missing)


@dataclass(frozen=True)
class AddReport:
    """What `traits add` did: the files, the languages and the questions now stored.

    ``unknown_questions`` are the stored questions whose direction is unknown (see
    :func:`unknown_questions`); ``unlisted`` the languages outside the study's that the
    new answers read as (see :func:`unlisted_languages`).
    """

    files: Sequence[FileReport]
    languages: Sequence[LanguageFound]
    concept_list: bool
    unknown_questions: Sequence[store.StoredQuestion] = ()
    unlisted: Mapping[str, int] = field(default_factory=dict)


def unknown_questions(ws: Workspace) -> tuple[store.StoredQuestion, ...]:
    """Return the stored questions that give stance no lean, most answered first.

    A question is known when the codebook gives it a direction (``open`` counts), or
    when its wording (the codebook's, else the question as stored) holds a question cue
    of its answers' language or, failing that, of another language of the lexicon.
    Survey field names (``q5_dislike``) are unknown until coded.
    """
    codebook = question_codebook(ws)
    cues = load_cues(stance_params(ws)["cues_path"])
    unknown = []
    for q in store.questions(ws.conn):
        code = codebook.get(q.question)
        if code is not None and code.direction is not None:
            continue
        if not question_features(q.question, lexicon(cues, q.lang), codebook, cues):
            unknown.append(q)
    return tuple(unknown)


def unlisted_languages(ws: Workspace, files: Sequence[FileReport]) -> dict[str, int]:
    """Return the languages outside the study's that the files' new answers read as.

    Only answers whose language was detected (not given by a language column) count: each
    was stored as one of :func:`~extractor.ingest.intake.detection_languages`, so an answer
    in a language the settings do not list was stored under a wrong tag. Tag -> answers.
    """
    texts = [
        answer.text
        for report in files
        if report.answers
        for answer in store.select_answers(ws.conn, source_path=report.path)
        if answer.origin != "column"
    ]
    return languages_outside(texts, detection_languages(ws)) if texts else {}


def stored_languages(ws: Workspace) -> tuple[LanguageFound, ...]:
    """Return the languages of the stored sentences, most sentences first.

    A language counts as having stance cues when the packaged lexicon or the
    workspace's own cue file has stance words for it; it lacks synonyms only once a
    concept list is stored.
    """
    cues = load_cues(stance_params(ws)["cues_path"])
    synonyms: dict[str, int] = {}
    for alias in store.aliases(ws.conn):
        code = primary_subtag(alias.lang)
        synonyms[code] = synonyms.get(code, 0) + 1
    counts = store.counts(ws.conn)["languages"]
    listed = store.current_concept_version(ws.conn, "trait") is not None
    return tuple(
        LanguageFound(tag, n, synonyms.get(tag, 0), _support(tag, cues), listed)
        for tag, n in sorted(counts.items(), key=lambda kv: (-kv[1], kv[0]))
    )


def _support(tag: str, cues: Cues) -> LanguageSupport:
    support = language_support(tag)
    if not support.stance_cues and has_stance_cues(cues, tag):
        return replace(support, stance_cues=True)
    return support


def add_interviews(
    ws: Workspace,
    paths: Sequence[Path],
    *,
    sheet: str | None = None,
    mapping: dict[str, Any] | None = None,
    metadata: dict[str, str] | None = None,
) -> AddReport:
    """Read, segment and store interview files, then report the stored languages.

    Args:
        ws: The open workspace.
        paths: Interview files; none to change only the metadata renames.
        sheet: Read only this sheet of a workbook.
        mapping: Explicit columns by role (respondent, answer, ...).
        metadata: Metadata column renames (stored column -> the column it is read
            as), stored with the workspace after the files are in; they apply to
            every respondent stored, from any file.

    Raises:
        InputError: a file is missing or cannot be read (nothing is stored then).
    """
    files = (
        add_files(ws, paths, sheet=sheet, mapping=mapping, coded=question_codebook(ws))
        if paths
        else []
    )
    if metadata:
        store.add_metadata_renames(ws.conn, metadata)
    return intake_report(ws, files)


def intake_report(ws: Workspace, files: Sequence[FileReport]) -> AddReport:
    """Return what `traits add` says of files just stored (also said by `traits run`)."""
    return AddReport(
        files=files,
        languages=stored_languages(ws),
        concept_list=store.current_concept_version(ws.conn, "trait") is not None,
        unknown_questions=unknown_questions(ws),
        unlisted=unlisted_languages(ws, files),
    )
