"""Words that never name a trait on their own, however an alias is spelled.

Some aliases collide with everyday words of another part of speech: Portuguese "gosto"
is both "taste" and "I like", "seca" (drought) shares its stem with "secar" (to dry).
A dictionary match made of such a word alone is dropped:

* a verb of liking, wanting or disliking (the stance, not the trait), unless a
  determiner stands right before it ("o gosto", "le goût": then it is the noun);
* an infinitive that matches a noun alias by its stem only ("secar" for "seca").

The word lists are short, typed from memory (common words of each language), and
cover the languages of the stance cues; other languages get the infinitive rule only
where their endings are listed.

:func:`only_function_words` says when a whole phrase is made of stop words (spaCy's
lists) and verbs of liking: such a phrase ("gosto da", "c'est") names no trait, so
neither the pretrained space's similarity nor a candidate synonym may link it;
:func:`names_stance_only` says when such a phrase holds a verb of liking, which the
linker then links to nothing at all.
"""

from __future__ import annotations

from collections.abc import Sequence
from functools import cache

from extractor.nlp.alternation import language_class
from extractor.nlp.fold import fold

LIKING_VERBS: dict[str, frozenset[str]] = {
    "en": frozenset(
        "like likes liked love loves loved prefer prefers want wants wanted need needs "
        "hate hates dislike dislikes wish".split()
    ),
    "fr": frozenset(
        "aime aimes aimons aiment aimer adore adorons prefere preferons preferent "
        "veux veut voulons voudrais voudrait deteste detestons souhaite souhaitons".split()
    ),
    "es": frozenset(
        "gusta gustan gusto gustaria encanta encantan prefiero preferimos quiero "
        "queremos quisiera odio necesito necesitamos deseo".split()
    ),
    "pt": frozenset(
        "gosto gosta gostamos gostam gostaria adoro adoramos prefiro preferimos quero "
        "queremos queria odeio preciso precisamos desejo".split()
    ),
    "sw": frozenset(
        "napenda anapenda tunapenda wanapenda sipendi hapendi hatupendi nataka tunataka "
        "sitaki hatutaki ningependa tungependa".split()
    ),
}
"""Verb forms of liking, wanting and disliking, folded (case and accents dropped)."""

DETERMINERS: dict[str, frozenset[str]] = {
    "en": frozenset("the a an its their our my his her this that".split()),
    "fr": frozenset("le la les l un une son sa ses leur leurs ce cette du des".split()),
    "es": frozenset("el la los las un una su sus este esta ese esa del".split()),
    "pt": frozenset("o a os as um uma seu sua seus suas este esta esse essa do da dos das".split()),
    "sw": frozenset(),
}
"""Determiners before a noun, folded: after one, a liking-verb form is the noun."""

PREPOSITIONS: dict[str, frozenset[str]] = {
    "en": frozenset("of for in on at to with from by about".split()),
    "fr": frozenset("de d du des a au aux en dans pour par sur avec sans".split()),
    "es": frozenset("de del en a al para por con sin sobre".split()),
    "pt": frozenset("de do da dos das em no na nos nas a ao aos para por com sem".split()),
}
"""Common prepositions, folded, with the contractions of a preposition and an article
(from memory): they tie a noun to the noun phrase it completes ("market for green maize",
"tarda en la olla"). None for Swahili: spaCy has no Swahili stop words, so its
connectives ("bei ya mahindi") count as content words and no reading crosses them."""

QUANTIFIERS: dict[str, frozenset[str]] = {
    "en": frozenset("all every each".split()),
    "fr": frozenset("tout toute tous toutes chaque".split()),
    "es": frozenset("todo toda todos todas cada".split()),
    "pt": frozenset("todo toda todos todas cada".split()),
}
"""Quantifiers that stand before a determiner or a noun, folded (from memory; French
grammar counts "tout" among the determiners: "de toutes les couleurs")."""

REFLEXIVE_CLITICS: dict[str, frozenset[str]] = {
    "fr": frozenset("se s me m te t nous vous".split()),
    "es": frozenset("se me te nos os".split()),
    "pt": frozenset("se me te nos vos".split()),
    "it": frozenset("si mi ti ci vi".split()),
}
"""Reflexive pronouns written before a verb, folded: part of a pronominal verb ("se vend
bien", "se cocina rápido"), so part of the trait phrase an analyst marks."""

INFINITIVE_ENDINGS: dict[str, tuple[str, ...]] = {
    "pt": ("ar", "er", "ir"),
    "es": ("ar", "er", "ir"),
    "fr": ("er", "ir", "re"),
}
"""Infinitive endings of languages whose stemmer joins infinitives with nouns."""


def _code(lang: str) -> str:
    return lang.split("-")[0].lower()


def is_liking_verb(words: Sequence[str], i: int, lang: str) -> bool:
    """Whether ``words[i]`` is a verb of liking (not the noun it may also spell)."""
    code = _code(lang)
    if fold(words[i]) not in LIKING_VERBS.get(code, frozenset()):
        return False
    return not (i > 0 and fold(words[i - 1]) in DETERMINERS.get(code, frozenset()))


def joins_noun_phrase(word: str, lang: str) -> bool:
    """Whether ``word`` is a determiner, preposition or quantifier of ``lang``.

    Such words may stand between a noun and the words of its noun phrase
    (:mod:`extractor.nlp.neighbours`); an elided form keeps its apostrophe as a token
    ("l'", "d'"), which is ignored.
    """
    code = _code(lang)
    key = fold(word).rstrip("'’")
    return any(
        key in table.get(code, frozenset()) for table in (DETERMINERS, PREPOSITIONS, QUANTIFIERS)
    )


def is_reflexive_clitic(word: str, lang: str) -> bool:
    """Whether ``word`` is a reflexive pronoun of ``lang`` (:data:`REFLEXIVE_CLITICS`).

    An elided form keeps its apostrophe as a token ("s'", "s’"), which is ignored.
    """
    return fold(word).rstrip("'’") in REFLEXIVE_CLITICS.get(_code(lang), frozenset())


def is_stem_only_infinitive(word: str, alias_forms: Sequence[str], lang: str) -> bool:
    """Whether ``word`` is an infinitive that meets a one-word alias by its stem only."""
    endings = INFINITIVE_ENDINGS.get(_code(lang), ())
    folded = fold(word)
    if not endings or not folded.endswith(endings) or len(folded) < 4:
        return False
    return all(fold(form) != folded and not fold(form).endswith(endings) for form in alias_forms)


def never_alone(words: Sequence[str], i: int, lang: str, alias_forms: Sequence[str]) -> bool:
    """Whether a one-word match of ``words[i]`` must be dropped (see the module docstring)."""
    return is_liking_verb(words, i, lang) or is_stem_only_infinitive(words[i], alias_forms, lang)


@cache
def stop_words(code: str) -> frozenset[str]:
    """SpaCy's stop words of a language (primary subtag), folded; empty where spaCy has none."""
    try:
        words = language_class(code).Defaults.stop_words
    except (ImportError, KeyError):
        return frozenset()
    return frozenset(fold(w) for w in words)


def is_function_word(word: str, lang: str) -> bool:
    """Whether ``word`` is a stop word or a verb form of liking of ``lang`` (or no word)."""
    code = _code(lang)
    key = fold(word)
    if not any(c.isalnum() for c in key):
        return True
    return key in stop_words(code) or key in LIKING_VERBS.get(code, frozenset())


def only_function_words(words: Sequence[str], lang: str) -> bool:
    """Whether every word is a function word or a verb of liking (see the module docstring)."""
    return all(is_function_word(w, lang) for w in words)


def names_stance_only(words: Sequence[str], first: int, last: int, lang: str) -> bool:
    """Whether ``words[first:last]`` hold a verb of liking and nothing but function words.

    Such a span ("want", "I want", "gosto da") says how the speaker feels, not about what:
    it is linked to no concept, whatever its letters share with an alias ("want" and
    "wanga"). A stop word alone is not enough: spaCy's lists hold words that do name
    traits ("grande", "keep well", "rend plus"), so the verb of liking must be there,
    and a liking-verb form after a determiner is the noun ("o gosto": the taste).
    """
    span = range(first, last)
    return any(is_liking_verb(words, i, lang) for i in span) and all(
        is_function_word(words[i], lang) for i in span
    )
