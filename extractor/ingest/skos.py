"""Reading a concept list from SKOS (W3C Simple Knowledge Organization System) with rdflib.

Turtle (``.ttl``) or RDF/XML (``.rdf``, ``.skos``, ``.xml``). Every ``skos:Concept`` is a
concept: ``skos:prefLabel``, ``skos:altLabel`` and ``skos:hiddenLabel`` become preferred,
alternative and hidden aliases in their language tags (the workspace's default language
when a literal has none); ``skos:broader`` and the inverse of ``skos:narrower`` give the
parents; ``skos:definition`` the definition. The ID is the concept's ``skos:notation``
when it has one, else the last segment of its IRI; the IRI is kept with the concept.
"""

from __future__ import annotations

import re
from collections import defaultdict
from pathlib import Path
from xml.sax import SAXException

import rdflib
from rdflib.namespace import RDF, SKOS
from rdflib.term import Literal, Node, URIRef

from extractor.errors import InputError
from extractor.ingest.concept_list import ConceptList, finish
from extractor.ingest.language import normalise_tag
from extractor.types import AliasEntry, ConceptEntry

FORMATS = {".ttl": "turtle", ".rdf": "xml", ".skos": "xml", ".xml": "xml"}
"""File suffix -> rdflib parser."""
LABEL_KINDS = (
    (SKOS.prefLabel, "preferred"),
    (SKOS.altLabel, "alternative"),
    (SKOS.hiddenLabel, "hidden"),
)
"""SKOS label property -> the kind of alias it gives."""
_FIRST_LINE = re.compile(r"^(.*?)(?:\n|$)")


def parse_graph(path: Path) -> rdflib.Graph:
    """Parse the file into an rdflib graph; a syntax error is one sentence with the place."""
    fmt = FORMATS[path.suffix.lower()]
    graph = rdflib.Graph()
    try:
        graph.parse(path, format=fmt)
    except (SyntaxError, SAXException, ValueError, UnicodeDecodeError) as exc:
        match = _FIRST_LINE.match(str(exc))
        where = match.group(1).strip() if match else ""
        name = "Turtle" if fmt == "turtle" else "RDF/XML"
        raise InputError(
            f"{path} is not valid {name} ({where}); fix the statement it names and import again."
        ) from exc
    return graph


def local_name(iri: str) -> str:
    """Return the last segment of an IRI: after ``#``, else after the last ``/``."""
    tail = iri.rsplit("#", 1)[-1] if "#" in iri else iri.rstrip("/").rsplit("/", 1)[-1]
    return tail or iri


def _concept_nodes(graph: rdflib.Graph) -> list[Node]:
    """Return the concepts: typed ``skos:Concept``, in IRI order (files have no order)."""
    return sorted(set(graph.subjects(RDF.type, SKOS.Concept)), key=str)


def _ids(graph: rdflib.Graph, nodes: list[Node], path: Path) -> dict[Node, str]:
    """Return node -> ID: the smallest ``skos:notation``, else the IRI's local name."""
    ids: dict[Node, str] = {}
    owners: dict[str, Node] = {}
    for node in nodes:
        notations = sorted(str(n) for n in graph.objects(node, SKOS.notation))
        cid = notations[0] if notations else local_name(str(node))
        if cid in owners:
            raise InputError(
                f"{path}: concepts <{owners[cid]}> and <{node}> both have the ID {cid!r}; "
                "give each a distinct skos:notation."
            )
        owners[cid] = node
        ids[node] = cid
    return ids


def _lang(literal: Node, default_lang: str, path: Path, cid: str) -> str:
    """Return a label's language tag, normalised; the default when it has none."""
    tag = literal.language if isinstance(literal, Literal) else None
    try:
        return normalise_tag(tag) if tag else default_lang
    except InputError as exc:
        raise InputError(
            f"{path}: a label of concept {cid} has the language tag {tag!r}, which is not a "
            "known BCP 47 tag; use one such as en, fr, es-419 or sw."
        ) from exc


def _aliases(
    graph: rdflib.Graph, node: Node, cid: str, default_lang: str, path: Path
) -> list[AliasEntry]:
    """Return a concept's labels as aliases; two preferred labels in one language fail."""
    out: list[AliasEntry] = []
    preferred: dict[str, str] = {}
    seen: set[tuple[str, str]] = set()
    for predicate, kind in LABEL_KINDS:  # preferred first: a repeat of it is no new alias
        for literal in sorted(graph.objects(node, predicate), key=str):
            text = str(literal).strip()
            lang = _lang(literal, default_lang, path, cid)
            if not text or (kind != "preferred" and (text.casefold(), lang) in seen):
                continue
            seen.add((text.casefold(), lang))
            if kind == "preferred":
                if lang in preferred and preferred[lang] != text:
                    # SKOS Reference, integrity condition S14: one prefLabel per language tag.
                    raise InputError(
                        f"{path}: concept {cid} has two skos:prefLabel in {lang} "
                        f"({preferred[lang]!r} and {text!r}); make one an skos:altLabel."
                    )
                preferred[lang] = text
            out.append(AliasEntry(cid, text, lang, kind))
    if not preferred:
        raise InputError(
            f"{path}: concept {cid} has no skos:prefLabel; give it one in each language."
        )
    return out


def _parents(graph: rdflib.Graph, ids: dict[Node, str]) -> dict[str, list[str]]:
    """Return concept ID -> parent IDs from ``skos:broader`` and ``skos:narrower``."""
    parents: dict[str, list[str]] = defaultdict(list)
    links = [(child, parent) for child, parent in graph.subject_objects(SKOS.broader)]
    links += [(child, parent) for parent, child in graph.subject_objects(SKOS.narrower)]
    for child, parent in sorted(links, key=str):
        if child in ids and parent in ids and ids[parent] not in parents[ids[child]]:
            parents[ids[child]].append(ids[parent])
    return parents


def _definition(graph: rdflib.Graph, node: Node, default_lang: str) -> str | None:
    """Return the definition in the default language, else the first one."""
    found = sorted(graph.objects(node, SKOS.definition), key=str)
    same = [d for d in found if isinstance(d, Literal) and d.language == default_lang]
    chosen = (same or found or [None])[0]
    return str(chosen).strip() if chosen is not None else None


def load_skos(
    path: Path,
    *,
    default_lang: str = "en",
    roots: tuple[str, ...] = (),
    exclude: tuple[str, ...] = (),
) -> ConceptList:
    """Read the concepts of a SKOS file (Turtle or RDF/XML) as a concept list.

    Raises:
        InputError: The file does not parse, holds no ``skos:Concept``, a concept has no
            preferred label or two in one language, two concepts share an ID, the
            ``skos:broader`` links form a cycle, or a root or excluded ID is unknown.
    """
    graph = parse_graph(path)
    nodes = _concept_nodes(graph)
    if not nodes:
        raise InputError(
            f"{path} holds no skos:Concept; give a SKOS concept scheme (Turtle or RDF/XML)."
        )
    ids = _ids(graph, nodes, path)
    parents = _parents(graph, ids)
    concepts: list[ConceptEntry] = []
    aliases: list[AliasEntry] = []
    for node in nodes:
        cid = ids[node]
        ps = parents.get(cid, [])
        concepts.append(
            ConceptEntry(
                cid,
                ps[0] if ps else None,
                _definition(graph, node, default_lang),
                more_parents=tuple(ps[1:]),
                iri=str(node) if isinstance(node, URIRef) else None,
            )
        )
        aliases += _aliases(graph, node, cid, default_lang, path)
    return finish(path, concepts, aliases, roots=roots, exclude=exclude)
