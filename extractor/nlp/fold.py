"""One way to fold text for matching: case-folded, accents dropped.

Every comparison that should ignore case and accents (aliases, cue words, column headers,
language names, typed phrases, names screened out of quotes) goes through :func:`fold`, so
that "Résiste", "RESISTE" and "résiste" meet in one form everywhere.
"""

from __future__ import annotations

import unicodedata
from functools import lru_cache


@lru_cache(maxsize=1 << 17)
def fold(text: str) -> str:
    """Return ``text`` case-folded and without accents (NFKD, combining marks removed).

    ``str.casefold`` rather than ``str.lower`` so that German "ß" meets "ss" and Greek
    final sigma meets sigma (Unicode's default case folding, section 3.13 of the standard).
    Results are cached: the tagger folds every token several times, and a corpus repeats
    its words.
    """
    decomposed = unicodedata.normalize("NFKD", text.casefold())
    return "".join(c for c in decomposed if not unicodedata.combining(c))


def fold_words(text: str) -> str:
    """Return :func:`fold` of ``text`` with runs of white space made one space, trimmed."""
    return " ".join(fold(text).split())


def fold_with_offsets(text: str) -> tuple[str, list[int]]:
    """Return :func:`fold` of ``text`` and, for each folded character, its index in ``text``.

    Folding changes lengths ("ß" becomes "ss", "é" one character after its mark is
    dropped), so a match in the folded text is mapped back through these indices.
    """
    chars: list[str] = []
    where: list[int] = []
    for i, ch in enumerate(text):
        for c in fold(ch):
            chars.append(c)
            where.append(i)
    return "".join(chars), where
