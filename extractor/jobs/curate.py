"""Concept list curation: list concepts, suggest unlinked terms, accept aliases, export."""

from __future__ import annotations

import csv
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

from extractor.jobs.train import load_version
from extractor.models.terms import TermSuggestion
from extractor.models.terms import suggest_terms as rank_terms
from extractor.nlp.pretrained import load_space
from extractor.nlp.synonyms import Candidate, propose
from extractor.report.formats import spreadsheet_text
from extractor.report.results import mention_frame
from extractor.types import Span
from extractor.workspace import store
from extractor.workspace.files import atomic_open
from extractor.workspace.folder import Workspace


@dataclass(frozen=True)
class ConceptListing:
    """The concepts (or varieties) in force, their alias counts, and the imported versions.

    ``mentions`` and ``respondents`` count, per concept, the mentions of the newest
    model version (people's labels replacing its predictions) and the respondents who
    made them; both are None before a model has run.
    """

    concepts: Sequence[store.StoredConcept]
    alias_counts: Mapping[str, int]
    versions: Sequence[store.ConceptListVersion]
    mentions: Mapping[str, int] | None = None
    respondents: Mapping[str, int] | None = None
    model_version: str | None = None


MIN_COUNT_PERCENT = 2
"""By default a term is suggested when it has at least this percentage of the number of
respondents in mentions (at least 1): 1 for up to 50 respondents, 2 for 100, 10 for 500.
A rule of our own, so that a small study shows its terms and a large one its frequent ones."""


@dataclass(frozen=True)
class TermSuggestions:
    """Frequent unlinked terms, a display name for each concept they point at, the threshold.

    ``min_count`` is the fewest mentions a term needed to be listed.
    """

    terms: Sequence[TermSuggestion]
    names: Mapping[str, str]
    min_count: int = 1
    synonyms: Sequence[Candidate] = ()


def default_min_count(respondents: int) -> int:
    """Return the default fewest mentions of a suggested term (:data:`MIN_COUNT_PERCENT`)."""
    return max(1, -(-respondents * MIN_COUNT_PERCENT // 100))  # ceiling, in whole numbers


@dataclass(frozen=True)
class AliasAcceptance:
    """A term offered as an alias of a concept, and whether it was new."""

    term: str
    concept: str
    lang: str
    added: bool


def list_concepts(ws: Workspace, kind: str = "trait") -> ConceptListing:
    """Return the concepts of one kind (``trait`` or ``variety``) and the list versions."""
    versions = store.concept_versions(ws.conn)
    found = store.concepts(ws.conn, kind)
    per_concept: dict[str, int] = {}
    for alias in store.aliases(ws.conn, kind):
        per_concept[alias.concept_id] = per_concept.get(alias.concept_id, 0) + 1
    latest = store.latest_model(ws.conn)
    if kind != "trait" or latest is None:
        return ConceptListing(found, per_concept, versions)
    frame = mention_frame(ws, latest.version)
    linked = frame.loc[frame["concept_id"].notna()] if not frame.empty else frame
    mentions = linked.groupby("concept_id").size() if not linked.empty else {}
    people = linked.groupby("concept_id")["respondent"].nunique() if not linked.empty else {}
    return ConceptListing(
        found,
        per_concept,
        versions,
        {str(k): int(v) for k, v in dict(mentions).items()},
        {str(k): int(v) for k, v in dict(people).items()},
        latest.version,
    )


def suggest_terms(ws: Workspace, *, min_count: int | None = None) -> TermSuggestions:
    """Return frequent mentions of the newest version that no concept was linked to.

    Each concept is named by its label in the workspace's default language (else its
    first label). Without ``min_count``, the default scales with the number of
    respondents (:func:`default_min_count`).
    """
    if min_count is None:
        min_count = default_min_count(store.counts(ws.conn)["respondents"])
    version, models = load_version(ws)
    predicted = store.predictions(ws.conn, version)
    sentences = {s.id: s for s in store.sentences(ws.conn, predicted)}
    unlinked = [
        (sentences[sid], Span(m["start"], m["end"]))
        for sid, row in predicted.items()
        if sid in sentences
        for m in row.mentions
        if m.get("concept") is None
    ]
    terms = rank_terms(unlinked, models.linker_, models.clusters_, min_count=min_count)
    default = ws.settings.workspace.default_language
    names = {
        c.id: c.labels.get(default) or next(iter(c.labels.values()), "")
        for c in store.concepts(ws.conn)
    }
    return TermSuggestions(terms, names, min_count, candidate_synonyms(ws))


def candidate_synonyms(ws: Workspace) -> list[Candidate]:
    """Return words of the answers close to a concept in the pretrained space.

    Empty without the pretrained space's package or without a concept list.
    """
    space = load_space()
    aliases = [(a.concept_id, a.text, a.lang) for a in store.aliases(ws.conn, "trait")]
    if space is None or not aliases:
        return []
    corpus = [(s.text, s.lang) for s in store.sentences(ws.conn)]
    return propose(space, aliases, corpus)


def accept_alias(
    ws: Workspace, term: str, concept: str, *, lang: str | None = None, annotator: str
) -> AliasAcceptance:
    """Add a term as an annotator alias of a concept (language: the workspace's default)."""
    lang = lang or ws.settings.workspace.default_language
    added = store.add_alias(ws.conn, concept, term, lang, annotator)
    return AliasAcceptance(term, concept, lang, bool(added))


def export_concepts(ws: Workspace, out: Path | None = None) -> Path:
    """Write the concept list in its import format, one row per concept and language.

    Aliases from the imported list fill ``synonyms`` and ``hidden`` as they were; aliases
    accepted by annotators are listed apart in ``accepted_aliases`` (with who accepted
    them), for curators to review and, if they agree, move into ``synonyms``. Cells a
    spreadsheet would run as formulas start with a quote, dropped again on import.
    """
    out = out or ws.exports_dir / "concepts_with_accepted_aliases.csv"
    out.parent.mkdir(parents=True, exist_ok=True)
    concepts = {c.id: c for c in store.concepts(ws.conn)}
    rows: dict[tuple[str, str], dict[str, list[str]]] = {}
    for alias in store.aliases(ws.conn):
        key = (alias.concept_id, alias.lang)
        row = rows.setdefault(key, {"alternative": [], "hidden": [], "accepted": []})
        if alias.origin == "annotator":
            row["accepted"].append(f"{alias.text} (by {alias.added_by or 'unknown'})")
        elif alias.kind != "preferred":
            row[alias.kind].append(alias.text)
    header = ["id", "label", "lang", "synonyms", "hidden", "parent", "definition"]
    with atomic_open(out, newline="") as handle:
        writer = csv.writer(handle)
        writer.writerow([*header, "accepted_aliases"])
        for (concept_id, lang), row in sorted(rows.items()):
            concept = concepts.get(concept_id) or store.StoredConcept(concept_id, None, None, {})
            cells = [
                concept_id,
                concept.labels.get(lang, ""),
                lang,
                "|".join(row["alternative"]),
                "|".join(row["hidden"]),
                "|".join(concept.parents) or concept.parent or "",
                concept.definition or "",
                "|".join(row["accepted"]),
            ]
            # A spreadsheet opens this list for review: formula-like cells get a quote
            # (OWASP, "CSV Injection"), which the concept-list reader drops again.
            writer.writerow([spreadsheet_text(cell) for cell in cells])
    return out
