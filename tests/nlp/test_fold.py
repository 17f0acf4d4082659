"""Tests of extractor.nlp.fold against the Unicode standard's own tables."""

from __future__ import annotations

import unicodedata

import pytest

from extractor.nlp.fold import fold, fold_with_offsets, fold_words


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # Unicode CaseFolding.txt: U+00DF LATIN SMALL LETTER SHARP S folds to "ss" (full folding)
        ("Straße", "strasse"),
        # Unicode CaseFolding.txt: U+03A3 and U+03C2 (final sigma) both fold to U+03C3
        ("ΟΔΟΣ", "οδοσ"),
        ("οδος", "οδοσ"),
        # canonical decomposition (UnicodeData.txt): U+00E9 = U+0065 U+0301, the mark is dropped
        ("Résiste", "resiste"),
        ("RÉSISTE", "resiste"),
        # compatibility decomposition: U+FB01 LATIN SMALL LIGATURE FI is "fi"
        ("\ufb01ne", "fine"),
    ],
    ids=["sharp-s", "capital-sigma", "final-sigma", "acute", "capital-acute", "ligature"],
)
def test_fold_follows_unicode_case_folding_and_decomposition(text: str, expected: str) -> None:
    assert fold(text) == expected


def test_fold_matches_composed_and_decomposed_input() -> None:
    composed = "Mandioca não é amarga"
    decomposed = unicodedata.normalize("NFD", composed)
    assert composed != decomposed
    assert fold(composed) == fold(decomposed)


def test_fold_words_squeezes_white_space() -> None:
    assert fold_words("  Bien   SECO\t y\nduro ") == "bien seco y duro"


def test_fold_with_offsets_maps_each_folded_char_back() -> None:
    text = "Eßé x"
    folded, where = fold_with_offsets(text)
    assert folded == fold(text) == "esse x"
    assert where == [0, 1, 1, 2, 3, 4]
