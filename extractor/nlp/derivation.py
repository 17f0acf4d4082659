"""Whether two words that share a Snowball stem differ by a derivational suffix.

The dictionary and the linker's exact score compare words by their Snowball stem, so
that inflections meet ("colores" and "color", "matured" and "mature"). The stemmer also
removes *derivational* suffixes, which make a word of another meaning from the same root:
"amarillamiento" (yellowing, a disease sign) and "amarillo" (yellow) both stem to
"amarill", "jaunissement" and "jaune" to "jaun". A word that differs from an alias word
only by its stem then stood for the alias's concept: the colour of a bean was read as
disease resistance (DEVELOPERS.md, "Spans and links of the demo triples").

:func:`derivation_clash` tells such pairs apart with the Snowball algorithms' own
division of labour: each algorithm removes derivational suffixes in a step of its own
(step 1, "standard suffix removal", for the Romance languages; steps 2 to 4 for English)
before or instead of the verb and noun endings. :data:`DERIVATIONAL` keeps, of those
suffixes as written in the algorithm descriptions (snowballstem.org, "The English
(Porter2) stemming algorithm", "French stemming algorithm", "Spanish stemming algorithm",
"Portuguese stemming algorithm"), the ones that make a noun of a *process* ("-amiento",
"-issement", "-ation", "-ment"), in their surface spelling (accents removed, as keys
are): a process (yellowing, flooding) is another trait than the quality or thing its root
names (yellow). Suffixes of quality nouns and adjectives ("-ity", "-ness", "-idad",
"-able", "-ant") are left out, as the quality is the same trait ("maturity" and
"matured", "résistant" and "résiste": on the demo's and our maize labels every such
stem match was right), and so are the French "-ement" and the Spanish and Portuguese
"-mente", which also make adverbs ("rapidement"). A suffix counts only where the stemmer
did remove it (the shared stem is no longer than the word without it), so "nation" is no
process noun of "nat".

English "-ing" is an ending to the algorithm (step 1b), so "yellow" still meets the alias
"yellowing": refusing a bare word against a gerund alias removed one false triple of the
demo but cost the English-only list bench 0.2995 -> 0.2796 (DEVELOPERS.md, "Stem matches
across derivation"), and is not done.

Languages without a table here compare by stem alone, as before.
"""

from __future__ import annotations

from collections.abc import Sequence
from functools import lru_cache

from extractor.nlp.text import primary_subtag

_GROUPS: dict[str, tuple[tuple[str, ...], ...]] = {
    # Porter2 steps 2 and 4; "-ion" alone is left out: "nutritional" and "nutritive"
    # would be refused against "nutrition" (our maize answers, 12 right matches).
    "en": (("ation", "ations"), ("ization",), ("ement", "ements"), ("ment", "ments")),
    "fr": (("ation", "ations"), ("issement", "issements")),  # step 1 ("-ement" also makes adverbs)
    "es": (("amiento", "amientos"), ("imiento", "imientos"), ("acion", "aciones")),  # step 1
    "pt": (("amento", "amentos"), ("imento", "imentos"), ("acao", "acoes")),  # step 1
}  # fmt: skip

DERIVATIONAL: dict[str, dict[str, str]] = {
    code: {suffix: group[0] for group in groups for suffix in group}
    for code, groups in _GROUPS.items()
}
"""Language code -> derivational suffix (accents removed) -> its class (the group's first
spelling: "amientos" is "amiento"), from the Snowball algorithm descriptions (module
docstring)."""


@lru_cache(maxsize=1 << 16)
def derivation(form: str, key: str, code: str) -> str | None:
    """Return the class of the derivational suffix the stemmer removed from a word, or ``None``.

    Args:
        form: The word, case-folded and without accents.
        key: Its stem key (:func:`extractor.nlp.dictionary.stem_word`).
        code: The primary language subtag of the stemmer that made the key.

    Returns:
        The longest listed suffix that ``form`` ends with and that lies wholly outside
        the stem, as its class; ``None``.
    """
    table = DERIVATIONAL.get(code)
    if table is None:
        return None
    room = len(form) - len(key)  # letters the stemmer took off (or changed)
    for n in range(min(room, max(map(len, table))), 0, -1):
        suffix = form[-n:]
        if suffix in table:
            return table[suffix]
    return None


def derivation_clash(
    words: Sequence[str],
    alias_words: Sequence[str],
    keys: Sequence[str],
    lang: str,
    *,
    words_native: bool = True,
    alias_native: bool = True,
) -> bool:
    """Return whether a stem match joins words that differ by a derivational suffix.

    Args:
        words: The matched words, case-folded and without accents.
        alias_words: The alias's words, the same way, one per matched word.
        keys: The stem key each pair shares.
        lang: The language tag of the stemmer that made the keys.
        words_native: Whether the matched words are in that language. A word of another
            language (code-switching: a French "demandent" keyed with the English
            stemmer of the alias "demand") has no suffix class in it: only the other
            word's counts.
        alias_native: The same for the alias's words.

    Returns:
        ``True`` when some pair is written differently and one word carries a
        derivational suffix the other lacks (another suffix, or none); ``False``
        otherwise, and for a language without a table.
    """
    code = primary_subtag(lang) if lang else ""
    if code not in DERIVATIONAL:
        return False
    for word, alias, key in zip(words, alias_words, keys, strict=True):
        if word == alias:
            continue
        ours = derivation(word, key, code) if words_native else None
        theirs = derivation(alias, key, code) if alias_native else None
        if ours != theirs:
            return True  # another class, or none; a foreign word's side is always none
    return False
