"""SKOS concept lists (Turtle and RDF/XML) read with rdflib."""

from __future__ import annotations

from pathlib import Path

import pytest
import rdflib
from rdflib.compare import isomorphic

from extractor.errors import InputError
from extractor.ingest.concepts import load_concept_list
from extractor.ingest.skos import local_name
from extractor.workspace.settings import ConceptListSettings
from tests.skos_demo import write_demo_skos

DEMO_CSV = Path(__file__).resolve().parents[2] / "sample_interviews" / "concepts.csv"

# After the W3C SKOS Primer (W3C Working Group Note, 18 August 2009), sections 2.2 and
# 2.3: "animals" with preferred and alternative labels in English and French, a hidden
# misspelling, and "mammals" as a narrower concept. Typed from memory; the prefLabel of
# ex:mammals and the definition are added here so that every concept has a label.
PRIMER = """
@prefix skos: <http://www.w3.org/2004/02/skos/core#> .
@prefix rdf: <http://www.w3.org/1999/02/22-rdf-syntax-ns#> .
@prefix ex: <http://www.example.com/> .

ex:animals rdf:type skos:Concept;
  skos:prefLabel "animals"@en;
  skos:altLabel "creatures"@en;
  skos:prefLabel "animaux"@fr;
  skos:altLabel "bêtes"@fr;
  skos:hiddenLabel "aminals"@en;
  skos:definition "living organisms that feed on organic matter"@en.

ex:mammals rdf:type skos:Concept;
  skos:prefLabel "mammals"@en;
  skos:broader ex:animals.
"""


def _write(tmp_path: Path, text: str, name: str = "list.ttl") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_skos_primer_example_gives_labels_kinds_languages_and_broader(tmp_path: Path) -> None:
    loaded = load_concept_list(_write(tmp_path, PRIMER))
    assert {(a.concept_id, a.text, a.lang, a.kind) for a in loaded.aliases} == {
        ("animals", "animals", "en", "preferred"),
        ("animals", "creatures", "en", "alternative"),
        ("animals", "animaux", "fr", "preferred"),
        ("animals", "bêtes", "fr", "alternative"),
        ("animals", "aminals", "en", "hidden"),
        ("mammals", "mammals", "en", "preferred"),
    }
    concepts = {c.id: c for c in loaded.concepts}
    assert concepts["mammals"].parents == ("animals",)
    assert concepts["animals"].iri == "http://www.example.com/animals"
    assert concepts["animals"].definition == "living organisms that feed on organic matter"


def test_skos_narrower_gives_the_same_parent_as_broader(tmp_path: Path) -> None:
    text = PRIMER.replace("skos:broader ex:animals.", 'skos:altLabel "beasts"@en.')
    text += "ex:animals skos:narrower ex:mammals .\n"  # SKOS Primer 2.3: the inverse link
    concepts = {c.id: c for c in load_concept_list(_write(tmp_path, text)).concepts}
    assert concepts["mammals"].parents == ("animals",)


def test_skos_notation_is_the_id(tmp_path: Path) -> None:
    text = PRIMER + 'ex:animals skos:notation "ANI:1" .\n'
    loaded = load_concept_list(_write(tmp_path, text))
    assert {c.id for c in loaded.concepts} == {"ANI:1", "mammals"}
    assert next(c for c in loaded.concepts if c.id == "mammals").parents == ("ANI:1",)


def test_local_name_after_hash_or_slash() -> None:
    assert local_name("http://example.org/t#BTX1") == "BTX1"
    assert local_name("http://example.org/t/BTX1/") == "BTX1"


def test_skos_demo_list_round_trips_through_rdflib_formats(tmp_path: Path) -> None:
    # rdflib writes the demo list as Turtle, parses it back and writes it as RDF/XML:
    # the graphs are isomorphic (rdflib.compare), and both files give the CSV's list.
    ttl = write_demo_skos(DEMO_CSV, tmp_path / "demo.ttl")
    graph = rdflib.Graph().parse(ttl, format="turtle")
    xml = tmp_path / "demo.rdf"
    graph.serialize(destination=xml, format="xml")
    again = rdflib.Graph().parse(xml, format="xml")
    assert isomorphic(graph, again)
    from_csv = load_concept_list(DEMO_CSV)
    for path in (ttl, xml):
        loaded = load_concept_list(path)
        assert _content(loaded) == _content(from_csv)


def _content(loaded: object) -> tuple[set, set]:
    concepts = {(c.id, c.parents, c.definition) for c in loaded.concepts}  # type: ignore[attr-defined]
    aliases = {(a.concept_id, a.text, a.lang, a.kind) for a in loaded.aliases}  # type: ignore[attr-defined]
    return concepts, aliases


def test_skos_root_keeps_a_branch(tmp_path: Path) -> None:
    ttl = write_demo_skos(DEMO_CSV, tmp_path / "demo.ttl")
    loaded = load_concept_list(ttl, options=ConceptListSettings(roots=("BTX:0003",)))
    assert {c.id for c in loaded.concepts} == {"BTX:0003", "BTX:0009"}  # taste, bitterness


@pytest.mark.parametrize(
    ("name", "text", "message"),
    [
        ("bad.ttl", PRIMER.replace("skos:broader ex:animals.", "skos:broader ex:animals"),
         r"bad\.ttl is not valid Turtle"),
        ("bad.rdf", '<?xml version="1.0"?><rdf:RDF xmlns:rdf="http://www.w3.org/1999/02/'
         '22-rdf-syntax-ns#"><rdf:Description rdf:about="x"></rdf:RDF>',
         r"bad\.rdf is not valid RDF/XML"),
        ("cycle.ttl", PRIMER + "ex:animals skos:broader ex:mammals .\n",
         r"cycle \((animals|mammals) -> (animals|mammals) -> (animals|mammals)\)"),
        ("two.ttl", PRIMER + 'ex:animals skos:prefLabel "beasts"@en .\n',
         r"two skos:prefLabel in en"),
        ("none.ttl", "@prefix ex: <http://www.example.com/> .\nex:a ex:b ex:c .\n",
         r"holds no skos:Concept"),
    ],
    ids=["turtle-syntax", "rdfxml-syntax", "broader-cycle", "two-preferred", "no-concept"],
)  # fmt: skip
def test_skos_bad_files_are_one_sentence(
    tmp_path: Path, name: str, text: str, message: str
) -> None:
    with pytest.raises(InputError, match=message) as caught:
        load_concept_list(_write(tmp_path, text, name))
    assert "\n" not in str(caught.value)
