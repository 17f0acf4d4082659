from __future__ import annotations

from extractor.nlp.dictionary import build_dictionary
from extractor.nlp.nontrait import is_liking_verb, is_stem_only_infinitive

# An invented list: taste with a Portuguese synonym that is also "I like", drought
# with a Portuguese noun whose stem is the verb "to dry".
ALIASES = [
    ("C:taste", "taste", "en"),
    ("C:taste", "gosto", "pt"),
    ("C:taste", "sabor", "pt"),
    ("C:drought", "drought", "en"),
    ("C:drought", "seca", "pt"),
]


def concepts(text: str, lang: str) -> list[tuple[str, str | None]]:
    dictionary = build_dictionary(ALIASES)
    return [(text[s.start : s.end], s.concept) for s in dictionary.match(text, lang)]


def test_verb_of_liking_never_links_alone() -> None:
    # "Gosto da cor" = "I like the colour": the verb, not the noun "taste".
    assert concepts("Gosto da cor desta mandioca.", "pt") == []
    assert concepts("Não gosto porque apodrece logo.", "pt") == []


def test_noun_after_a_determiner_still_links() -> None:
    assert concepts("O gosto é bom.", "pt") == [("gosto", "C:taste")]
    assert concepts("Tem bom sabor.", "pt") == [("sabor", "C:taste")]


def test_infinitive_does_not_link_to_a_noun_by_its_stem() -> None:
    # "secar no sol" = "to dry in the sun", not drought.
    assert concepts("É fácil secar no sol.", "pt") == []
    assert concepts("Aguenta bem a seca.", "pt") == [("seca", "C:drought")]


def test_word_rules() -> None:
    assert is_liking_verb(["Gosto", "da", "cor"], 0, "pt")
    assert not is_liking_verb(["o", "gosto"], 1, "pt")
    assert is_liking_verb(["I", "like", "it"], 1, "en-GB")
    assert is_stem_only_infinitive("secar", ["seca"], "pt")
    assert not is_stem_only_infinitive("secar", ["secar"], "pt")
    assert not is_stem_only_infinitive("drying", ["drought"], "en")
