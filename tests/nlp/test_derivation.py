"""Stem matches that join a derived word to its root are refused; inflections still meet."""

from __future__ import annotations

import pytest
import snowballstemmer

from extractor.models.link_scoring import Scorer
from extractor.nlp import dictionary as dictionary_module
from extractor.nlp.derivation import DERIVATIONAL, derivation_clash
from extractor.nlp.dictionary import SNOWBALL_LANGUAGES, build_dictionary, stem_word
from extractor.nlp.fold import fold
from extractor.types import Sentence, Span
from tests import maize

# Roots a suffix is put on; the accented spelling of a suffix where the stemmer needs it.
ROOTS = {
    "en": ("contrast", "develop", "interest", "respons"),
    "fr": ("transport", "contrast", "absolu"),
    "es": ("contrast", "transport"),
    "pt": ("contrast", "transport"),
}
ACCENTED = {
    "fr": {"ite": "ité", "ites": "ités"},
    "es": {"acion": "ación"},
    "pt": {"avel": "ável", "ivel": "ível", "acao": "ação", "acoes": "ações", "ancia": "ância"},
}


@pytest.mark.parametrize("code", sorted(DERIVATIONAL))
def test_every_listed_suffix_is_one_the_snowball_stemmer_removes(code: str) -> None:
    # Source: the Snowball stemmers themselves (snowballstemmer, the reference
    # implementation of the algorithms on snowballstem.org): each suffix of the table,
    # put on a root, is taken off whole, so the table holds only what the stemmer strips.
    stemmer = snowballstemmer.stemmer(SNOWBALL_LANGUAGES[code])
    for suffix in DERIVATIONAL[code]:
        written = ACCENTED.get(code, {}).get(suffix, suffix)
        stems = [fold(stemmer.stemWord(root + written)) for root in ROOTS[code]]
        assert any(len(stem) <= len(root) for stem, root in zip(stems, ROOTS[code], strict=True)), (
            code,
            suffix,
            stems,
        )


@pytest.mark.parametrize(
    ("word", "alias", "lang", "clash"),
    [
        ("amarillo", "amarillamiento", "es", True),  # yellow / yellowing (a disease sign)
        ("jaune", "jaunissement", "fr", True),
        ("jaunit", "jaunissement", "fr", True),
        ("yellow", "yellowing", "en", False),  # "-ing" is an ending to Porter2 (step 1b)
        ("fertile", "fertilization", "en", True),
        ("nutritional", "nutrition", "en", False),
        ("encharca", "encharcamiento", "es", True),
        ("colores", "color", "es", False),  # inflections
        ("sabrosa", "sabroso", "es", False),
        ("noircissent", "noircit", "fr", False),
        ("climbs", "climbing", "en", False),
        ("matured", "mature", "en", False),
        ("matured", "maturity", "en", False),  # a quality noun names the same trait
        ("resiste", "resistant", "fr", False),
    ],
)
def test_clash_only_where_a_derivational_suffix_differs(
    word: str, alias: str, lang: str, clash: bool
) -> None:
    # Source: the Snowball stemmers' own output (snowballstemmer) joins every pair.
    stemmer = snowballstemmer.stemmer(SNOWBALL_LANGUAGES[lang])
    assert fold(stemmer.stemWord(word)) == fold(stemmer.stemWord(alias))
    key = stem_word(word, lang)
    assert derivation_clash([fold(word)], [fold(alias)], [key], lang) is clash


def test_a_foreign_word_is_judged_by_the_alias_side_alone() -> None:
    # A word of another language keyed with the alias's stemmer has no suffix class in
    # it: only the alias's suffix counts (snowballstemmer: both stem to "jaun").
    assert stem_word("jaunissement", "fr") == stem_word("jaune", "fr") == "jaun"
    assert derivation_clash(["jaunissement"], ["jaune"], ["jaun"], "fr")
    assert not derivation_clash(["jaunissement"], ["jaune"], ["jaun"], "fr", words_native=False)
    assert derivation_clash(["jaune"], ["jaunissement"], ["jaun"], "fr", words_native=False)


def test_languages_without_a_table_compare_by_stem_alone() -> None:
    assert not derivation_clash(["gelbe"], ["gelbfärbung"], ["gelb"], "de")


def test_dictionary_keeps_inflections_and_drops_derivations() -> None:
    aliases = [
        ("BX:1", "amarillamiento", "es"),
        ("BX:2", "color", "es"),
        ("BX:1", "jaunissement", "fr"),
    ]
    dictionary = build_dictionary(aliases)
    assert dictionary.match("El grano es amarillo.", "es") == []
    assert [s.concept for s in dictionary.match("Hay amarillamiento.", "es")] == ["BX:1"]
    assert [s.concept for s in dictionary.match("Tiene colores.", "es")] == ["BX:2"]
    assert dictionary.match("La couleur devient jaune.", "fr") == []
    assert [s.concept for s in dictionary.match("Un jaunissement des feuilles.", "fr")] == ["BX:1"]


@pytest.mark.skipif(maize.load_workspace() is None, reason=maize.SKIP_REASON)
def test_real_maize_answers_lose_no_match() -> None:
    # Real farmer answers (maize concept-testing data, CC BY 4.0; 4,800 English answers)
    # with our maize list: no English process noun there stands against its root, so the
    # guard must leave every dictionary match as stem matching alone gives it.
    loaded = maize.load_workspace()
    assert loaded is not None
    corpus, _, aliases = loaded
    guarded = build_dictionary(aliases)
    guarded_matches = [guarded.match(s.text, "en") for s in corpus]
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(dictionary_module, "derivation_clash", lambda *a, **k: False)
        plain = build_dictionary(aliases)
        plain_matches = [plain.match(s.text, "en") for s in corpus]
    assert sum(map(len, plain_matches)) > 3000
    assert guarded_matches == plain_matches


def test_the_linkers_exact_score_refuses_the_same_stem_matches() -> None:
    # The same pairs as the dictionary (snowballstemmer joins each, checked above).
    aliases = [
        ("BX:1", "amarillamiento", "es"),
        ("BX:1", "jaunissement", "fr"),
        ("BX:2", "color", "es"),
    ]
    scorer = Scorer.build(aliases, None)

    def exact(text: str, lang: str) -> set[str]:
        return scorer.exact(Sentence(0, text, lang), Span(0, len(text)))

    assert exact("amarillo", "es") == set()
    assert exact("amarillamiento", "es") == {"BX:1"}
    assert exact("jaune", "fr") == set()
    assert exact("colores", "es") == {"BX:2"}
