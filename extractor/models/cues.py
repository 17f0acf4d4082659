"""The stance cue lexicon matched in a sentence.

The cue lexicon is data (``extractor/models/data/stance_cues.json``) that users extend
with their own file; :mod:`extractor.models.cue_file` reads and checks it. A sentence is
read once per lexicon (:func:`parse`): its tokens, the cue matches of every category,
clause boundaries and a NegEx-style negation scope (pre- and post-triggers,
pseudo-triggers excluded, scope ending at a clause boundary; Chapman et al., 2001). The
rules that read stance from the cue features before any labels exist are in
:mod:`extractor.models.stance_rules`.
"""

from __future__ import annotations

import itertools
from collections import defaultdict
from collections.abc import Mapping, Sequence
from functools import lru_cache

from extractor.models.cue_file import Cues
from extractor.nlp.fold import fold
from extractor.nlp.text import primary_subtag, tokenize
from extractor.types import Span

Matches = dict[str, list[tuple[int, int]]]
"""Cue matches of a sentence: category -> token ranges ``(i, j)``."""

PUNCT_BOUNDARY = frozenset(',;:.!?()[]{}\u2013\u2014\u2026"')
"""Punctuation tokens that end a clause."""

SENTENCE_END = frozenset(".!?;")
"""Tokens that end a sentence (and so a contrast segment)."""


def cue_form(word: str) -> str:
    """Return the matching form of a token: case-folded, no accents, straight apostrophe."""
    return fold(word).replace("\u2019", "'")


class Lexicon:
    """One language's cues, tokenised and indexed by first word for fast matching.

    Build with :meth:`compile`. Hashed by identity so parsed sentences can be cached
    per lexicon.
    """

    __slots__ = ("by_first", "prefixes", "gapped", "scope", "lang", "concord")

    def __init__(
        self,
        *,
        by_first: dict[str, list[tuple[str, tuple[str, ...]]]],
        prefixes: list[tuple[str, str]],
        gapped: list[tuple[str, tuple[str, ...], tuple[str, ...]]],
        scope: int,
        lang: str,
        concord: bool = False,
    ) -> None:
        self.by_first = by_first
        self.prefixes = prefixes  # single-word wildcard cues: (category, prefix)
        self.gapped = gapped  # "ne ... que": (category, opening words, closing words)
        self.scope = scope
        self.lang = lang
        self.concord = concord  # negative concord: "ne ... pas", "no ... nada" negate once

    @classmethod
    def compile(
        cls, section: Mapping[str, Sequence[str]], lang: str, scope: int, concord: bool = False
    ) -> Lexicon:
        """Tokenise a language section's cues with that language's tokenizer."""
        by_first: dict[str, list[tuple[str, tuple[str, ...]]]] = defaultdict(list)
        prefixes: list[tuple[str, str]] = []
        gapped: list[tuple[str, tuple[str, ...], tuple[str, ...]]] = []
        for cat, words in section.items():
            for cue in words:
                if GAP in cue:
                    head, _, tail = cue.partition(GAP)
                    first, last = _cue_tokens(head, lang), _cue_tokens(tail, lang)
                    if first and last:
                        gapped.append((cat, first, last))
                    continue
                toks = _cue_tokens(cue, lang)
                if not toks:
                    continue
                if len(toks) == 1 and toks[0].endswith("*"):
                    prefixes.append((cat, toks[0][:-1]))
                else:
                    by_first[toks[0]].append((cat, toks))
        return cls(
            by_first=by_first,
            prefixes=prefixes,
            gapped=gapped,
            scope=scope,
            lang=lang,
            concord=concord,
        )


GAP = " ... "
"""Written between the two parts of a cue whose parts stand apart ("ne ... que")."""

_APOSTROPHES = ("'", "\u2019")


def _cue_tokens(cue: str, lang: str) -> tuple[str, ...]:
    """Return the matching forms of a cue's tokens.

    A word that ends in an apostrophe is an elision ("n'", "qu'"): in running text the
    tokenizer keeps it whole ("n'" "est"), but standing alone its apostrophe is split
    off, so it is joined back here. A trailing wildcard is joined back the same way.
    """
    toks: list[str] = []
    end = -1
    for s, e in tokenize(cue, lang):
        word = cue[s:e]
        ends_stretch = e == len(cue) or cue[e].isspace()
        if toks and s == end and ends_stretch and (word in _APOSTROPHES or word == "*"):
            toks[-1] += cue_form(word)
        else:
            toks.append(cue_form(word))
        end = e
    return tuple(toks)


_LEXICONS: dict[tuple[int, str], tuple[Cues, Lexicon]] = {}


def lexicon(cues: Cues, lang: str) -> Lexicon:
    """Return the compiled lexicon of a language (empty for a language without cues).

    Compiled lexicons are cached by the identity of ``cues``: treat loaded cues as
    read-only.
    """
    code = primary_subtag(lang) if lang else ""
    key = (id(cues), code)
    hit = _LEXICONS.get(key)
    if hit is None or hit[0] is not cues:
        if len(_LEXICONS) > 64:
            _LEXICONS.clear()  # user cue files loaded again are new objects; stay bounded
        settings = cues.get("_settings", {})
        scope = int(settings.get("negation_scope", 5))
        concord = code in settings.get("negative_concord", ())
        hit = (cues, Lexicon.compile(cues.get(code, {}), lang or "xx", scope, concord))
        _LEXICONS[key] = hit
    return hit[1]


def _match_cue(words: Sequence[str], i: int, toks: tuple[str, ...]) -> bool:
    if i + len(toks) > len(words):
        return False
    for w, t in zip(words[i : i + len(toks)], toks, strict=False):
        if t.endswith("*") and len(t) > 1:
            if not w.startswith(t[:-1]):
                return False
        elif w != t:
            return False
    return True


_CLAIMING = ("liked", "disliked", "wanted", "excess", "indifference")
"""Categories whose longer matches claim their words from shorter ones ("only good for";
"want to know" is no wish)."""


def _find_all(words: Sequence[str], lex: Lexicon) -> Matches:
    """Return every cue match per category as token ranges ``(i, j)``.

    A stance cue inside a longer cue of a claiming category is dropped: "only good
    for" is a fault, not also a "good"; "needs a lot of" is not also a wish.
    """
    found: Matches = defaultdict(list)
    for i, w in enumerate(words):
        for cat, toks in lex.by_first.get(w, ()):
            if _match_cue(words, i, toks):
                found[cat].append((i, i + len(toks)))
        for cat, prefix in lex.prefixes:
            if w.startswith(prefix):
                found[cat].append((i, i + 1))
    _find_gapped(words, lex, found)
    claims = [m for cat in _CLAIMING for m in found.get(cat, ())]
    for cat in _CLAIMING:
        if cat in found:
            found[cat] = [
                (i, j)
                for i, j in found[cat]
                if not any(a <= i and j <= b and b - a > j - i for a, b in claims)
            ]
    _conditional_praise(words, found)
    return found


def _conditional_praise(words: Sequence[str], found: Matches) -> None:
    """Turn a good word after a conditional copula into a wish, in place.

    "It would be perfect", "ce serait parfait", "sería perfecto", "seria perfeito": the
    conditional mood praises what is hoped for, not what is there (cue category
    ``conditional``; the copula, then the good word at most two words on, in the same
    clause). "I would recommend it" holds no copula and stays liked.
    """
    ends = [j for _, j in found.get("conditional", ())]
    if not ends or not found.get("liked"):
        return
    kept: list[tuple[int, int]] = []
    moved: list[tuple[int, int]] = []
    for i, j in found["liked"]:
        after = any(e <= i <= e + 2 and not PUNCT_BOUNDARY.intersection(words[e:i]) for e in ends)
        (moved if after else kept).append((i, j))
    if moved:
        found["liked"] = kept
        found["wanted"] = sorted([*found.get("wanted", ()), *moved])


def _find_gapped(words: Sequence[str], lex: Lexicon, found: Matches) -> None:
    """Add the matches of cues whose two parts stand apart ("ne ... que", "only").

    The closing part must follow within the negation scope, in the same clause, with no
    negation trigger between: in "ne ... pas ... que" the "que" is another word's.
    """
    if not lex.gapped:
        return
    starts = {i for cat in ("negation_pre", "negation_post") for i, _ in found.get(cat, ())}
    ends = {
        k
        for cat in ("termination", "contrast", "clause_break")
        for i, j in found.get(cat, ())
        for k in range(i, j)
    }
    for cat, first, last in lex.gapped:
        for i in range(len(words)):
            if not _match_cue(words, i, first):
                continue
            k = i + len(first)
            while k < len(words) and k - i <= lex.scope and words[k] not in PUNCT_BOUNDARY:
                if k in starts or k in ends:
                    break
                if _match_cue(words, k, last):
                    found[cat].append((i, k + len(last)))
                    break
                k += 1


# --------------------------------------------------------------------------- parsing


class Parsed:
    """Tokens of a sentence with cue matches, clause boundaries and negation marks.

    Build with :meth:`read` (or the cached :func:`parse`).
    """

    __slots__ = (
        "offsets", "words", "matches", "boundary", "negated", "trigger", "contrast", "resisted",
    )  # fmt: skip

    def __init__(
        self,
        *,
        offsets: list[tuple[int, int]],
        words: list[str],
        matches: Matches,
        boundary: list[bool],
        negated: list[bool],
        trigger: list[bool],
        contrast: list[bool],
        resisted: list[bool],
    ) -> None:
        self.offsets = offsets
        self.words = words
        self.matches = matches
        self.boundary = boundary
        self.negated = negated
        self.trigger = trigger
        self.contrast = contrast
        self.resisted = resisted  # held off by a resistance word, not negated again

    @classmethod
    def read(cls, text: str, lex: Lexicon) -> Parsed:
        """Tokenise ``text``, match the lexicon and mark boundaries and negation scopes."""
        # Typed answers write the apostrophe as a backtick ("Doesn`t"); the swap keeps
        # every offset, so the tokenizer splits "n't" off as it does for an apostrophe.
        plain = text.replace("`", "'")
        offsets = tokenize(plain, lex.lang)
        words = [cue_form(plain[s:e]) for s, e in offsets]
        found = _find_all(words, lex)
        boundary = _boundaries(words, found)
        contrast = [False] * len(words)
        for i, _ in found.get("contrast", ()):
            contrast[i] = True
        # A resistance word reaches over "and" ("resistant to drought and diseases").
        hard = _boundaries(words, {k: v for k, v in found.items() if k != "clause_break"})
        trigger, negated, resisted = _negation(found, boundary, hard, lex.scope, lex.concord)
        return cls(
            offsets=offsets,
            words=words,
            matches=found,
            boundary=boundary,
            negated=negated,
            trigger=trigger,
            contrast=contrast,
            resisted=resisted,
        )


def _boundaries(words: Sequence[str], found: Matches) -> list[bool]:
    """Return, per token, whether it ends a clause (punctuation or a boundary cue)."""
    boundary = [w in PUNCT_BOUNDARY for w in words]
    for cat in ("termination", "contrast", "clause_break"):
        for i, j in found.get(cat, ()):
            boundary[i:j] = [True] * (j - i)
    return boundary


def _negation(
    found: Matches,
    boundary: Sequence[bool],
    hard: Sequence[bool],
    scope: int,
    concord: bool = False,
) -> tuple[list[bool], list[bool], list[bool]]:
    """Return the trigger tokens, the tokens negated, and the tokens held off by resistance.

    NegEx-style scopes (Chapman et al., 2001) run from each trigger for ``scope``
    tokens up to a clause boundary; resistance words ("resistant to", "drought
    tolerant") negate a fault the same way but run up to a ``hard`` boundary only, so
    they reach over "and". A token counts as negated when an odd number of scopes
    reach it: in "not resistant to disease" the two cancel and disease stays a fault.
    It is *resisted* when a resistance scope reaches it and plain negations cancel out.
    With ``concord`` (languages with negative concord: French "ne ... pas", Spanish "no
    ... nada") a pre-trigger's scope stops at the next pre-trigger, which carries the
    same negation on; a restrictive phrase ("ne ... que": only) negates nothing.
    """
    n = len(boundary)
    # Pseudo-triggers (and excess phrases such as "not enough") contain a trigger
    # word but negate nothing; NegEx matches them first and skips their tokens.
    masked = [False] * n
    for cat in ("pseudo_negation", "excess", "indifference", "restrictive"):
        for i, j in found.get(cat, ()):
            masked[i:j] = [True] * (j - i)
    kinds = (
        ("negation_pre", 1, boundary),
        ("negation_post", -1, boundary),
        ("resistance_pre", 1, hard),
        ("resistance_post", -1, hard),
    )
    # Overlapping triggers ("no" in "no longer", "resistant" in "resistant to") count
    # once: the longest (then the earliest, then the first kind) wins.
    claimed: list[tuple[int, int, int, int, list[bool] | Sequence[bool]]] = []
    trigger = [False] * n
    plain, held = [0] * n, [0] * n
    ordered = sorted(
        ((i, j, rank, step, ends) for rank, (cat, step, ends) in enumerate(kinds)
         for i, j in found.get(cat, ())),
        key=lambda m: (-(m[1] - m[0]), m[0], m[2]),
    )  # fmt: skip
    for i, j, rank, step, ends in ordered:
        if any(masked[i:j]) or any(a < j and i < b for a, b, *_ in claimed):
            continue
        claimed.append((i, j, rank, step, ends))
        trigger[i:j] = [True] * (j - i)
    # Negative concord: a plain negation that meets another plain negation word hands
    # its scope over, so the two negate once ("ne cuit pas vite", "no tiene nada").
    relay = [False] * n
    if concord:
        for i, _, rank, _, _ in claimed:
            if rank == 0:
                relay[i] = True
    reach = {i: _reach(i, j, step, ends, scope, relay if rank == 0 else None)
             for i, j, rank, step, ends in claimed}  # fmt: skip
    # A plain negation that meets a resistance word negates that word's predicate: it
    # ends there and reaches as far as the resistance does ("not resistant to drought
    # and diseases"; "not drought resistant, needs more fertiliser" leaves the second
    # clause alone).
    resisting = {k: (a, b) for a, b, rank, *_ in claimed if rank >= 2 for k in range(a, b)}
    for i, _, rank, _, _ in claimed:
        counts = held if rank >= 2 else plain
        tokens = reach[i]
        if rank < 2:
            met = next((t for t, k in enumerate(tokens) if k in resisting), None)
            if met is not None:
                a, b = resisting[tokens[met]]
                tokens = [*tokens[:met], *range(a, b)]
                # With negative concord the next plain negation word carries the
                # negation on ("ne résiste pas à"): the resistance's reach stops there.
                carried = itertools.takewhile(lambda k: not relay[k], reach[a])
                tokens += [k for k in carried if k not in tokens]
        for k in tokens:
            counts[k] += 1
    negated = [(plain[k] + held[k]) % 2 == 1 for k in range(n)]
    resisted = [held[k] > 0 and plain[k] % 2 == 0 for k in range(n)]
    return trigger, negated, resisted


def _reach(
    i: int, j: int, step: int, ends: Sequence[bool], scope: int, relay: Sequence[bool] | None
) -> list[int]:
    """Return the tokens a trigger at ``[i, j)`` reaches, nearest first.

    At most ``scope`` tokens in the direction ``step``, up to a token that ``ends`` it;
    with ``relay`` (negative concord) up to the next plain negation word.
    """
    out: list[int] = []
    k = j if step > 0 else i - 1
    while 0 <= k < len(ends) and abs(k - (j - 1 if step > 0 else i)) <= scope and not ends[k]:
        if relay is not None and relay[k]:
            break
        out.append(k)
        k += step
    return out


@lru_cache(maxsize=8192)
def parse(text: str, lex: Lexicon) -> Parsed:
    """Return :meth:`Parsed.read` of ``text``, cached per text and lexicon."""
    return Parsed.read(text, lex)


def span_tokens(parsed: Parsed, span: Span) -> tuple[int, int]:
    """Return the token range ``[a, b)`` covering the span (empty range at its place if none)."""
    inside = [k for k, (s, e) in enumerate(parsed.offsets) if s < span.end and e > span.start]
    if inside:
        return inside[0], inside[-1] + 1
    before = sum(1 for s, _ in parsed.offsets if s < span.start)
    return before, before


def clause(parsed: Parsed, a: int, b: int) -> tuple[int, int]:
    """Return the token range of the clause around ``[a, b)``, boundaries excluded."""
    lo = a
    while lo > 0 and not parsed.boundary[lo - 1]:
        lo -= 1
    hi = b
    while hi < len(parsed.words) and not parsed.boundary[hi]:
        hi += 1
    return lo, hi


def segment(parsed: Parsed, a: int, b: int) -> tuple[int, int]:
    """Return the stretch around ``[a, b)`` between contrast words and sentence ends."""
    lo = a
    while lo > 0 and not (parsed.contrast[lo - 1] or parsed.words[lo - 1] in SENTENCE_END):
        lo -= 1
    hi = b
    while hi < len(parsed.words) and not (parsed.contrast[hi] or parsed.words[hi] in SENTENCE_END):
        hi += 1
    return lo, hi
