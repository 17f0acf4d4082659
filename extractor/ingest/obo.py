"""Reading a concept list from an OBO flat file (``.obo``) with fastobo.

Each ``[Term]`` stanza is a concept: ``id``, ``name`` (the preferred label), ``def``,
``synonym`` lines and ``is_a`` parents. Obsolete terms are left out and counted.

Synonym scopes become SKOS label kinds (the contributor guide says why):

========  ===============================================================
EXACT     alternative: the same trait in other words
NARROW    alternative: a case of the trait, so a mention of it is one of the trait
RELATED   hidden: matched in answers, never shown as the trait's name
BROAD     hidden: as RELATED
========  ===============================================================

A synonym's language comes from its synonym type when the type's ID or description is a
BCP 47 tag (``synonymtypedef: fr "fr"``, or ``LANG_fr``); otherwise it is the
workspace's default language. A trailing note of the scope written into the text
itself, as in ``"drought resistance (exact)" EXACT``, is dropped.
"""

from __future__ import annotations

import re
from pathlib import Path

import fastobo

from extractor.errors import InputError
from extractor.ingest.concept_list import ConceptList, finish
from extractor.ingest.language import normalise_tag
from extractor.types import AliasEntry, ConceptEntry

SCOPE_KINDS = {
    "EXACT": "alternative",
    "NARROW": "alternative",
    "RELATED": "hidden",
    "BROAD": "hidden",
}
"""OBO synonym scope -> SKOS label kind of the alias."""

_LANGUAGE_LIKE = re.compile(r"^[A-Za-z]{2,3}(?:[-_](?:[A-Za-z]{2}|\d{3}))?$")
"""What a synonym type must look like to be read as a language (``fr``, ``pt-BR``), so
that a type such as ``UK_SPELLING`` is never taken for Ukrainian."""
_SCOPE_NOTE = re.compile(r"\s*\((?:exact|related|narr+ow|broad)\)\s*$", re.IGNORECASE)


def strip_scope_note(text: str) -> str:
    """Drop a trailing ``(exact)``, ``(related)``, ``(narrow)`` or ``(broad)`` from a synonym."""
    return _SCOPE_NOTE.sub("", text).strip()


def _parse(path: Path) -> fastobo.OboDoc:
    """Parse the file, turning fastobo's syntax errors into one sentence with the line."""
    try:
        return fastobo.load(str(path))
    except SyntaxError as exc:
        line = f"line {exc.lineno}" if exc.lineno else "a line"
        raise InputError(
            f"{path}, {line}: not valid OBO ({exc.msg}: {str(exc.text or '').strip()!r}); "
            "fix that stanza (a frame starts with [Term] and each line is tag: value) "
            "and import again."
        ) from exc
    except (UnicodeDecodeError, ValueError, OSError) as exc:
        raise InputError(
            f"{path} could not be read as an OBO file ({exc}); save it as UTF-8 OBO text."
        ) from exc


def _type_languages(doc: fastobo.OboDoc) -> dict[str, str]:
    """Return synonym type ID -> language tag, for types that name a language."""
    found: dict[str, str] = {}
    for clause in doc.header:
        if not isinstance(clause, fastobo.header.SynonymTypedefClause):
            continue
        type_id = str(clause.typedef)
        for candidate in (type_id, type_id.rsplit("_", 1)[-1], str(clause.description)):
            if not _LANGUAGE_LIKE.match(candidate):
                continue
            try:
                found[type_id] = normalise_tag(candidate)
                break
            except InputError:
                continue
    return found


def _term(
    frame: fastobo.term.TermFrame, languages: dict[str, str], default_lang: str
) -> tuple[ConceptEntry, list[AliasEntry]] | None:
    """Return a term's concept and aliases, or None when the term is obsolete or unnamed."""
    cid = str(frame.id)
    name, definition, parents = None, None, []
    synonyms: list[tuple[str, str, str]] = []
    for clause in frame:
        if isinstance(clause, fastobo.term.IsObsoleteClause) and clause.obsolete:
            return None
        if isinstance(clause, fastobo.term.NameClause):
            name = str(clause.name).strip()
        elif isinstance(clause, fastobo.term.DefClause):
            definition = str(clause.definition).strip() or None
        elif isinstance(clause, fastobo.term.IsAClause):
            parents.append(str(clause.term))
        elif isinstance(clause, fastobo.term.SynonymClause):
            syn = clause.synonym
            lang = languages.get(str(syn.type), default_lang) if syn.type else default_lang
            synonyms.append((strip_scope_note(str(syn.desc)), str(syn.scope), lang))
    if not name:
        return None
    aliases = [AliasEntry(cid, name, default_lang, "preferred")]
    seen = {(name.casefold(), default_lang)}
    for text, scope, lang in synonyms:
        if text and (text.casefold(), lang) not in seen:
            seen.add((text.casefold(), lang))
            aliases.append(AliasEntry(cid, text, lang, SCOPE_KINDS.get(scope, "hidden")))
    concept = ConceptEntry(
        cid, parents[0] if parents else None, definition, more_parents=tuple(parents[1:])
    )
    return concept, aliases


def load_obo(
    path: Path,
    *,
    default_lang: str = "en",
    roots: tuple[str, ...] = (),
    exclude: tuple[str, ...] = (),
) -> ConceptList:
    """Read the terms of an OBO file as a concept list (obsolete terms left out).

    Raises:
        InputError: The file is not valid OBO, has no named terms, its ``is_a`` links
            form a cycle, or a root or excluded ID is not among its terms.
    """
    doc = _parse(path)
    languages = _type_languages(doc)
    concepts: list[ConceptEntry] = []
    aliases: list[AliasEntry] = []
    left_out = {"obsolete": 0, "unnamed": 0}
    for frame in doc:
        if not isinstance(frame, fastobo.term.TermFrame):
            continue
        obsolete = any(isinstance(c, fastobo.term.IsObsoleteClause) and c.obsolete for c in frame)
        read = _term(frame, languages, default_lang)
        if read is None:
            left_out["obsolete" if obsolete else "unnamed"] += 1
            continue
        concepts.append(read[0])
        aliases += read[1]
    if not concepts:
        raise InputError(
            f"{path} has no named, current [Term] stanza; give an OBO file of trait terms."
        )
    notes = [f"{n} {why} terms were left out." for why, n in left_out.items() if n]
    return finish(path, concepts, aliases, roots=roots, exclude=exclude, notes=notes)
