"""Dictionary matching: inflection, accents, case, longest match, multi-word, languages."""

from __future__ import annotations

import json
from collections.abc import Iterable
from pathlib import Path

import pytest
from spacy.matcher import PhraseMatcher
from spacy.tokens import Doc
from spacy.vocab import Vocab

from extractor.errors import InputError
from extractor.nlp.dictionary import Dictionary, _matches, build_dictionary, stem_word
from extractor.nlp.text import tokenize
from extractor.types import Sentence
from tests.mams import SKIP_REASON, load_mams

# Invented trait IDs and aliases.
ALIASES = [
    ("TX:0001", "cook", "en"),
    ("TX:0002", "cooking time", "en"),
    ("TX:0003", "épaisseur", "fr"),
    ("TX:0004", "grain", "en"),
    ("TX:0005", "grain size", "en"),
    ("TX:0006", "large grain size", "en"),
    ("TX:0007", "sabor", "es"),
    ("TX:0008", "taste", "en"),
]


@pytest.fixture(scope="module")
def dictionary() -> Dictionary:
    return build_dictionary(ALIASES)


def matched(dictionary: Dictionary, text: str, lang: str) -> list[tuple[str, str | None]]:
    return [(text[s.start : s.end], s.concept) for s in dictionary.match(text, lang)]


@pytest.mark.parametrize(
    "text",
    ["She cooks it", "We are cooking it", "It cooked well"],
    ids=["cooks", "cooking", "cooked"],
)
def test_match_tolerates_inflection(dictionary: Dictionary, text: str) -> None:
    assert [c for _, c in matched(dictionary, text, "en")] == ["TX:0001"]


@pytest.mark.parametrize(
    ("text", "lang"),
    [("L'epaisseur du grain", "fr"), ("L'ÉPAISSEUR du grain", "fr"), ("la Épaisseur", "fr")],
    ids=["no-accent", "upper-case", "title-case"],
)
def test_match_ignores_accents_and_case(dictionary: Dictionary, text: str, lang: str) -> None:
    assert "TX:0003" in [c for _, c in matched(dictionary, text, lang)]


def test_match_longest_wins_without_overlap(dictionary: Dictionary) -> None:
    text = "Farmers like the large grain sizes of Tolvane."
    assert matched(dictionary, text, "en") == [("large grain sizes", "TX:0006")]


def test_match_multi_word_alias_and_its_parts(dictionary: Dictionary) -> None:
    text = "The cooking time is short and the grain is white."
    assert matched(dictionary, text, "en") == [("cooking time", "TX:0002"), ("grain", "TX:0004")]


def test_match_offsets_point_into_the_text(dictionary: Dictionary) -> None:
    text = "  Cooking   Time matters"
    (span,) = dictionary.match(text, "en")
    assert text[span.start : span.end] == "Cooking   Time"
    assert span.stance is None


def test_match_finds_other_language_alias_inflected(dictionary: Dictionary) -> None:
    # Code-switching: a Spanish word, in Spanish plural, inside an English answer.
    assert matched(dictionary, "The sabores were fine", "en") == [("sabores", "TX:0007")]


def test_match_prefers_alias_of_sentence_language() -> None:
    d = build_dictionary([("TX:0101", "color", "es"), ("TX:0102", "color", "en")])
    assert [s.concept for s in d.match("the color", "en")] == ["TX:0102"]
    assert [s.concept for s in d.match("el color", "es")] == ["TX:0101"]


def test_match_ambiguity_does_not_depend_on_order() -> None:
    a = build_dictionary([("TX:0202", "hardness", "en"), ("TX:0201", "hardness", "en")])
    b = build_dictionary([("TX:0201", "hardness", "en"), ("TX:0202", "hardness", "en")])
    assert a.match("hardness", "en") == b.match("hardness", "en")


def test_match_language_without_stemmer_uses_normalised_form() -> None:
    # Swahili (sw) has no Snowball stemmer in snowballstemmer 3.x: exact forms only.
    d = build_dictionary([("TX:0301", "ladha", "sw")])
    assert [s.concept for s in d.match("Ladha nzuri", "sw")] == ["TX:0301"]
    assert d.match("Maladha nzuri", "sw") == []


def test_match_empty_text_and_empty_dictionary(dictionary: Dictionary) -> None:
    assert dictionary.match("", "en") == []
    assert build_dictionary([]).match("cook", "en") == []


def test_match_many_equals_match(dictionary: Dictionary) -> None:
    sentences = [Sentence(1, "cooking time", "en"), Sentence(2, "sabor", "es")]
    assert dictionary.match_many(sentences) == [dictionary.match(s.text, s.lang) for s in sentences]


@pytest.mark.parametrize(
    ("concept", "alias"), [("", "cook"), ("TX:1", "  ")], ids=["no-concept", "blank-alias"]
)
def test_build_dictionary_rejects_empty_values(concept: str, alias: str) -> None:
    with pytest.raises(InputError, match="empty"):
        build_dictionary([(concept, alias, "en")])


# Outside check: pairs from the sample vocabulary published with the Snowball English
# (Porter2) and French stemmers on snowballstem.org (from memory).
SNOWBALL_EXAMPLES = [
    ("consign", "en", "consign"),
    ("consigned", "en", "consign"),
    ("consignment", "en", "consign"),
    ("consistency", "en", "consist"),
    ("consolation", "en", "consol"),
    ("knightly", "en", "knight"),
    ("kneeling", "en", "kneel"),
    ("continuellement", "fr", "continuel"),
    ("continuait", "fr", "continu"),
    ("continuer", "fr", "continu"),
]


@pytest.mark.parametrize(
    ("word", "lang", "stem"), SNOWBALL_EXAMPLES, ids=[w for w, _, _ in SNOWBALL_EXAMPLES]
)
def test_stem_word_agrees_with_snowball_vocabulary(word: str, lang: str, stem: str) -> None:
    assert stem_word(word, lang) == stem


class _SpacyRuns:
    """spaCy's PhraseMatcher over the alias keys of one of our matchers (the reference)."""

    def __init__(self, entries: Iterable[tuple[str, ...]]) -> None:
        self.vocab = Vocab()
        self.matcher = PhraseMatcher(self.vocab)
        self.labels: dict[str, tuple[str, ...]] = {}
        for n, alias_keys in enumerate(entries):
            self.labels[f"A{n}"] = alias_keys
            self.matcher.add(f"A{n}", [self._doc(list(alias_keys))])

    def _doc(self, words: list[str]) -> Doc:
        return Doc(self.vocab, words=words)

    def __call__(self, keys: list[str]) -> set[tuple[int, int, tuple[str, ...]]]:
        found = self.matcher(self._doc(keys)) if keys else []
        return {(a, b, self.labels[self.vocab.strings[m]]) for m, a, b in found}


def test_matching_finds_the_runs_spacy_phrase_matcher_finds() -> None:
    # Outside check: spaCy's PhraseMatcher (general-purpose reference library) over the
    # same token keys finds the same alias runs, overlapping and nested ones included,
    # on open data (MAMS test sentences, aliases = their aspect terms) and the demo.
    mams = load_mams("test")
    if mams is None:
        pytest.skip(SKIP_REASON)
    root = Path(__file__).resolve().parents[2] / "sample_interviews"
    demo = [json.loads(line) for line in (root / "gold.jsonl").read_text("utf-8").splitlines()]
    records = mams[:400] + demo
    aliases = [
        (f"T{n}", r["sentence"][m["start"] : m["end"]], r["lang"])
        for n, r in enumerate(records)
        for m in r["mentions"]
    ] + ALIASES
    d = build_dictionary(aliases)
    combos = [(lang, own) for lang in ("en", "fr", "es", "") for own in (False, True)]
    matchers = [d._matcher(lang, own) for lang, own in combos]
    references = [_SpacyRuns(m.entries) for m in matchers]
    runs: list[tuple[int, int]] = []
    for r in records:
        words = [r["sentence"][a:b] for a, b in tokenize(r["sentence"], r["lang"])]
        for (lang, _), (entries, lengths, _), spacy_runs in zip(
            combos, matchers, references, strict=True
        ):
            keys = [stem_word(w, lang) for w in words]
            ours = {(a, b, tuple(keys[a:b])) for a, b, _ in _matches(keys, entries, lengths)}
            assert ours == spacy_runs(keys), r["sentence"]
            runs += [(a, b) for a, b, _ in ours]
    # The check saw many matches, multi-word and overlapping ones among them.
    assert len(runs) > 1000 and sum(b - a > 1 for a, b in runs) > 100


# ------------------------------------------------------------------ words inserted in an alias
# Insertion is one of the term variants of the term-variation literature (Jacquemin's
# FASTR: "insertion", "coordination", "permutation"; from memory): a copula, an
# intensifier or a qualifier put inside a multi-word term leaves the term.


@pytest.mark.parametrize(
    ("alias", "lang", "text", "expected"),
    [
        ("sauce épaisse", "fr", "La sauce est épaisse.", "sauce est épaisse"),
        ("grano grande", "es", "El grano es muy grande.", "grano es muy grande"),
        ("resistant to diseases", "en", "It is resistant to crop diseases.",
         "resistant to crop diseases"),
    ],
    ids=["copula-fr", "copula-intensifier-es", "qualifier-en"],
)  # fmt: skip
def test_match_multi_word_alias_with_words_inserted(
    alias: str, lang: str, text: str, expected: str
) -> None:
    d = build_dictionary([("TX:0401", alias, lang)])
    assert matched(d, text, lang) == [(expected, "TX:0401")]


@pytest.mark.parametrize(
    ("text", "why"),
    [
        ("La sauce, dit-elle, est vraiment très épaisse.", "more than MAX_GAP words between"),
        ("La sauce est claire; épaisse, non.", "punctuation between"),
        ("Épaisse est la sauce.", "the words out of order"),
    ],
    ids=["too-far", "punctuation", "order"],
)
def test_match_inserted_words_have_limits(text: str, why: str) -> None:
    d = build_dictionary([("TX:0401", "sauce épaisse", "fr")])
    assert d.match(text, "fr") == [], why


def test_contiguous_match_claims_its_words_before_a_gapped_one() -> None:
    # "resistant to diseases" with "drought and" inserted would swallow the drought trait.
    d = build_dictionary(
        [("TX:0501", "resistant to drought", "en"), ("TX:0502", "resistant to diseases", "en")]
    )
    assert matched(d, "Resistant to drought and diseases", "en") == [
        ("Resistant to drought", "TX:0501")
    ]


def test_gapped_matches_agree_with_labels_of_real_answers(monkeypatch: pytest.MonkeyPatch) -> None:
    # Open data: the maize verbatims (tests/maize.py; real answers, CC BY 4.0), our
    # concept list and our labels of 300 of them. Insertions are rare in these short
    # answers (about 30 in 4,800: "Produces Big Maize Cobs" for "big cobs", "Matures
    # Quite Early"); those in the labelled answers are labelled mentions of that concept.
    from extractor.nlp import dictionary as module
    from tests import maize

    loaded = maize.load_workspace()
    if loaded is None:
        pytest.skip(maize.SKIP_REASON)
    corpus, labelled, aliases = loaded
    with_gaps = build_dictionary(aliases).match_many(corpus)
    monkeypatch.setattr(module, "MAX_GAP", 0)
    without = build_dictionary(aliases).match_many(corpus)
    added = [set(ours) - set(plain) for ours, plain in zip(with_gaps, without, strict=True)]
    assert sum(len(a) for a in added) >= 20
    checked = 0
    for g in labelled:
        for m in added[g["row"]]:
            checked += 1
            assert any(
                s["start"] < m.end and m.start < s["end"] and s.get("concept") == m.concept
                for s in g["spans"]
            ), corpus[g["row"]].text
    assert checked >= 2
