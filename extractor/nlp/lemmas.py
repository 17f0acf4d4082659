"""Dictionary forms (lemmas) of words that stemming leaves apart from their alias.

Snowball stemmers strip regular suffixes only: English "sweeter", "longer", "grown" or
"kept" keep keys of their own ("sweeter", "longer", "grown", "kept"), so the aliases
"sweet", "long season", "grow" and "keeps well" never meet them, and Swahili has no
Snowball stemmer at all. simplemma (MIT) ships lemma tables of about 50 languages,
en, fr, es, pt and sw among them, built from Wiktionary data; only its table lookup is
used here (no guessing rules for unknown words). The dictionary matcher
(:mod:`extractor.nlp.dictionary`) asks for a lemma only for a word whose own key no
alias holds.
"""

from __future__ import annotations

from functools import lru_cache

import simplemma
from simplemma.strategies import LOW_MEMORY_DICTIONARY_FACTORY, DictionaryLookupStrategy

from extractor.nlp.text import primary_subtag

# The low-memory tables: 32 MB instead of 168 MB for en, fr and es, the same lemmas, and
# 2,401 distinct maize words looked up in 0.035 s instead of 0.003 s (one-off check).
_LEMMATIZER = simplemma.Lemmatizer(
    lemmatization_strategy=DictionaryLookupStrategy(
        dictionary_factory=LOW_MEMORY_DICTIONARY_FACTORY
    )
)


@lru_cache(maxsize=1 << 18)
def lemma(word: str, lang: str) -> str | None:
    """Return the lemma of ``word`` in ``lang`` when its table gives another word, else None.

    None too for a language simplemma has no table for, and for anything but letters.
    """
    code = primary_subtag(lang) if lang else ""
    if not code or not word.isalpha():
        return None
    try:
        found = _LEMMATIZER.lemmatize(word, lang=code)
    except ValueError:  # simplemma: "Unsupported language"
        return None
    return found if found.casefold() != word.casefold() else None
