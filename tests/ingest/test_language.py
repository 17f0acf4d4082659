"""Tests for extractor.ingest.language: BCP 47 tags and language detection."""

from __future__ import annotations

import pytest

from extractor.errors import InputError
from extractor.ingest.language import (
    detect_language,
    detect_languages,
    is_well_formed,
    known_languages,
    language_name,
    languages_outside,
    normalise_tag,
    tag_from_value,
)

# RFC 5646 Appendix A "Examples of Language Tags (Informative)": the well-formed
# examples (list recalled from memory; it matches the appendix as quoted by public
# BCP 47 test suites).
RFC5646_WELL_FORMED = [
    "de", "fr", "ja", "i-enochian", "zh-Hant", "zh-Hans", "sr-Cyrl", "sr-Latn",
    "zh-cmn-Hans-CN", "cmn-Hans-CN", "zh-yue-HK", "yue-HK", "zh-Hans-CN", "sr-Latn-RS",
    "sl-rozaj", "sl-rozaj-biske", "sl-nedis", "de-CH-1901", "sl-IT-nedis",
    "hy-Latn-IT-arevela", "de-DE", "en-US", "es-419", "de-CH-x-phonebk",
    "az-Arab-x-AZE-derbend", "x-whatever", "qaa-Qaaa-QM-x-southern", "de-Qaaa",
    "sr-Latn-QM", "sr-Qaaa-RS", "en-US-u-islamcal", "zh-CN-a-myext-x-private",
    "en-a-myext-b-another",
]  # fmt: skip

# RFC 5646 Appendix A "Some Invalid Tags", with the reason the appendix gives.
RFC5646_NOT_WELL_FORMED = {
    "de-419-DE": "two region tags",
    "a-DE": "single-character subtag in primary position",
    "ar-a-aaa-b-bbb-a-ccc": "two extensions with same single-letter prefix",
}


@pytest.mark.parametrize("tag", RFC5646_WELL_FORMED, ids=RFC5646_WELL_FORMED)
def test_is_well_formed_accepts_rfc5646_examples(tag: str) -> None:
    assert is_well_formed(tag)


@pytest.mark.parametrize(
    "tag", list(RFC5646_NOT_WELL_FORMED), ids=list(RFC5646_NOT_WELL_FORMED.values())
)
def test_is_well_formed_rejects_rfc5646_invalid_examples(tag: str) -> None:
    assert not is_well_formed(tag)


@pytest.mark.parametrize(
    "tag",
    ["", "en-", "en--US", "toolonglanguage", "1", "en-x", "en-a", "de-DE-1901-1901", "x"],
    ids=["empty", "trailing-dash", "empty-subtag", "nine-letters", "digit", "bare-x",
         "bare-singleton", "repeated-variant", "x-alone"],
)  # fmt: skip
def test_is_well_formed_rejects_grammar_violations(tag: str) -> None:
    # RFC 5646 section 2.1 ABNF; a repeated variant is excluded by section 2.2.5.
    assert not is_well_formed(tag)


@pytest.mark.parametrize(
    ("given", "expected"),
    [
        ("EN", "en"),
        ("es_419", "es-419"),
        ("zh-hant-tw", "zh-Hant-TW"),
        # RFC 5646 section 2.1.1: "mn-Cyrl-MN" is the conventional form of "mN-cYrL-Mn".
        ("mN-cYrL-Mn", "mn-Cyrl-MN"),
        # RFC 5646 section 2.1.1: "en-CA-x-ca", not "EN-ca-X-CA".
        ("EN-ca-X-CA", "en-CA-x-ca"),
        ("SR-latn-rs", "sr-Latn-RS"),
        ("DE-ch-1901", "de-CH-1901"),
        ("en-us-U-ISLAMCAL", "en-US-u-islamcal"),
        ("QAA-qaaa-qm-X-SOUTHERN", "qaa-Qaaa-QM-x-southern"),
        ("I-KLINGON", "i-klingon"),
        ("EN-gb-OED", "en-GB-oed"),
        # ISO 639-2/T "fra" and ISO 639-1 "fr" are French; BCP 47 uses the shortest
        # code (RFC 5646 section 2.2.1, rule 2).
        ("fra", "fr"),
        ("spa-MX", "es-MX"),
    ],
    ids=["upper", "underscore", "script-region", "rfc-mn", "rfc-en-ca", "sr", "variant",
         "extension", "local-use", "grandfathered", "irregular", "fra", "spa"],
)  # fmt: skip
def test_normalise_tag_applies_case_conventions(given: str, expected: str) -> None:
    assert normalise_tag(given) == expected


@pytest.mark.parametrize("tag", RFC5646_WELL_FORMED, ids=RFC5646_WELL_FORMED)
def test_normalise_tag_keeps_rfc5646_examples_or_rejects_unknown_language(tag: str) -> None:
    # The appendix writes its examples in the conventional case, so a tag whose
    # primary language is known comes back unchanged; the one exception is the
    # private-use "AZE", which RFC 5646 section 2.1.1 writes in lower case.
    conventional = {"az-Arab-x-AZE-derbend": "az-Arab-x-aze-derbend"}
    primary = tag.split("-")[0].lower()
    if primary in known_languages() or primary in ("x", "i", "qaa"):
        assert normalise_tag(tag) == conventional.get(tag, tag)
    else:
        with pytest.raises(InputError, match="unknown primary language"):
            normalise_tag(tag)


@pytest.mark.parametrize(
    "tag", list(RFC5646_NOT_WELL_FORMED), ids=list(RFC5646_NOT_WELL_FORMED.values())
)
def test_normalise_tag_rejects_malformed_tag_naming_it(tag: str) -> None:
    with pytest.raises(InputError, match=f"'{tag}' is not a well-formed BCP 47 tag"):
        normalise_tag(tag)


@pytest.mark.parametrize(
    "tag", ["zz", "zz-ZZ", "bogus", "abcd"], ids=["zz", "zz-region", "five-letters", "four"]
)
def test_normalise_tag_rejects_unknown_primary_language(tag: str) -> None:
    # "zz" is not assigned in ISO 639-1 (from memory); no 4- or 5-8-letter language
    # subtag is registered (RFC 5646 section 2.2.1, rules 3 and 4).
    with pytest.raises(InputError, match="unknown primary language"):
        normalise_tag(tag)


def test_known_languages_include_lingua_and_iso_special_codes() -> None:
    # ISO 639-1 en/fr/es/pt/sw and ISO 639-3 eng/fra/spa; "und" is ISO 639-2's
    # "undetermined" (from memory).
    assert {"en", "fr", "es", "pt", "sw", "eng", "fra", "spa", "und"} <= known_languages()
    assert "xx" not in known_languages()


@pytest.mark.parametrize(
    ("value", "expected"),
    [("English", "en"), ("Français", "fr"), ("español", "es"), ("Swahili", "sw"),
     ("pt_BR", "pt-BR")],
    ids=["english", "francais", "espanol", "swahili", "tag"],
)  # fmt: skip
def test_tag_from_value_accepts_language_names(value: str, expected: str) -> None:
    assert tag_from_value(value) == expected


CLEAR = {
    "en": "We prefer this variety because it cooks quickly and the porridge tastes sweet.",
    "fr": "Nous préférons cette variété parce qu'elle cuit vite et que la bouillie est sucrée.",
    "es": "Preferimos esta variedad porque se cocina rápido y la mazamorra sabe dulce.",
}


@pytest.mark.parametrize("lang", list(CLEAR), ids=list(CLEAR))
def test_detect_language_finds_clear_sentences(lang: str) -> None:
    # Plain sentences written for this test by a speaker of each language.
    assert detect_language(CLEAR[lang], ["en", "fr", "es"], "en") == (lang, "detected")


def test_detect_language_returns_candidate_tag_as_given() -> None:
    assert detect_language(CLEAR["es"], ["en", "es-419"], "en") == ("es-419", "detected")


def test_detect_language_uses_default_set_without_candidates() -> None:
    assert detect_language(CLEAR["fr"], None, "en") == ("fr", "detected")


@pytest.mark.parametrize(
    "text",
    ["Yes.", "Très bien", "12 34 56 78", ""],
    ids=["one-word", "two-words", "digits", "empty"],
)
def test_detect_language_falls_back_to_default_for_short_text(text: str) -> None:
    assert detect_language(text, ["en", "fr", "es"], "sw") == ("sw", "default")


def test_detect_language_falls_back_with_single_candidate() -> None:
    assert detect_language(CLEAR["fr"], ["en"], "en") == ("en", "default")


def test_detect_languages_matches_single_calls() -> None:
    texts = [CLEAR["en"], "ok", CLEAR["es"], CLEAR["fr"]]
    expected = [detect_language(t, ["en", "fr", "es"], "en") for t in texts]
    assert detect_languages(texts, ["en", "fr", "es"], "en") == expected
    assert [tag for tag, _ in expected] == ["en", "en", "es", "fr"]


@pytest.mark.parametrize(
    ("tag", "expected"),
    [("ha", "ha"), ("rw", "rw"), ("wo", "wo"), ("hau", "ha"), ("cmn", "cmn"), ("qu", "qu")],
    ids=["hausa", "kinyarwanda", "wolof", "hausa-639-3", "mandarin", "quechua"],
)
def test_normalise_tag_knows_languages_beyond_the_detector(tag: str, expected: str) -> None:
    # ISO 639-3 code tables (SIL, the registration authority), as shipped by pycountry;
    # the pairs hau/ha are the standard's own ISO 639-1 equivalents.
    assert normalise_tag(tag) == expected


def test_languages_outside_counts_answers_in_languages_the_study_does_not_list() -> None:
    # Invented answers in Portuguese and Swahili (ISO 639-1 pt, sw); lingua's bundled
    # models are the reference that tells them apart.
    portuguese = [
        "Não gosto porque apodrece logo depois da colheita.",
        "A farinha sai branca e vende bem no mercado.",
    ]
    swahili = ["Sipendi kwa sababu mizizi inaoza haraka baada ya kuvuna."]
    english = ["It cooks fast and the children like the taste."]
    texts = portuguese + swahili + english + ["Ok."]
    assert languages_outside(texts, ["en", "fr", "es"]) == {"pt": 2, "sw": 1}
    # Listed languages are not outside, whatever their subtags; nothing else counts.
    assert languages_outside(texts, ["en", "pt-MZ", "sw"]) == {}
    assert languages_outside(english, ["en", "fr"]) == {}


def test_language_name_is_the_english_name_of_the_primary_subtag() -> None:
    # ISO 639-1: pt Portuguese, sw Swahili; a tag lingua does not know stays as given.
    assert language_name("pt-BR") == "Portuguese"
    assert language_name("sw") == "Swahili"
    assert language_name("qaa") == "qaa"
