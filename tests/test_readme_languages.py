"""The README's language table agrees with the code and with the libraries it names."""

from __future__ import annotations

import json
import re
from pathlib import Path

import snowballstemmer
import spacy
from lingua import Language

from extractor.models.cue_file import CUES_PATH
from extractor.models.languages import language_support
from extractor.nlp.dictionary import SNOWBALL_LANGUAGES

README = Path(__file__).resolve().parents[1] / "README.md"
HEADER = "| language | tokenizer | stemmer | stance cues | detection |"


def _table() -> dict[str, list[str]]:
    """Return the README language table's rows by language code."""
    lines = README.read_text(encoding="utf-8").splitlines()
    start = lines.index(HEADER) + 2  # skip the header and its rule
    rows: dict[str, list[str]] = {}
    for line in lines[start:]:
        if not line.startswith("|"):
            break
        cells = [c.strip() for c in line.strip("|").split("|")]
        code = re.search(r"`([a-z]{2,3})`", cells[0])
        assert code, f"no language code in {line!r}"
        rows[code.group(1)] = cells[1:]
    return rows


def _spacy_has(code: str) -> bool:
    try:
        spacy.util.get_lang_class(code)  # spaCy's registry of languages
    except ImportError:
        return False
    return True


# Snowball algorithm names of ISO 639-1 codes, from snowballstemmer.algorithms() (the
# Snowball project's own list of stemmers) and the ISO 639-1 code table.
_SNOWBALL_NAMES = {
    "en": "english", "fr": "french", "es": "spanish", "pt": "portuguese", "ar": "arabic",
    "hi": "hindi", "de": "german", "it": "italian", "nl": "dutch", "ru": "russian",
}  # fmt: skip


def test_readme_language_table_lists_the_study_languages() -> None:
    assert {"en", "fr", "es", "pt", "sw"} <= set(_table())


def test_readme_language_table_agrees_with_the_libraries() -> None:
    cues = json.loads(CUES_PATH.read_text(encoding="utf-8"))
    lingua_codes = {lang.iso_code_639_1.name.lower() for lang in Language.all()}
    for code, (tokenizer, stemmer, stance, detection) in _table().items():
        assert (f"`{code}`" in tokenizer) == _spacy_has(code), code
        snowball = _SNOWBALL_NAMES.get(code) in snowballstemmer.algorithms()
        assert stemmer.startswith("yes") == snowball, code
        has_cues = any(cues.get(code, {}).get(c) for c in ("liked", "disliked", "wanted"))
        assert stance.startswith("yes") == has_cues, code
        assert detection.startswith("yes") == (code in lingua_codes), code


def test_readme_language_table_agrees_with_the_code() -> None:
    for code, (tokenizer, stemmer, stance, detection) in _table().items():
        support = language_support(code)
        assert (f"`{code}`" in tokenizer) == support.spacy_pipeline, code
        assert stemmer.startswith("yes") == support.stemmer, code
        assert stance.startswith("yes") == support.stance_cues, code
        assert detection.startswith("yes") == support.detection, code


def test_every_stemmer_the_code_names_is_one_snowballstemmer_ships() -> None:
    assert set(SNOWBALL_LANGUAGES.values()) <= set(snowballstemmer.algorithms())
