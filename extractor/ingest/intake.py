"""Getting interview files and concept lists into a workspace's store.

All files of one ``traits add`` are read and segmented before anything is written,
and then stored in one transaction: a bad file leaves the store exactly as it was.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import Any

from extractor.errors import InputError
from extractor.ingest.concepts import file_sha256, load_concept_list
from extractor.ingest.reader import SUFFIXES, read_interviews
from extractor.nlp.text import split_sentences
from extractor.progress import track
from extractor.workspace import store
from extractor.workspace.folder import Workspace


def stored_path(ws: Workspace, path: Path) -> str:
    """Return the path as recorded in the store: relative to the workspace when inside it."""
    resolved = path.resolve()
    try:
        return resolved.relative_to(ws.root.resolve()).as_posix()
    except ValueError:
        return resolved.as_posix()


def add_files(
    ws: Workspace,
    paths: Sequence[Path],
    *,
    sheet: str | None = None,
    mapping: dict[str, Any] | None = None,
) -> list[dict[str, Any]]:
    """Read, segment and store interview files; return one report per file.

    A file already added with the same content is skipped; a changed file adds only
    its new answers.

    Raises:
        InputError: a file is missing or cannot be read (nothing is stored then).
    """
    settings = ws.settings["workspace"]
    mapping = mapping or dict(ws.settings.get("columns") or {}) or None
    pending = []
    reports = []
    for path in paths:
        if not path.exists():
            raise InputError(f"{path} does not exist; check the path and try again.")
        if path.is_dir():
            raise InputError(f"{path} is a folder; give the interview files inside it.")
        sha = file_sha256(path)
        where = stored_path(ws, path)
        if store.source_known(ws.conn, where, sha):
            reports.append({"path": where, "status": "unchanged", "warnings": []})
            continue
        result = read_interviews(
            path,
            sheet=sheet,
            mapping=mapping,
            default_lang=settings["default_language"],
            languages=settings["languages"],
        )
        offsets = [
            split_sentences(row["answer"], row["lang"])
            for row in track(result.rows, f"Segmenting {path.name}", len(result.rows))
        ]
        options = {"sheet": sheet, "mapping": mapping, "layout": result.layout}
        options["encoding"] = result.encoding
        pending.append((where, sha, result, offsets, options))
    with store.transaction(ws.conn):
        for where, sha, result, offsets, options in pending:
            counts = store.add_source(
                ws.conn,
                path=where,
                sha256=sha,
                kind=result.kind,
                options=options,
                rows=result.rows,
                sentence_offsets=offsets,
            )
            status = "added" if counts["answers"] else "no new answers"
            reports.append(
                {
                    "path": where,
                    "status": status,
                    "layout": result.layout,
                    "warnings": list(result.warnings),
                }
                | counts
            )
    return reports


def interview_files(folder: Path) -> list[Path]:
    """Return the interview files in a folder, sorted, skipping hidden and lock files."""
    if not folder.is_dir():
        return []
    return sorted(
        p
        for p in folder.iterdir()
        if p.is_file()
        and p.suffix.lower() in SUFFIXES
        and not p.name.startswith((".", "~$"))
    )


def import_concepts(ws: Workspace, path: Path, *, kind: str = "trait") -> dict[str, Any]:
    """Validate and store a concept (or variety) list unless this exact version is current.

    Returns:
        A report: ``status`` ("imported" or "unchanged"), counts and warnings.
    """
    current = store.current_concept_version(ws.conn, kind)
    sha = file_sha256(path) if path.exists() else None
    if current is not None and sha == current["sha256"]:
        return {
            "status": "unchanged",
            "path": current["path"],
            "warnings": [],
            "concepts": current["n_concepts"],
            "aliases": current["n_aliases"],
        }
    loaded = load_concept_list(path, default_lang=ws.settings["workspace"]["default_language"])
    version = store.replace_concept_list(
        ws.conn,
        kind=kind,
        path=stored_path(ws, path),
        sha256=loaded.sha256,
        concepts=loaded.concepts,
        aliases=loaded.aliases,
    )
    return {
        "status": "imported",
        "version": version,
        "path": stored_path(ws, path),
        "concepts": len(loaded.concepts),
        "aliases": len(loaded.aliases),
        "warnings": loaded.warnings,
    }
