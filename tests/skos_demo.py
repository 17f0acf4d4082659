"""The invented demo concept list written as SKOS with rdflib, for tests.

Each concept becomes ``https://example.org/beans/trait/<ID>`` with its ID as
``skos:notation``, each row's label a ``skos:prefLabel`` in the row's language, its
synonyms ``skos:altLabel``, its parent ``skos:broader``, its definition
``skos:definition``.
"""

from __future__ import annotations

import csv
from pathlib import Path

import rdflib
from rdflib.namespace import RDF, SKOS

BASE = "https://example.org/beans/trait/"


def demo_graph(concepts_csv: Path) -> rdflib.Graph:
    """Return the concept list of a CSV (import format) as a SKOS graph."""
    graph = rdflib.Graph()
    graph.bind("skos", SKOS)
    scheme = rdflib.URIRef(BASE)
    graph.add((scheme, RDF.type, SKOS.ConceptScheme))
    with concepts_csv.open(encoding="utf-8", newline="") as handle:
        for row in csv.DictReader(handle):
            node = rdflib.URIRef(BASE + row["id"].replace(":", "_"))
            graph.add((node, RDF.type, SKOS.Concept))
            graph.add((node, SKOS.inScheme, scheme))
            graph.add((node, SKOS.notation, rdflib.Literal(row["id"])))
            lang = row.get("lang") or "en"
            graph.add((node, SKOS.prefLabel, rdflib.Literal(row["label"], lang=lang)))
            for synonym in filter(
                None, (s.strip() for s in (row.get("synonyms") or "").split("|"))
            ):
                graph.add((node, SKOS.altLabel, rdflib.Literal(synonym, lang=lang)))
            if row.get("parent"):
                parent = rdflib.URIRef(BASE + row["parent"].replace(":", "_"))
                graph.add((node, SKOS.broader, parent))
            if row.get("definition"):
                graph.add((node, SKOS.definition, rdflib.Literal(row["definition"], lang=lang)))
    return graph


def write_demo_skos(concepts_csv: Path, out: Path) -> Path:
    """Write the list as Turtle (``.ttl``) or RDF/XML (``.rdf``), by ``out``'s suffix."""
    fmt = "turtle" if out.suffix == ".ttl" else "xml"
    demo_graph(concepts_csv).serialize(destination=out, format=fmt)
    return out
