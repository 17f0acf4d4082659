"""Stance of a trait mention: ``liked``, ``disliked``, ``wanted`` or ``neutral``.

Stance is read from the words *around* a mention, never from the mention itself: a
trait word says nothing about whether it is welcome (bitterness can be wanted), so
the span's own words are used only to decide whether the mention is negated ("it
does not rot": a fault under negation reads as liked) or qualified by excess ("too
small"). Everything else is relative to the span: cue words before and after it
inside its clause, a NegEx-style negation scope (pre- and post-triggers,
pseudo-triggers excluded, scope ending at a clause boundary; Chapman et al., 2001),
the side of a contrast ("but") the span sits on, comparisons, wishes, and the
question the answer replied to.

The cue lexicon is data (``extractor/models/data/stance_cues.json``) that users extend with
their own file through :func:`load_cues`. Before any labels exist,
:func:`rule_stance` gives a sensible answer from the cues alone; :class:`StanceModel`
learns from labelled mentions and falls back to the rules until it is fitted.
"""

from __future__ import annotations

import json
from collections import defaultdict
from collections.abc import Iterable, Mapping, Sequence
from functools import lru_cache
from pathlib import Path
from typing import Any

import numpy as np
import skops.io
from sklearn.feature_extraction import DictVectorizer
from sklearn.linear_model import LogisticRegression
from sklearn.pipeline import Pipeline

from extractor.errors import InputError
from extractor.models.persist import load_trusted_skops, read_meta, write_meta
from extractor.nlp.fold import fold
from extractor.nlp.text import primary_subtag, tokenize
from extractor.types import STANCES, Sentence, Span

CUES_PATH = Path(__file__).parent / "data" / "stance_cues.json"
"""The packaged cue lexicon."""

CUE_CATEGORIES = (
    "liked", "disliked", "wanted", "negation_pre", "negation_post", "pseudo_negation",
    "termination", "contrast", "clause_break", "excess", "comparative", "comparative_less",
    "comparison_marker", "question_liked", "question_disliked", "question_wanted",
)  # fmt: skip
"""The categories a language section of the cue lexicon may hold."""

Cues = dict[str, Any]
"""A loaded cue lexicon: language code -> category -> list of cue strings, plus ``_settings``."""

WINDOW = 5
"""Tokens either side of a span whose words become context features of the learned model."""

_PUNCT_BOUNDARY = frozenset(',;:.!?()[]{}\u2013\u2014\u2026"')
_SENTENCE_END = frozenset(".!?;")
_FORMAT = "trait-extractor/stance/1"
_SKOPS_FILE = "stance.skops"
_JSON_FILE = "stance.json"


# --------------------------------------------------------------------------- cues


def load_cues(path: str | Path | None = None) -> Cues:
    """Return the packaged cue lexicon, with a user's cue file merged over it.

    Args:
        path: A JSON file of the same shape as ``extractor/models/data/stance_cues.json``
            (see its ``_comment``); its lists are appended to the packaged lists of
            the same language and category, new languages are added, and its
            ``_settings`` override the packaged ones. ``None`` gives the packaged lexicon.

    Returns:
        The merged lexicon.

    Raises:
        InputError: When the user file is missing, not JSON, or not of that shape.
    """
    cues = _read_cues(CUES_PATH)
    if path is None:
        return cues
    user = _read_cues(Path(path))
    merged: Cues = {k: v for k, v in cues.items() if k != "_comment"}
    merged["_settings"] = {**cues.get("_settings", {}), **user.get("_settings", {})}
    for lang, section in user.items():
        if lang.startswith("_"):
            continue
        target = {cat: list(words) for cat, words in merged.get(lang, {}).items()}
        for cat, words in section.items():
            target[cat] = target.get(cat, []) + [w for w in words if w not in target.get(cat, [])]
        merged[lang] = target
    return merged


def _read_cues(path: Path) -> Cues:
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError as exc:
        raise InputError(
            f"Cue file {path} does not exist; give the path of a JSON cue file."
        ) from exc
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputError(
            f"Cue file {path} is not readable JSON ({exc}); fix it or remove the option."
        ) from exc
    if not isinstance(data, dict):
        raise InputError(
            f"Cue file {path} must hold a JSON object of languages; got {type(data).__name__}."
        )
    for lang, section in data.items():
        if lang.startswith("_"):
            continue
        if not isinstance(section, dict):
            raise InputError(
                f"Cue file {path}: language {lang!r} must map categories to lists of cue strings."
            )
        for cat, words in section.items():
            if cat not in CUE_CATEGORIES:
                raise InputError(
                    f"Cue file {path}: category {cat!r} of language {lang!r} is unknown; "
                    f"use one of {', '.join(CUE_CATEGORIES)}."
                )
            if not isinstance(words, list) or not all(
                isinstance(w, str) and w.strip() for w in words
            ):
                raise InputError(
                    f"Cue file {path}: {lang}.{cat} must be a list of non-empty strings."
                )
    return data


def _cue_form(word: str) -> str:
    """Return the matching form of a token: case-folded, no accents, straight apostrophe."""
    return fold(word).replace("\u2019", "'")


class _Lexicon:
    """One language's cues, tokenised and indexed by first word for fast matching.

    Hashed by identity so parsed sentences can be cached per lexicon.
    """

    __slots__ = ("by_first", "prefixes", "scope", "lang")

    def __init__(self, section: Mapping[str, Sequence[str]], lang: str, scope: int) -> None:
        self.lang = lang
        self.scope = scope
        self.by_first: dict[str, list[tuple[str, tuple[str, ...]]]] = defaultdict(list)
        self.prefixes: list[tuple[str, str]] = []  # single-word wildcard cues
        for cat, words in section.items():
            for cue in words:
                toks = tuple(_cue_form(cue[s:e]) for s, e in tokenize(cue, lang))
                if not toks:
                    continue
                if len(toks) == 1 and toks[0].endswith("*"):
                    self.prefixes.append((cat, toks[0][:-1]))
                else:
                    self.by_first[toks[0]].append((cat, toks))


_LEXICONS: dict[tuple[int, str], tuple[Cues, _Lexicon]] = {}


def _lexicon(cues: Cues, lang: str) -> _Lexicon:
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
        scope = int(cues.get("_settings", {}).get("negation_scope", 5))
        hit = (cues, _Lexicon(cues.get(code, {}), lang or "xx", scope))
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


def _find_all(words: Sequence[str], lex: _Lexicon) -> dict[str, list[tuple[int, int]]]:
    """Return every cue match per category as token ranges ``(i, j)``."""
    found: dict[str, list[tuple[int, int]]] = defaultdict(list)
    for i, w in enumerate(words):
        for cat, toks in lex.by_first.get(w, ()):
            if _match_cue(words, i, toks):
                found[cat].append((i, i + len(toks)))
        for cat, prefix in lex.prefixes:
            if w.startswith(prefix):
                found[cat].append((i, i + 1))
    return found


# ------------------------------------------------------------------ parsing


class _Parsed:
    """Tokens of a sentence with cue matches, clause boundaries and negation marks."""

    __slots__ = ("offsets", "words", "matches", "boundary", "negated", "trigger", "contrast")

    def __init__(self, text: str, lex: _Lexicon) -> None:
        self.offsets = tokenize(text, lex.lang)
        self.words = [_cue_form(text[s:e]) for s, e in self.offsets]
        n = len(self.words)
        found = _find_all(self.words, lex)
        # Pseudo-triggers (and excess phrases such as "not enough") contain a trigger
        # word but negate nothing; NegEx matches them first and skips their tokens.
        masked = [False] * n
        for cat in ("pseudo_negation", "excess"):
            for i, j in found.get(cat, ()):
                masked[i:j] = [True] * (j - i)
        self.boundary = [w in _PUNCT_BOUNDARY for w in self.words]
        for cat in ("termination", "contrast", "clause_break"):
            for i, j in found.get(cat, ()):
                self.boundary[i:j] = [True] * (j - i)
        self.contrast = [False] * n
        for i, _ in found.get("contrast", ()):
            self.contrast[i] = True
        self.trigger = [False] * n
        self.negated = [False] * n
        for i, j in found.get("negation_pre", ()):
            if any(masked[i:j]):
                continue
            self.trigger[i:j] = [True] * (j - i)
            k = j
            while k < n and k < j + lex.scope and not self.boundary[k]:
                self.negated[k] = True
                k += 1
        for i, j in found.get("negation_post", ()):
            if any(masked[i:j]):
                continue
            self.trigger[i:j] = [True] * (j - i)
            k = i - 1
            while k >= 0 and k >= i - lex.scope and not self.boundary[k]:
                self.negated[k] = True
                k -= 1
        self.matches = found


@lru_cache(maxsize=8192)
def _parse(text: str, lex: _Lexicon) -> _Parsed:
    return _Parsed(text, lex)


def _span_tokens(parsed: _Parsed, span: Span) -> tuple[int, int]:
    """Return the token range ``[a, b)`` covering the span (empty range at its place if none)."""
    inside = [k for k, (s, e) in enumerate(parsed.offsets) if s < span.end and e > span.start]
    if inside:
        return inside[0], inside[-1] + 1
    before = sum(1 for s, _ in parsed.offsets if s < span.start)
    return before, before


def _clause(parsed: _Parsed, a: int, b: int) -> tuple[int, int]:
    """Return the token range of the clause around ``[a, b)``, boundaries excluded."""
    lo = a
    while lo > 0 and not parsed.boundary[lo - 1]:
        lo -= 1
    hi = b
    while hi < len(parsed.words) and not parsed.boundary[hi]:
        hi += 1
    return lo, hi


def _segment(parsed: _Parsed, a: int, b: int) -> tuple[int, int]:
    """Return the stretch around the span between contrast words and sentence ends."""
    lo = a
    while lo > 0 and not (parsed.contrast[lo - 1] or parsed.words[lo - 1] in _SENTENCE_END):
        lo -= 1
    hi = b
    while hi < len(parsed.words) and not (parsed.contrast[hi] or parsed.words[hi] in _SENTENCE_END):
        hi += 1
    return lo, hi


# ------------------------------------------------------------------ features


def stance_features(sentence: Sentence, span: Span, cues: Cues) -> dict[str, float]:
    """Return the stance features of a mention, all relative to the span.

    Named features (used by :func:`rule_stance` and the model) count cue words before
    and after the span inside its clause (``cue_liked_before``, ``cue_disliked_after_neg``
    when negated...), their net polarity (``clause_liked``, ``clause_disliked``), cues
    elsewhere in the same contrast segment (``seg_liked``...), negation of the span
    (``span_negated``, ``span_negated_fault``, ``span_negated_good``), excess
    (``excess``, ``excess_near``), contrast (``after_contrast``, ``before_contrast``,
    ``other_side_liked``, ``other_side_disliked``), comparison (``comparison``,
    ``comparison_less``, ``span_before_marker``, ``span_after_marker``), wishes
    (``wanted_before``, ``wanted_clause``, ``wanted_neg``) and the question
    (``q_liked``, ``q_disliked``, ``q_wanted``). Keys starting ``w`` are the words
    within :data:`WINDOW` tokens of the span (``wL:``/``wR:`` by side, ``wL1:``/``wR1:``
    adjacent, ``wN:`` when negated, ``wC:`` elsewhere in the clause); they never
    include the span's own words.

    Args:
        sentence: The sentence holding the mention.
        span: The mention, in character offsets of ``sentence.text``.
        cues: A lexicon from :func:`load_cues`.

    Returns:
        Feature name -> value; absent features are zero.
    """
    lex = _lexicon(cues, sentence.lang)
    p = _parse(sentence.text, lex)
    n = len(p.words)
    a, b = _span_tokens(p, span)
    lo, hi = _clause(p, a, b)
    seg_lo, seg_hi = _segment(p, a, b)
    f: dict[str, float] = defaultdict(float)

    def inc(key: str, value: float = 1.0) -> None:
        f[key] += value

    in_span: dict[str, bool] = {}
    for cat in ("liked", "disliked", "wanted"):
        for i, j in p.matches.get(cat, ()):
            if i < b and j > a:  # cue inside the span: only for negation logic
                in_span[cat] = True
                continue
            side = "before" if j <= a else "after"
            neg = p.negated[i]
            if lo <= i and j <= hi:
                inc(f"cue_{cat}_{side}{'_neg' if neg else ''}")
                dist = a - j if side == "before" else i - b
                if dist <= 2:
                    inc(f"near_{cat}{'_neg' if neg else ''}")
                if cat == "wanted":
                    inc("wanted_neg" if neg else "wanted_clause")
                else:
                    inc(_flip(cat) if neg else f"clause_{cat}")
            elif seg_lo <= i and j <= seg_hi:
                if cat == "wanted" and side == "before":
                    inc("wanted_neg" if neg else "wanted_before")
                elif cat != "wanted":
                    inc("seg_" + (_other(cat) if neg else cat))
            elif (
                cat == "wanted"
                and side == "before"
                and not any(p.words[k] in _SENTENCE_END for k in range(j, a))
            ):
                # A wish reaches over a contrast ("I wish it were sweet, but also big").
                inc("wanted_neg" if neg else "wanted_before")

    span_neg = any(p.negated[k] and not p.trigger[k] for k in range(a, b))
    if span_neg:
        inc("span_negated")
        if in_span.get("disliked"):
            inc("span_negated_fault")
        if in_span.get("liked"):
            inc("span_negated_good")

    for i, j in p.matches.get("excess", ()):
        if lo <= i and j <= hi or (i < b and j > a):
            inc("excess")
            if (a - 3 <= i < b) or (i < b and j > a):
                inc("excess_near")

    contrasts = [k for k in range(n) if p.contrast[k]]
    before = [k for k in contrasts if k < a]
    after = [k for k in contrasts if k >= b]
    if before:
        inc("after_contrast")
        _other_side(p, before[-1], a, True, inc)
    if after:
        inc("before_contrast")
        _other_side(p, after[0], b, False, inc)

    _comparison(p, lex, a, b, lo, hi, inc)
    _question(sentence.question, lex, inc)

    for k in range(max(0, a - WINDOW), a):
        _word_feature(p, k, "L", a - k, lo <= k, inc)
    for k in range(b, min(n, b + WINDOW)):
        _word_feature(p, k, "R", k - b + 1, k < hi, inc)
    for k in list(range(lo, max(lo, a - WINDOW))) + list(range(min(hi, b + WINDOW), hi)):
        inc(f"wC:{p.words[k]}")
    return dict(f)


def _flip(cat: str) -> str:
    """Return the clause polarity feature a negated cue adds ("not good" -> disliked)."""
    return "clause_disliked" if cat == "liked" else "clause_liked"


def _other(cat: str) -> str:
    return "disliked" if cat == "liked" else "liked"


def _word_feature(p: _Parsed, k: int, side: str, dist: int, in_clause: bool, inc: Any) -> None:
    word = p.words[k]
    inc(f"w{side}:{word}")
    if dist == 1:
        inc(f"w{side}1:{word}")
    if p.negated[k]:
        inc(f"wN:{word}")
    if not in_clause:
        inc(f"w{side}x:{word}")  # the same word across a clause boundary weighs differently


def _other_side(p: _Parsed, k: int, edge: int, span_after: bool, inc: Any) -> None:
    """Count the net cue polarity across the contrast word at ``k`` from the span."""
    if span_after:
        lo = k
        while lo > 0 and not p.contrast[lo - 1] and p.words[lo - 1] not in _SENTENCE_END:
            lo -= 1
        rng = (lo, k)
    else:
        hi = k + 1
        while hi < len(p.words) and not p.contrast[hi] and p.words[hi] not in _SENTENCE_END:
            hi += 1
        rng = (k + 1, hi)
    score = 0
    for cat, sign in (("liked", 1), ("disliked", -1)):
        for i, j in p.matches.get(cat, ()):
            if rng[0] <= i and j <= rng[1]:
                score += -sign if p.negated[i] else sign
    if score > 0:
        inc("other_side_liked")
    elif score < 0:
        inc("other_side_disliked")


def _comparison(p: _Parsed, lex: _Lexicon, a: int, b: int, lo: int, hi: int, inc: Any) -> None:
    comparatives = [i for i, _ in p.matches.get("comparative", ())]
    lessers = [i for i, _ in p.matches.get("comparative_less", ())]
    for i, j in p.matches.get("comparison_marker", ()):
        ambiguous = lex.lang != "en" and p.words[i] in {"que", "qu'"}
        # French and Spanish "que" is a comparison only after a comparative word.
        if ambiguous and not any(c < i for c in comparatives):
            continue
        if not (lo <= i < hi or (j <= a and a - j <= 3) or (b <= i and i - b <= 6)):
            continue
        inc("comparison")
        if any(c < i for c in lessers):
            inc("comparison_less")
        inc("span_before_marker" if b <= i else "span_after_marker")
        return


def _question(question: str | None, lex: _Lexicon, inc: Any) -> None:
    """Add the lean of the question the answer replied to."""
    if not question:
        return
    q = _parse(question, lex)
    taken = [False] * len(q.words)
    # "don't like" holds "like": disliked cues claim their words first, then wishes.
    for cat in ("question_disliked", "question_wanted", "question_liked"):
        for i, j in q.matches.get(cat, ()):
            if any(taken[i:j]):
                continue
            if cat == "question_liked" and q.negated[i]:
                inc("q_disliked")  # "what do you not appreciate": a negated like
            else:
                inc("q_" + cat.split("_", 1)[1])
            taken[i:j] = [True] * (j - i)


# ------------------------------------------------------------------ rules


def rule_stance(features: Mapping[str, float]) -> tuple[str, float]:
    """Return a stance and a confidence from cue features alone (the cold-start answer).

    The rules, first match wins: a negated wish is disliked; a wish before the span
    or in its clause is wanted; excess is disliked; a negated fault word in the span
    is liked and a negated good word disliked; then the net polarity of cues in the
    clause, then in the contrast segment, then the opposite of the other side of a
    contrast; a negated span with no cue is disliked (the trait is missing); the
    praised side of a comparison is liked (the lowered side disliked); then the
    question's lean; else neutral.

    Args:
        features: Features from :func:`stance_features`.

    Returns:
        ``(stance, confidence)`` with confidence in ``[0.4, 0.85]``.
    """
    g = features.get
    if g("wanted_neg", 0) and not g("wanted_before", 0) and not g("wanted_clause", 0):
        return "disliked", 0.6
    if g("wanted_before", 0) or g("wanted_clause", 0):
        return "wanted", 0.75
    if g("excess_near", 0) or g("excess", 0):
        return "disliked", 0.75 if g("excess_near", 0) else 0.65
    if g("span_negated_fault", 0):
        return "liked", 0.7
    if g("span_negated_good", 0):
        return "disliked", 0.7
    score = g("clause_liked", 0) - g("clause_disliked", 0)
    if score:
        return ("liked" if score > 0 else "disliked"), min(0.6 + 0.1 * abs(score), 0.85)
    seg = g("seg_liked", 0) - g("seg_disliked", 0)
    if seg:
        return ("liked" if seg > 0 else "disliked"), 0.55
    if g("after_contrast", 0) or g("before_contrast", 0):
        if g("other_side_liked", 0):
            return "disliked", 0.55
        if g("other_side_disliked", 0):
            return "liked", 0.55
    if g("span_negated", 0):
        return "disliked", 0.55
    if g("comparison", 0) and g("span_before_marker", 0):
        return ("disliked" if g("comparison_less", 0) else "liked"), 0.55
    for q, stance in (("q_wanted", "wanted"), ("q_disliked", "disliked"), ("q_liked", "liked")):
        if g(q, 0):
            return stance, 0.5
    return "neutral", 0.4


def rule_proba(features: Mapping[str, float]) -> np.ndarray:
    """Return :func:`rule_stance` as a distribution over :data:`STANCES`."""
    stance, conf = rule_stance(features)
    out = np.full(len(STANCES), (1.0 - conf) / (len(STANCES) - 1))
    out[STANCES.index(stance)] = conf
    return out


# ------------------------------------------------------------------ model


def _model_features(sentence: Sentence, span: Span, cues: Cues) -> dict[str, float]:
    """Return :func:`stance_features` plus the rule's answer, so the model can learn to trust it."""
    f = stance_features(sentence, span, cues)
    f[f"rule={rule_stance(f)[0]}"] = 1.0
    return f


class StanceModel:
    """A logistic regression over span-relative stance features.

    Until :meth:`fit` is called, :meth:`predict` and :meth:`predict_proba_many`
    answer with :func:`rule_stance` (cold start); an unfitted model saves and loads
    too, and keeps answering with the rules.

    Args:
        C: Inverse regularisation strength of the logistic regression; 0.3 was the
            best of 0.1, 0.3 and 1.0 on the MAMS validation split (0.71 accuracy).
        max_iter: Iteration limit of the solver.
        class_weight: ``None`` or ``"balanced"``, passed to the logistic regression.
        cues_path: A user cue file merged over the packaged lexicon (see :func:`load_cues`).
    """

    def __init__(
        self,
        *,
        C: float = 0.3,
        max_iter: int = 2000,
        class_weight: str | None = None,
        cues_path: str | None = None,
    ) -> None:
        self.C = C
        self.max_iter = max_iter
        self.class_weight = class_weight
        self.cues_path = cues_path

    def get_params(self) -> dict[str, Any]:
        """Return the constructor arguments, to record with each saved model."""
        return {
            "C": self.C,
            "max_iter": self.max_iter,
            "class_weight": self.class_weight,
            "cues_path": self.cues_path,
        }

    @property
    def cues(self) -> Cues:
        """The lexicon in use: the fitted one, else loaded from ``cues_path``."""
        fitted: Cues | None = getattr(self, "cues_", None)
        if fitted is not None:
            return fitted
        cold: Cues | None = getattr(self, "_cold_cues", None)
        if cold is None:
            # Loaded once and kept, so the compiled-lexicon cache (keyed by identity) hits;
            # the packaged lexicon is one object shared by every model that uses it.
            cold = self._cold_cues = (
                _packaged_cues() if self.cues_path is None else load_cues(self.cues_path)
            )
        return cold

    def fit(self, examples: Iterable[tuple[Sentence, Span, str]]) -> StanceModel:
        """Learn stance from labelled mentions.

        Args:
            examples: ``(sentence, span, stance)`` triples, stance one of :data:`STANCES`.

        Returns:
            The fitted model.

        Raises:
            InputError: When a stance is unknown or fewer than two stances occur.
        """
        examples = list(examples)
        labels = []
        for n, (_, _, stance) in enumerate(examples, start=1):
            if stance not in STANCES:
                raise InputError(
                    f"Stance example {n} has stance {stance!r}; use one of {', '.join(STANCES)}."
                )
            labels.append(stance)
        if len(set(labels)) < 2:
            raise InputError(
                "Stance training needs mentions of at least two stances; "
                f"got {sorted(set(labels))}. Label more mentions or keep the rule-based stance."
            )
        cues = load_cues(self.cues_path)
        X = [_model_features(s, sp, cues) for s, sp, _ in examples]
        pipe = Pipeline(
            [
                ("vectorizer", DictVectorizer()),
                (
                    "classifier",
                    LogisticRegression(
                        C=self.C,
                        max_iter=self.max_iter,
                        class_weight=self.class_weight,
                        # A looser stop than the default: same MAMS test accuracy
                        # (0.694 vs 0.692), a third less fitting time.
                        tol=1e-3,
                    ),
                ),
            ]
        )
        pipe.fit(X, labels)
        self.cues_ = cues
        self.pipeline_ = pipe
        self.classes_ = [str(c) for c in pipe.classes_]
        return self

    @property
    def is_fitted(self) -> bool:
        """Whether :meth:`fit` (or :meth:`load`) has given the model learned state."""
        return hasattr(self, "pipeline_")

    def predict_proba_many(self, items: Sequence[tuple[Sentence, Span]]) -> np.ndarray:
        """Return an ``(n, 4)`` array of stance probabilities, columns in :data:`STANCES` order."""
        return self.predict_proba_blend(items, 1.0)

    def predict_proba_blend(
        self, items: Sequence[tuple[Sentence, Span]], weight: float
    ) -> np.ndarray:
        """Return ``weight`` times the learned probabilities plus the rest from the cue rules.

        One feature pass serves both; an unfitted model gives the rules alone.
        """
        cues = self.cues
        feats = [_model_features(s, sp, cues) for s, sp in items]
        if not feats:
            return np.zeros((0, len(STANCES)))
        if not self.is_fitted or weight <= 0.0:
            return np.vstack([rule_proba(f) for f in feats])
        proba = self.pipeline_.predict_proba(feats)
        out = np.zeros((len(feats), len(STANCES)))
        for col, cls in enumerate(self.classes_):
            out[:, STANCES.index(cls)] = proba[:, col]
        if weight >= 1.0:
            return out
        rules = np.vstack([rule_proba(f) for f in feats])
        blended: np.ndarray = weight * out + (1.0 - weight) * rules
        return blended

    def predict_many(self, items: Sequence[tuple[Sentence, Span]]) -> list[tuple[str, float]]:
        """Return ``(stance, probability)`` for each ``(sentence, span)``."""
        proba = self.predict_proba_many(items)
        best = proba.argmax(axis=1) if len(proba) else []
        return [(STANCES[k], float(proba[i, k])) for i, k in enumerate(best)]

    def predict(self, sentence: Sentence, span: Span) -> tuple[str, float]:
        """Return the stance of one mention and its probability."""
        return self.predict_many([(sentence, span)])[0]

    def save(self, directory: str | Path) -> None:
        """Write the model to ``directory`` as ``stance.json`` and, if fitted, ``stance.skops``.

        An unfitted model saves its parameters and cues, and loads back unfitted
        (answering with the rules), so a model version without stance labels still
        round-trips.
        """
        folder = Path(directory)
        folder.mkdir(parents=True, exist_ok=True)
        if self.is_fitted:
            skops.io.dump(self.pipeline_, folder / _SKOPS_FILE)
        elif (folder / _SKOPS_FILE).exists():
            (folder / _SKOPS_FILE).unlink()  # a stale classifier must not come back on load
        meta = {
            "format": _FORMAT,
            "params": self.get_params(),
            "classes": getattr(self, "classes_", None),
            "cues": self.cues,
        }
        write_meta(folder / _JSON_FILE, meta)

    @classmethod
    def load(cls, directory: str | Path) -> StanceModel:
        """Read a model written by :meth:`save`.

        Raises:
            ModelError: When the files are missing, foreign or hold unexpected types.
        """
        folder = Path(directory)
        meta = read_meta(folder / _JSON_FILE, _FORMAT, "stance model")
        model = cls(**meta["params"])
        if meta.get("classes") is None:
            model._cold_cues = meta["cues"]  # unfitted: rules over the saved cues
            return model
        model.pipeline_ = load_trusted_skops(folder / _SKOPS_FILE, Pipeline)
        model.classes_ = list(meta["classes"])
        model.cues_ = meta["cues"]
        return model


# ------------------------------------------------------------------ comparisons


def find_comparisons(text: str, lang: str, cues: Cues | None = None) -> list[tuple[int, int]]:
    """Return the character offsets of comparison markers ("than", "compared to", "que").

    What follows a marker is the reference of the comparison ("bigger than Kivuli").
    French and Spanish "que" counts only after a comparative word ("plus ... que",
    "más ... que"), since it is also a relative pronoun and a conjunction.

    Args:
        text: One sentence.
        lang: Its language tag.
        cues: A lexicon from :func:`load_cues` (the packaged one when ``None``).

    Returns:
        ``(start, end)`` of each marker, in order.
    """
    lex = _lexicon(cues if cues is not None else _packaged_cues(), lang)
    p = _parse(text, lex)
    comparatives = [i for i, _ in p.matches.get("comparative", ())]
    out: list[tuple[int, int]] = []
    for i, j in sorted(p.matches.get("comparison_marker", ())):
        if p.words[i] in {"que", "qu'"} and not any(c < i for c in comparatives):
            continue
        if out and p.offsets[i][0] < out[-1][1]:
            continue  # "que" inside "que el": keep the first, longest-starting match
        out.append((p.offsets[i][0], p.offsets[j - 1][1]))
    return out


@lru_cache(maxsize=1)
def _packaged_cues() -> Cues:
    return load_cues()
