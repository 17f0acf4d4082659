"""Dictionary matching of concept aliases in sentences, giving silver trait spans.

Matching compares a *key* form of each token rather than its text: lower-cased
(``casefold``), stemmed with the Snowball stemmer of a language, then stripped of
accents (NFKD, combining marks removed). So "Cooking", "cooked" and "cooks" all match
the alias "cook", and "épaisseur" matches "epaisseur". Languages without a Snowball
stemmer match on the unstemmed key. Every run of tokens whose keys equal an alias's keys
is a match (what spaCy's ``PhraseMatcher`` finds over the same keys, which the tests
check); the keys are looked up in a table of alias key sequences rather than through
spaCy documents, which cost most of the matching time (the tagger matches every
sentence it tags, with the matcher of up to three stemmers).

Code-switching (a Spanish trait word inside an English answer) is common in
interviews, so every alias is matched in every sentence, whatever its language:

* all aliases are keyed with the stemmer of the *sentence's* language, and
* aliases of another language are also keyed with *their own* stemmer and matched
  against the sentence's tokens keyed with that stemmer, so an inflected foreign
  word ("colores" against the Spanish alias "color") still matches.

Among overlapping matches the longest wins; between equally long ones, the alias in
the sentence's language wins, then the earlier one. Matches never overlap. When one
alias form belongs to several concepts, the concept with an alias in the sentence's
language wins, then the one whose alias has exactly the written (unstemmed) form,
then the smallest concept ID, so results never depend on input order.

A word that meets an alias word by its stem alone while one of the two carries a
derivational suffix of a process noun the other lacks ("amarillo" and "amarillamiento",
"jaune" and "jaunissement") is no match: :func:`extractor.nlp.derivation.derivation_clash`.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator, Sequence
from functools import cache, lru_cache
from typing import NamedTuple, cast

import snowballstemmer

from extractor.errors import InputError
from extractor.nlp.derivation import derivation_clash
from extractor.nlp.fold import fold
from extractor.nlp.lemmas import lemma
from extractor.nlp.nontrait import is_function_word, never_alone
from extractor.nlp.text import primary_subtag, tokenize
from extractor.types import Sentence, Span

SNOWBALL_LANGUAGES: dict[str, str] = {
    "ar": "arabic", "hy": "armenian", "eu": "basque", "ca": "catalan", "cs": "czech",
    "da": "danish", "nl": "dutch", "en": "english", "eo": "esperanto", "et": "estonian",
    "fi": "finnish", "fr": "french", "de": "german", "el": "greek", "hi": "hindi",
    "hu": "hungarian", "id": "indonesian", "ga": "irish", "it": "italian",
    "lt": "lithuanian", "ne": "nepali", "no": "norwegian", "nb": "norwegian",
    "fa": "persian", "pl": "polish", "pt": "portuguese", "ro": "romanian",
    "ru": "russian", "sr": "serbian", "st": "sesotho", "es": "spanish", "sv": "swedish",
    "ta": "tamil", "tr": "turkish", "yi": "yiddish",
}  # fmt: skip
"""ISO 639-1 code -> Snowball algorithm name, for the algorithms snowballstemmer ships."""

MAX_GAP = 2
"""Words a multi-word alias may have inserted among its own words and still match."""

_WORD_CACHE_LIMIT = 1 << 16
"""Distinct words per sentence language whose keys are kept before the cache starts afresh."""


@lru_cache(maxsize=1 << 20)
@cache
def _stemmer(code: str) -> snowballstemmer.stemmer | None:
    name = SNOWBALL_LANGUAGES.get(code)
    return snowballstemmer.stemmer(name) if name else None


def stemmer_language(lang: str) -> str:
    """Return the code of the stemmer used for a language tag, ``""`` when it has none."""
    code = primary_subtag(lang) if lang else ""
    return code if code in SNOWBALL_LANGUAGES else ""


@lru_cache(maxsize=1 << 20)
def stem_word(word: str, lang: str) -> str:
    """Return the matching key of one word: case-folded, Snowball-stemmed, accents removed.

    The stemmer sees the accented word (its rules are written for it); accents are
    removed afterwards so that writing with or without them gives the same key.
    Languages without a Snowball stemmer give the normalised form.
    """
    stemmer = _stemmer(stemmer_language(lang))
    folded = word.casefold()
    return fold(stemmer.stemWord(folded) if stemmer else folded)


def lemma_key(word: str, lang: str, stem_lang: str, known: frozenset[str]) -> str | None:
    """Return the key of the word's lemma when an alias holds it, else None.

    Only content words: a function word, or a word whose lemma is one, keeps its own
    key (simplemma reads Spanish "lo" as "él" and "muy" as "mucho").
    """
    if is_function_word(word, lang):
        return None
    base = lemma(word, lang)
    if base is None or is_function_word(base, lang):
        return None
    key = stem_word(base, stem_lang)
    return key if key in known else None


class _Candidate(NamedTuple):
    first: int  # token index of the first token
    stop: int  # token index after the last token
    concept: str
    same_lang: bool


class _Entry(NamedTuple):
    concept: str
    lang: str  # primary language subtag of the alias, "" when none
    form: tuple[str, ...]  # normalised unstemmed tokens of the alias


class _Matcher(NamedTuple):
    entries: dict[tuple[str, ...], list[_Entry]]  # alias keys -> the aliases behind them
    lengths: dict[str, tuple[int, ...]]  # first key -> lengths (in tokens) of aliases starting so
    known: frozenset[str]  # every key used by some alias


class _WordKeys(dict[str, tuple[str | None, ...] | None]):
    """Word -> its keys under the matchers of one sentence language (``Dictionary._keys_of``)."""

    def __init__(self, dictionary: Dictionary, plan: list[tuple[str, bool]], code: str) -> None:
        super().__init__()
        self.dictionary = dictionary
        self.plan = plan
        self.code = code  # the sentences' primary language subtag, for lemmas

    def __missing__(self, word: str) -> tuple[str | None, ...] | None:
        keys = self[word] = self.dictionary._keys_of(word, self.plan, self.code)
        return keys


class Dictionary:
    """Aliases of concepts, matched in sentences to give silver spans.

    Build it with :func:`build_dictionary` (which checks the aliases) or
    :meth:`from_aliases`. Matchers are built lazily, once per sentence language, and kept.
    """

    def __init__(
        self,
        aliases: tuple[tuple[str, str, str], ...],
        tokens: list[tuple[str, tuple[str, ...], tuple[str, ...], str]],
        alias_langs: list[str],
    ) -> None:
        self.aliases = aliases
        self._tokens = tokens
        self._alias_langs = alias_langs
        self._matchers: dict[tuple[str, bool], _Matcher] = {}
        self._plans: dict[str, list[tuple[str, bool]]] = {}
        self._word_keys: dict[tuple[str, str], _WordKeys] = {}
        self._gap_index: dict[
            tuple[str, str], dict[str, list[tuple[tuple[str, ...], list[_Entry]]]]
        ] = {}

    @classmethod
    def from_aliases(cls, aliases: Sequence[tuple[str, str, str]]) -> Dictionary:
        """Return the dictionary of ``(concept_id, alias_text, lang)`` triples, tokenized."""
        triples = tuple(aliases)
        words = [tuple(_words(alias, lang)) for _, alias, lang in triples]
        tokens = [
            (concept, tuple(fold(w) for w in alias_words), alias_words, lang)
            for (concept, _, lang), alias_words in zip(triples, words, strict=True)
        ]
        alias_langs = sorted({stemmer_language(lang) for _, _, lang in triples})
        return cls(triples, tokens, alias_langs)

    def __len__(self) -> int:
        return len(self.aliases)

    def _matcher(self, stem_lang: str, only_own: bool) -> _Matcher:
        """Return the matcher of aliases keyed with ``stem_lang``'s stemmer.

        With ``only_own`` it holds only the aliases whose own language is ``stem_lang``.
        """
        cache_key = (stem_lang, only_own)
        if cache_key not in self._matchers:
            entries: dict[tuple[str, ...], list[_Entry]] = {}
            lengths: dict[str, set[int]] = {}
            for concept, form, words, lang in self._tokens:
                alias_lang = stemmer_language(lang)
                if only_own and alias_lang != stem_lang:
                    continue
                keys = tuple(stem_word(w, stem_lang) for w in words)
                if not keys:
                    continue
                entries.setdefault(keys, []).append(_Entry(concept, _code(lang), form))
                lengths.setdefault(keys[0], set()).add(len(keys))
            known = frozenset(k for keys in entries for k in keys)
            by_first = {first: tuple(sorted(found)) for first, found in lengths.items()}
            self._matchers[cache_key] = _Matcher(entries, by_first, known)
        return self._matchers[cache_key]

    def match(self, text: str, lang: str) -> list[Span]:
        """Return the non-overlapping alias matches in ``text`` as spans with a concept.

        Args:
            text: One sentence.
            lang: Its BCP 47 language tag.

        Returns:
            Spans in character offsets, in order, with ``concept`` set and no stance.
        """
        return self.match_tokens(text, lang, tokenize(text, lang))

    def match_tokens(
        self, text: str, lang: str, token_offsets: Sequence[tuple[int, int]]
    ) -> list[Span]:
        """Like :meth:`match`, over tokens the caller already has (saves tokenizing twice)."""
        if not token_offsets or not self.aliases:
            return []
        words = [text[s:e] for s, e in token_offsets]
        sent_stem = stemmer_language(lang)
        plan = self._plan(sent_stem)
        sent_code = _code(lang)
        table = self._word_keys.get((sent_stem, sent_code))
        if table is None or len(table) >= _WORD_CACHE_LIMIT:
            table = self._word_keys[sent_stem, sent_code] = _WordKeys(self, plan, sent_code)
        rows = [table[w] for w in words]
        if not any(rows):
            return []  # no word of the sentence is part of any alias (most sentences)
        forms = [fold(w) for w in words]
        candidates: list[_Candidate] = []
        for m, (stem_lang, only_own) in enumerate(plan):
            keys = [row[m] if row else None for row in rows]
            if keys.count(None) < len(keys):
                candidates += self._candidates(
                    words, forms, keys, stem_lang, sent_code, only_own=only_own
                )
        chosen = _longest_first(candidates)
        if MAX_GAP:
            own = [row[0] if row else None for row in rows]
            firsts = self._gap_firsts(sent_stem, sent_code)
            if any(k in firsts for k in own):
                taken = {k for c in chosen for k in range(c.first, c.stop)}
                gapped = self._gapped(words, own, firsts, sent_code, taken)
                if gapped:
                    chosen = sorted([*chosen, *gapped], key=lambda c: c.first)
        return [
            Span(token_offsets[c.first][0], token_offsets[c.stop - 1][1], c.concept) for c in chosen
        ]

    def _gap_firsts(
        self, stem_lang: str, sent_code: str
    ) -> dict[str, list[tuple[tuple[str, ...], list[_Entry]]]]:
        """Return the multi-word aliases of the sentence's language by their first key."""
        index = self._gap_index.get((stem_lang, sent_code))
        if index is None:
            index = self._gap_index[stem_lang, sent_code] = {}
            for alias_keys, entries in self._matcher(stem_lang, False).entries.items():
                own = [e for e in entries if e.lang == sent_code or not e.lang]
                if len(alias_keys) > 1 and own:
                    index.setdefault(alias_keys[0], []).append((alias_keys, own))
        return index

    def _gapped(
        self,
        words: list[str],
        keys: list[str | None],
        index: dict[str, list[tuple[tuple[str, ...], list[_Entry]]]],
        sent_code: str,
        taken: set[int],
    ) -> list[_Candidate]:
        """Return matches of multi-word aliases of the sentence's language with words inserted.

        An answer often puts a copula, an intensifier or a qualifier inside a trait phrase
        ("sauce est épaisse" for "sauce épaisse", "grano es grande", "resistant to crop
        diseases"). The alias's words must come in order, with 1 to :data:`MAX_GAP`
        other words between them in all, no punctuation among them, and on tokens no
        contiguous match holds; the longest such match wins, then the earliest.
        """
        found: list[_Candidate] = []
        n = len(keys)
        for first, key in enumerate(keys):
            if key is None or first in taken:
                continue
            for alias_keys, entries in index.get(key, ()):
                at, gaps, j = 1, 0, first
                while at < len(alias_keys) and gaps <= MAX_GAP:
                    j += 1
                    if j >= n or j in taken or not any(ch.isalnum() for ch in words[j]):
                        break
                    if keys[j] == alias_keys[at]:
                        at += 1
                    else:
                        gaps += 1
                if at == len(alias_keys) and 0 < gaps <= MAX_GAP:
                    best = min(entries, key=lambda e: (e.lang != sent_code, e.concept))
                    found.append(_Candidate(first, j + 1, best.concept, True))
        return [c for c in _longest_first(found) if taken.isdisjoint(range(c.first, c.stop))]

    def _plan(self, sent_stem: str) -> list[tuple[str, bool]]:
        """Return the matchers a sentence of this stemmer language goes through, in order.

        All aliases keyed with the sentence's stemmer, then the aliases of each other
        language keyed with their own.
        """
        if sent_stem not in self._plans:
            others = [(o, True) for o in self._alias_langs if o and o != sent_stem]
            self._plans[sent_stem] = [(sent_stem, False), *others]
        return self._plans[sent_stem]

    def _keys_of(
        self, word: str, plan: list[tuple[str, bool]], code: str
    ) -> tuple[str | None, ...] | None:
        """Return a word's key under each matcher of ``plan``, ``None`` where no alias uses it.

        A word whose own key no alias holds takes its lemma's key when an alias holds
        that (:func:`lemma_key`): "sweeter" meets "sweet", "grown" "grow". ``code`` is
        the sentence's language, whose lemma table the first matcher reads; the others
        hold the aliases of one other language each and read that language's table.
        ``None`` instead of the tuple when no matcher knows the word's key: a key that no
        alias holds can be part of no match, so such words are skipped at once.
        """
        keys = []
        for k, (stem_lang, only_own) in enumerate(plan):
            known = self._matcher(stem_lang, only_own).known
            key: str | None = stem_word(word, stem_lang)
            if key not in known:
                key = lemma_key(word, code if k == 0 else stem_lang, stem_lang, known)
            keys.append(key)
        return tuple(keys) if any(k is not None for k in keys) else None

    def match_many(self, sentences: Iterable[Sentence]) -> list[list[Span]]:
        """Return :meth:`match` for each sentence (anything with ``text`` and ``lang``)."""
        return [self.match(s.text, s.lang) for s in sentences]

    def _candidates(
        self,
        words: list[str],
        forms: list[str],
        keys: list[str | None],
        stem_lang: str,
        sent_code: str,
        *,
        only_own: bool,
    ) -> list[_Candidate]:
        entries, lengths, _ = self._matcher(stem_lang, only_own)
        native = stemmer_language(sent_code) == stem_lang  # the sentence's words are of it
        out = []
        for first, stop, options in _matches(keys, entries, lengths):
            if stop - first == 1 and never_alone(
                words, first, sent_code, [" ".join(e.form) for e in options]
            ):
                continue  # a verb of liking, or an infinitive meeting a noun by its stem
            written = tuple(forms[first:stop])
            shared = cast("list[str]", keys[first:stop])
            options = [
                e
                for e in options
                if e.form == written
                or not derivation_clash(
                    written,
                    e.form,
                    shared,
                    stem_lang,
                    words_native=native,
                    alias_native=stemmer_language(e.lang) == stem_lang,
                )
            ]
            if not options:
                continue  # the stem joins words of different meaning ("amarillo"/"amarillamiento")
            best = min(
                options,
                key=lambda e: (e.lang != sent_code, e.form != written, e.concept),
            )
            out.append(_Candidate(first, stop, best.concept, best.lang == sent_code))
        return out


def _matches(
    keys: Sequence[str | None],
    entries: dict[tuple[str, ...], list[_Entry]],
    lengths: dict[str, tuple[int, ...]],
) -> Iterator[tuple[int, int, list[_Entry]]]:
    """Yield ``(first, stop, aliases)`` for every run of ``keys`` that is an alias's keys.

    Runs may overlap and nest, as with spaCy's ``PhraseMatcher``: choosing among them
    is :func:`_longest_first`'s job. A key of ``None`` (a word no alias holds) starts
    and joins no run.
    """
    n = len(keys)
    for first, key in enumerate(keys):
        if key is None:
            continue
        for length in lengths.get(key, ()):
            stop = first + length
            if stop > n:
                break
            # A run holding None (a word no alias holds) is no alias's keys: the look-up misses.
            found = entries.get(cast("tuple[str, ...]", tuple(keys[first:stop])))
            if found is not None:
                yield first, stop, found


def _code(lang: str) -> str:
    return primary_subtag(lang) if lang else ""


def _words(alias: str, lang: str) -> list[str]:
    return [alias[s:e] for s, e in tokenize(alias, lang or "xx")]


def _longest_first(candidates: list[_Candidate]) -> list[_Candidate]:
    """Pick non-overlapping matches greedily: longest, then same language, then earliest."""
    taken: set[int] = set()
    chosen = []
    order = sorted(candidates, key=lambda c: (c.first - c.stop, not c.same_lang, c.first))
    for cand in order:
        span = range(cand.first, cand.stop)
        if taken.isdisjoint(span):
            taken.update(span)
            chosen.append(cand)
    return sorted(chosen, key=lambda c: c.first)


def build_dictionary(aliases: Iterable[tuple[str, str, str]]) -> Dictionary:
    """Return a :class:`Dictionary` of ``(concept_id, alias_text, lang)`` triples.

    Args:
        aliases: One triple per alias; ``lang`` is a BCP 47 tag, or ``""`` when the
            alias belongs to no particular language (it is then matched unstemmed by
            its own stemmer and stemmed by the sentence's).

    Returns:
        The dictionary, ready to match.

    Raises:
        InputError: When a concept ID or an alias text is empty.
    """
    triples = []
    for n, (concept, alias, lang) in enumerate(aliases, start=1):
        if not str(concept).strip():
            raise InputError(
                f"Alias {n} ({alias!r}) has an empty concept ID; give every alias its concept's ID."
            )
        if not str(alias).strip():
            raise InputError(
                f"Alias {n} of concept {concept!r} is empty; remove it or give its text."
            )
        triples.append((str(concept), str(alias).strip(), str(lang or "")))
    return Dictionary.from_aliases(triples)
