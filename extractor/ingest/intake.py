"""Getting interview files and concept lists into a workspace's store.

All files of one ``traits add`` are read and segmented before anything is written,
and then stored in one transaction: a bad file leaves the store exactly as it was.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
from collections.abc import Collection, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, NamedTuple

from extractor.errors import InputError
from extractor.ingest.concept_changes import ConceptChanges, compare_lists
from extractor.ingest.concepts import file_sha256, load_concept_list
from extractor.ingest.reader import SUFFIXES, ReadResult, metadata_conflicts, read_interviews
from extractor.nlp.text import split_sentences
from extractor.progress import track
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from extractor.workspace.settings import ConceptListSettings


@dataclass(frozen=True)
class FileReport:
    """What adding one interview file did.

    Attributes:
        path: The file as recorded in the store (see :func:`stored_path`).
        status: ``"added"``, ``"no new answers"`` or ``"unchanged"`` (same content
            as a file added before; nothing was read).
        warnings: What the reader noticed, one sentence each.
        layout: ``"long"``, ``"wide"``, ``"mixed"`` or ``"transcript"``; empty when
            the file was unchanged.
        respondents: New respondents stored; ``None`` when the file was unchanged.
        answers: New answers stored; ``None`` when the file was unchanged.
        sentences: New sentences stored; ``None`` when the file was unchanged.
    """

    path: str
    status: str
    warnings: tuple[str, ...] = ()
    layout: str = ""
    respondents: int | None = None
    answers: int | None = None
    sentences: int | None = None


@dataclass(frozen=True)
class ConceptImport:
    """What importing a concept (or variety) list did.

    Attributes:
        status: ``"imported"``; ``"unchanged"`` when this exact file, read with the same
            options, is the current list already; ``"checked"`` when a dry run
            stored nothing.
        path: The list as recorded in the store.
        concepts: How many concepts the current (or checked) list holds.
        aliases: How many aliases the current (or checked) list holds.
        warnings: What validation noticed, one sentence each.
        version: The new list version; ``None`` when nothing was stored.
        notes: What the reader left out on purpose (obsolete terms, other branches).
        changes: What the new version changes compared with the list in force.
    """

    status: str
    path: str
    concepts: int
    aliases: int
    warnings: tuple[str, ...] = ()
    version: int | None = None
    notes: tuple[str, ...] = ()
    changes: ConceptChanges = field(default_factory=ConceptChanges)


class _Pending(NamedTuple):
    """One interview file read and segmented, waiting to be stored."""

    where: str
    sha256: str
    result: ReadResult
    offsets: list[list[tuple[int, int]]]
    options: dict[str, Any]


def stored_path(ws: Workspace, path: Path) -> str:
    """Return the path as recorded in the store: relative to the workspace when inside it."""
    resolved = path.resolve()
    try:
        return resolved.relative_to(ws.root.resolve()).as_posix()
    except ValueError:
        return resolved.as_posix()


def detection_languages(ws: Workspace) -> list[str]:
    """Return the languages detection chooses among: the settings' plus the concept list's.

    Not all of lingua's 75 languages: measured on the demo answers whose language
    column is known (69 en, 91 fr, 69 es) and 10 invented Portuguese and 10 Swahili
    answers, detecting among all 75 labelled no answer wrongly but left 12 English,
    14 Spanish, 5 Portuguese and 3 Swahili answers undecided (the confidence, spread
    over 75 languages, stays under :data:`~extractor.ingest.language.MIN_CONFIDENCE`
    for short answers), while the settings' languages plus the concept list's (en fr
    es pt sw) labelled none wrongly and left 2 Spanish, 3 Portuguese and 1 Swahili
    undecided. The settings' languages alone (en fr es) stored 8 Portuguese answers
    as Spanish. A language the study expects is one it has settings or synonyms for.
    """
    tags = list(ws.settings.workspace.languages)
    listed = sorted({alias.lang for alias in store.aliases(ws.conn) if alias.lang})
    return tags + [tag for tag in listed if tag not in tags]


def _check_file(path: Path) -> None:
    """Refuse a missing path or a folder, naming it."""
    if not path.exists():
        raise InputError(f"{path} does not exist; check the path and try again.")
    if path.is_dir():
        raise InputError(f"{path} is a folder; give the interview files inside it.")


def _read(
    ws: Workspace,
    path: Path,
    where: str,
    sha: str,
    sheet: str | None,
    mapping: dict[str, Any] | None,
    coded: Collection[str],
) -> _Pending:
    """Read and segment one interview file without storing anything."""
    settings = ws.settings.workspace
    result = read_interviews(
        path,
        sheet=sheet,
        mapping=mapping,
        default_lang=settings.default_language,
        languages=detection_languages(ws),
        coded=coded,
    )
    result.warnings.extend(_stored_conflicts(ws, path, result))
    offsets = [
        split_sentences(row.answer, row.lang)
        for row in track(result.rows, f"Segmenting {path.name}", len(result.rows))
    ]
    options = {"sheet": sheet, "mapping": mapping, "layout": result.layout}
    options["encoding"] = result.encoding
    return _Pending(where, sha, result, offsets, options)


def _stored_conflicts(ws: Workspace, path: Path, result: ReadResult) -> list[str]:
    """Warn where the file gives a stored respondent other metadata than the store keeps."""
    ids = {row.respondent for row in result.rows}
    known = {
        (stored["respondent"], key): (str(value), "the workspace (added before)")
        for stored in store.respondents(ws.conn)
        if stored["respondent"] in ids
        for key, value in stored.items()
        if key not in ("respondent", "is_group")
    }
    rows = [row._asdict() for row in result.rows]
    # conflicts inside the file were told by the reader already
    return metadata_conflicts(path, rows, known, within=False)


def _store(ws: Workspace, pending: _Pending) -> FileReport:
    """Store one read file (inside the caller's transaction) and report what it added."""
    counts = store.add_source(
        ws.conn,
        path=pending.where,
        sha256=pending.sha256,
        kind=pending.result.kind,
        options=pending.options,
        rows=pending.result.rows,
        sentence_offsets=pending.offsets,
    )
    return FileReport(
        path=pending.where,
        status="added" if counts["answers"] else "no new answers",
        warnings=tuple(pending.result.warnings),
        layout=pending.result.layout,
        respondents=counts["respondents"],
        answers=counts["answers"],
        sentences=counts["sentences"],
    )


def add_files(
    ws: Workspace,
    paths: Sequence[Path],
    *,
    sheet: str | None = None,
    mapping: dict[str, Any] | None = None,
    coded: Collection[str] = (),
) -> list[FileReport]:
    """Read, segment and store interview files; return one report per file.

    A file already added with the same content is skipped; a changed file adds only
    its new answers. Unchanged files are reported first, then the stored ones, each
    group in the order given. ``coded`` are the question keys of the workspace's
    question codebook (``question_codebook`` of :mod:`extractor.jobs.inputs`): a wide
    table's column so headed is a question column, however short its answers.

    Raises:
        InputError: a file is missing or cannot be read (nothing is stored then).
    """
    mapping = mapping or dict(ws.settings.columns) or None
    pending: list[_Pending] = []
    reports: list[FileReport] = []
    for path in paths:
        _check_file(path)
        sha = file_sha256(path)
        where = stored_path(ws, path)
        if store.source_known(ws.conn, where, sha):
            reports.append(FileReport(path=where, status="unchanged"))
        else:
            pending.append(_read(ws, path, where, sha, sheet, mapping, coded))
    with store.transaction(ws.conn):
        reports += [_store(ws, item) for item in pending]
    return reports


def interview_files(folder: Path) -> list[Path]:
    """Return the interview files in a folder, sorted, skipping hidden and lock files."""
    if not folder.is_dir():
        return []
    return sorted(
        p
        for p in folder.iterdir()
        if p.is_file() and p.suffix.lower() in SUFFIXES and not p.name.startswith((".", "~$"))
    )


def imported_lists(ws: Workspace, files: Sequence[Path]) -> dict[Path, tuple[str, bool]]:
    """Return which of the files are the workspace's concept or variety lists, and which.

    A file is one when it is the list a setting names (``concepts``, ``varieties``) or
    the file of an imported list version, by its path or its SHA-256; such a file left
    in ``interviews/`` is no interview file. Path -> ("trait" or "variety", whether a
    setting names it: `traits run` re-imports only those).
    """
    named = {ws.path("concepts").resolve(): "trait", ws.path("varieties").resolve(): "variety"}
    versions = store.concept_versions(ws.conn)
    by_path = {v.path: v.kind for v in versions}
    by_sha = {v.sha256: v.kind for v in versions}
    found = {}
    for path in files:
        if path.resolve() in named:
            found[path] = (named[path.resolve()], True)
            continue
        kind = by_path.get(stored_path(ws, path))
        if kind is None and by_sha:
            kind = by_sha.get(file_sha256(path))
        if kind is not None:
            found[path] = (kind, False)
    return found


def list_fingerprint(path: Path, options: ConceptListSettings) -> str:
    """Return what identifies an imported list: the file's SHA-256, with the options if any.

    The file's own hash when the options are the defaults, so that a list imported before
    options existed is still recognised as unchanged.
    """
    sha = file_sha256(path)
    if options == ConceptListSettings():
        return sha
    given = json.dumps(dataclasses.asdict(options), sort_keys=True)
    return hashlib.sha256(f"{sha}\n{given}".encode()).hexdigest()


def import_concepts(
    ws: Workspace,
    path: Path,
    *,
    kind: str = "trait",
    options: ConceptListSettings | None = None,
    dry_run: bool = False,
) -> ConceptImport:
    """Validate and store a concept (or variety) list unless this exact version is current.

    What the new version changes is worked out before anything is stored; labels
    pointing at a removed concept are kept (the concept stays, inactive).

    Args:
        ws: The open workspace.
        path: The list: a table, an OBO or a SKOS file.
        kind: ``trait`` or ``variety``.
        options: Columns and branch to read; by default traits.toml's ``[concept_list]``
            for a trait list, none for a variety list.
        dry_run: Work out and return the changes but store nothing.

    Raises:
        InputError: The list is missing or broken (nothing is stored then).
    """
    if options is None:
        options = ws.settings.concept_list if kind == "trait" else ConceptListSettings()
    current = store.current_concept_version(ws.conn, kind)
    sha = list_fingerprint(path, options) if path.is_file() else None
    if current is not None and sha == current.sha256:
        return ConceptImport(
            status="unchanged",
            path=current.path,
            concepts=current.n_concepts,
            aliases=current.n_aliases,
        )
    loaded = load_concept_list(
        path, default_lang=ws.settings.workspace.default_language, options=options
    )
    changes = compare_lists(
        store.concepts(ws.conn, kind),
        store.aliases(ws.conn, kind),
        loaded.concepts,
        loaded.aliases,
        store.current_labels(ws.conn) if kind == "trait" else {},
    )
    version = None
    if not dry_run:
        version = store.replace_concept_list(
            ws.conn,
            kind=kind,
            path=stored_path(ws, path),
            sha256=sha or loaded.sha256,
            concepts=loaded.concepts,
            aliases=loaded.aliases,
        )
    return ConceptImport(
        status="checked" if dry_run else "imported",
        path=stored_path(ws, path),
        concepts=len(loaded.concepts),
        aliases=len(loaded.aliases),
        warnings=tuple(loaded.warnings),
        version=version,
        notes=loaded.notes,
        changes=changes,
    )
