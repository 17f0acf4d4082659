"""Stance features of a trait mention, all relative to the span.

Stance is read from the words *around* a mention, never from the mention itself: a
trait word says nothing about whether it is welcome (bitterness can be wanted), so
the span's own words are used only to decide whether the mention is negated ("it
does not rot": a fault under negation reads as liked) or qualified by excess ("too
small"). Everything else is relative to the span: cue words before and after it
inside its clause, the negation scope (:mod:`extractor.models.cues`), the side of a
contrast ("but") the span sits on, comparisons, wishes, and the question the answer
replied to. The cue rules (:func:`extractor.models.stance_rules.rule_stance`) and the learned
:class:`extractor.models.stance.StanceModel` both read these features.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Mapping
from typing import NamedTuple

from extractor.models.cue_file import Cues
from extractor.models.cues import (
    PUNCT_BOUNDARY,
    SENTENCE_END,
    Lexicon,
    Parsed,
    clause,
    lexicon,
    parse,
    segment,
    span_tokens,
)
from extractor.nlp.text import primary_subtag
from extractor.types import QuestionCode, Sentence, Span

Codebook = Mapping[str, QuestionCode]
"""A question codebook: question key -> its wording and direction."""

DIRECTION_FEATURES = {"likes": "q_liked", "dislikes": "q_disliked", "wishes": "q_wanted"}
"""The question feature each codebook direction gives (``open`` gives none)."""

WINDOW = 5
"""Tokens either side of a span whose words become context features of the learned model."""

_Features = defaultdict[str, float]


class _Where(NamedTuple):
    """Token ranges of a mention: the span ``[a, b)``, its clause and its contrast segment."""

    a: int
    b: int
    lo: int
    hi: int
    seg_lo: int
    seg_hi: int


# ------------------------------------------------------------------ features


def stance_features(
    sentence: Sentence, span: Span, cues: Cues, codebook: Codebook | None = None
) -> dict[str, float]:
    """Return the stance features of a mention, all relative to the span.

    Named features (used by :func:`~extractor.models.stance_rules.rule_stance` and the model)
    count cue words before and after the span inside its clause (``cue_liked_before``,
    ``cue_disliked_after_neg`` when negated...), their net polarity (``clause_liked``,
    ``clause_disliked``), cues elsewhere in the same contrast segment (``seg_liked``...),
    negation of the span (``span_negated``, ``span_negated_fault``, ``span_negated_good``),
    a span held off by a resistance word (``span_resisted``: "drought tolerant"),
    excess (``excess``, ``excess_near``), contrast (``after_contrast``, ``before_contrast``,
    ``other_side_liked``, ``other_side_disliked``), comparison (``comparison``,
    ``comparison_less``, ``span_before_marker``, ``span_after_marker``), wishes
    (``wanted_before``, ``wanted_clause``, ``wanted_neg``; ``wanted_if`` for a wish after
    a condition that holds the span) and the question
    (``q_liked``, ``q_disliked``, ``q_wanted``: from the codebook's direction when it
    has one, else from the cue words of the question's text). A cue word inside the span
    that is not negated marks it (``span_good``, ``span_fault``: "then they spoil",
    "cozinha rápido"). Keys starting ``w`` are the words
    within :data:`WINDOW` tokens of the span (``wL:``/``wR:`` by side, ``wL1:``/``wR1:``
    adjacent, ``wN:`` when negated, ``wC:`` elsewhere in the clause); they never
    include the span's own words.

    Args:
        sentence: The sentence holding the mention.
        span: The mention, in character offsets of ``sentence.text``.
        cues: A lexicon from :func:`~extractor.models.cue_file.load_cues`.
        codebook: The question codebook, if any (see :mod:`extractor.ingest.codebook`).

    Returns:
        Feature name -> value; absent features are zero.
    """
    lex = lexicon(cues, sentence.lang)
    p = parse(sentence.text, lex)
    a, b = span_tokens(p, span)
    where = _Where(a, b, *clause(p, a, b), *segment(p, a, b))
    f: _Features = defaultdict(float)
    in_span = _cue_features(p, where, f)
    _indifference_features(p, where, f)
    _negation_features(p, where, in_span, f)
    _excess_features(p, where, f)
    _contrast_features(p, where, f)
    _comparison(p, lex, where, f)
    asked = question_features(sentence.question, lex, codebook, cues)
    f.update(asked)
    _answer_features(p, where, asked, f)
    _window_features(p, where, f)
    return dict(f)


def _cue_features(p: Parsed, where: _Where, f: _Features) -> set[str]:
    """Count liked, disliked and wanted cues around the span; return those inside it."""
    a, b, lo, hi, seg_lo, seg_hi = where
    in_span: set[str] = set()
    for cat in ("liked", "disliked", "wanted"):
        for i, j in p.matches.get(cat, ()):
            if i < b and j > a:  # cue inside the span: only for negation logic
                if not all(p.trigger[i:j]):  # "resistant" in "drought resistant" negates
                    in_span.add(cat)
                continue
            side = "before" if j <= a else "after"
            neg = p.negated[i]
            if lo <= i and j <= hi:
                f[f"cue_{cat}_{side}{'_neg' if neg else ''}"] += 1.0
                dist = a - j if side == "before" else i - b
                if dist <= 2:
                    f[f"near_{cat}{'_neg' if neg else ''}"] += 1.0
                if cat == "wanted":
                    f["wanted_neg" if neg else "wanted_clause"] += 1.0
                else:
                    f[_flip(cat) if neg else f"clause_{cat}"] += 1.0
            elif seg_lo <= i and j <= seg_hi:
                if cat == "wanted" and side == "before":
                    f["wanted_neg" if neg else "wanted_before"] += 1.0
                elif cat == "wanted" and _in_condition(p, where):
                    # The condition names what is wished for: "si elle restait tendre, ce
                    # serait parfait", "if it kept longer, I would like it more".
                    f["wanted_neg" if neg else "wanted_if"] += 1.0
                elif cat != "wanted":
                    f["seg_" + (_other(cat) if neg else cat)] += 1.0
            elif (
                cat == "wanted"
                and side == "before"
                and not any(p.words[k] in SENTENCE_END for k in range(j, a))
            ):
                # A wish reaches over a contrast ("I wish it were sweet, but also big").
                f["wanted_neg" if neg else "wanted_before"] += 1.0
    return in_span


def _in_condition(p: Parsed, where: _Where) -> bool:
    """Return whether a condition word ("if", "si", "kama") opens the span's clause before it."""
    return any(where.lo <= i < where.a for i, _ in p.matches.get("condition", ()))


def _indifference_features(p: Parsed, where: _Where, f: _Features) -> None:
    """Mark a span said not to matter ("no importa el color", "rouge ou tacheté, peu importe").

    The phrase counts inside the span's clause, or after the span or the rest of its
    clause with only punctuation between when it closes its own clause ("X, peu
    importe.", "rouge ou tacheté, peu importe."). A phrase that goes on
    governs something else: in "barely enough room (no matter what the size of your
    party)" the room is still a fault (MAMS gold).
    """
    a, b, lo, hi = where.a, where.b, where.lo, where.hi
    n = len(p.words)
    for i, j in p.matches.get("indifference", ()):
        if i < b and j > a:
            continue
        closes = j == n or p.words[j] in PUNCT_BOUNDARY
        # Right after the span, or after the rest of its clause: "rouge ou tacheté, peu importe".
        start = b if b <= i <= b + 2 else hi
        after = start <= i <= start + 2 and all(
            p.words[k] in PUNCT_BOUNDARY for k in range(start, i)
        )
        if (lo <= i and j <= hi) or (after and closes):
            f["indifferent"] += 1.0


def _answer_features(p: Parsed, where: _Where, asked: Mapping[str, float], f: _Features) -> None:
    """Mark what the answer's words mean against the question's lean.

    ``prefer_other``: asked only for faults, the answer states a preference before the
    span ("why did you prefer it least? - she prefers dry maize"): a wish for something
    else, not a praise of the variety (our maize labels, real answers: 12 such mentions,
    all wanted). ``wish_relative``: asked only for wishes, the span sits in a relative or
    complement clause ("one that does not rot", "que no pierda el color"): the clause
    describes the variety hoped for, so a fault in it is one to be rid of.
    """
    a, lo, seg_lo = where.a, where.lo, where.seg_lo
    if set(asked) == {"q_disliked"} and not f.get("span_after_marker"):
        # "prefers food than animal feeds": the reference of the preference is no wish.
        if any(
            seg_lo <= i and j <= a and not p.negated[i] for i, j in p.matches.get("preference", ())
        ):
            f["prefer_other"] += 1.0
    if set(asked) == {"q_wanted"}:
        # "que" of "parce que", "ya que" belongs to a longer connective, not to a clause.
        joined = [
            (i, j)
            for cat in ("termination", "clause_break", "contrast")
            for i, j in p.matches.get(cat, ())
            if j - i > 1
        ]
        for i, j in p.matches.get("relative", ()):
            if any(x <= i and j <= y for x, y in joined):
                continue
            if lo <= i < a or j == lo:
                f["wish_relative"] += 1.0
                break


def _negation_features(p: Parsed, where: _Where, in_span: set[str], f: _Features) -> None:
    """Mark a negated or resisted span, and whether its words are a fault or a good."""
    if any(p.resisted[k] and not p.trigger[k] for k in range(where.a, where.b)):
        f["span_resisted"] += 1.0  # "drought resistant", "withstands all weather"
    resisting = {k for cat in ("resistance_pre", "resistance_post")
                 for i, j in p.matches.get(cat, ()) for k in range(i, j)}  # fmt: skip
    if any(p.negated[k] and k in resisting for k in range(where.a, where.b)):
        # "not [drought resistant]": the span names a merit, and a negation reaches its
        # resistance word.
        f["span_negated"] += 1.0
        f["span_negated_good"] += 1.0
        return
    if any(p.negated[k] and not p.trigger[k] for k in range(where.a, where.b)):
        f["span_negated"] += 1.0
        if "disliked" in in_span:
            f["span_negated_fault"] += 1.0
        if "liked" in in_span:
            f["span_negated_good"] += 1.0
        return
    if "disliked" in in_span:
        f["span_fault"] += 1.0
    if "liked" in in_span:
        f["span_good"] += 1.0


def _excess_features(p: Parsed, where: _Where, f: _Features) -> None:
    """Count excess phrases ("too small") in the span's clause or inside the span."""
    a, b, lo, hi = where.a, where.b, where.lo, where.hi
    for i, j in p.matches.get("excess", ()):
        if lo <= i and j <= hi or (i < b and j > a):
            f["excess"] += 1.0
            if (a - 3 <= i < b) or (i < b and j > a):
                f["excess_near"] += 1.0


def _contrast_features(p: Parsed, where: _Where, f: _Features) -> None:
    """Mark the side of a contrast the span sits on and the polarity across it."""
    contrasts = [k for k in range(len(p.words)) if p.contrast[k]]
    before = [k for k in contrasts if k < where.a]
    after = [k for k in contrasts if k >= where.b]
    if before:
        f["after_contrast"] += 1.0
        _other_side(p, before[-1], True, f)
    if after:
        f["before_contrast"] += 1.0
        _other_side(p, after[0], False, f)


def _window_features(p: Parsed, where: _Where, f: _Features) -> None:
    """Add the words within :data:`WINDOW` tokens of the span and the rest of its clause."""
    a, b, lo, hi = where.a, where.b, where.lo, where.hi
    for k in range(max(0, a - WINDOW), a):
        _word_feature(p, k, "L", a - k, lo <= k, f)
    for k in range(b, min(len(p.words), b + WINDOW)):
        _word_feature(p, k, "R", k - b + 1, k < hi, f)
    for k in list(range(lo, max(lo, a - WINDOW))) + list(range(min(hi, b + WINDOW), hi)):
        f[f"wC:{p.words[k]}"] += 1.0


def _flip(cat: str) -> str:
    """Return the clause polarity feature a negated cue adds ("not good" -> disliked)."""
    return "clause_disliked" if cat == "liked" else "clause_liked"


def _other(cat: str) -> str:
    return "disliked" if cat == "liked" else "liked"


def _word_feature(p: Parsed, k: int, side: str, dist: int, in_clause: bool, f: _Features) -> None:
    word = p.words[k]
    f[f"w{side}:{word}"] += 1.0
    if dist == 1:
        f[f"w{side}1:{word}"] += 1.0
    if p.negated[k]:
        f[f"wN:{word}"] += 1.0
    if not in_clause:
        f[f"w{side}x:{word}"] += 1.0  # the same word across a clause boundary weighs differently


def _other_side(p: Parsed, k: int, span_after: bool, f: _Features) -> None:
    """Count the net cue polarity across the contrast word at ``k`` from the span."""
    if span_after:
        lo = k
        while lo > 0 and not p.contrast[lo - 1] and p.words[lo - 1] not in SENTENCE_END:
            lo -= 1
        rng = (lo, k)
    else:
        hi = k + 1
        while hi < len(p.words) and not p.contrast[hi] and p.words[hi] not in SENTENCE_END:
            hi += 1
        rng = (k + 1, hi)
    score = 0
    for cat, sign in (("liked", 1), ("disliked", -1)):
        for i, j in p.matches.get(cat, ()):
            if rng[0] <= i and j <= rng[1]:
                score += -sign if p.negated[i] else sign
    if score > 0:
        f["other_side_liked"] += 1.0
    elif score < 0:
        f["other_side_disliked"] += 1.0


def _comparison(p: Parsed, lex: Lexicon, where: _Where, f: _Features) -> None:
    a, b, lo, hi = where.a, where.b, where.lo, where.hi
    comparatives = [i for i, _ in p.matches.get("comparative", ())]
    lessers = [i for i, _ in p.matches.get("comparative_less", ())]
    for i, j in p.matches.get("comparison_marker", ()):
        ambiguous = lex.lang != "en" and p.words[i] in {"que", "qu'"}
        # French and Spanish "que" is a comparison only after a comparative word.
        if ambiguous and not any(c < i for c in comparatives):
            continue
        if not (lo <= i < hi or (j <= a and a - j <= 3) or (b <= i and i - b <= 6)):
            continue
        f["comparison"] += 1.0
        if any(c < i for c in lessers):
            f["comparison_less"] += 1.0
        f["span_before_marker" if b <= i else "span_after_marker"] += 1.0
        return


def question_features(
    question: str | None,
    lex: Lexicon,
    codebook: Codebook | None = None,
    cues: Cues | None = None,
) -> dict[str, float]:
    """Return the lean of the question an answer replied to, as ``q_*`` features.

    A codebook direction decides when there is one (``open``: no lean); otherwise the
    cue words of the question's text (the codebook's wording, else the question as
    stored) give it. A survey field name (``reason_lesspreferred``) reads as one word
    and gives none.

    The question is read in the answer's language first. A survey often asks in one
    language and is answered in another (English headers over French answers), so when
    ``cues`` is given and the answer's language finds no question word, the other
    languages of ``cues`` are tried in their order and the first that finds one gives
    the lean.
    """
    if not question:
        return {}
    code = (codebook or {}).get(question)
    if code is not None and code.direction is not None:
        feature = DIRECTION_FEATURES.get(code.direction)
        return {feature: 1.0} if feature else {}
    text = code.text if code is not None and code.text else question
    found = _question_lean(parse(text, lex))
    if found or cues is None:
        return found
    for lang in cues:
        if lang.startswith("_") or lang == primary_subtag(lex.lang):
            continue
        found = _question_lean(parse(text, lexicon(cues, lang)))
        if found:
            return found
    return {}


def _question_lean(q: Parsed) -> dict[str, float]:
    """Return the ``q_*`` features of a parsed question in one language."""
    f: _Features = defaultdict(float)
    taken = [False] * len(q.words)
    # "don't like" holds "like": disliked cues claim their words first, then wishes.
    for cat in ("question_disliked", "question_wanted", "question_liked"):
        for i, j in q.matches.get(cat, ()):
            if any(taken[i:j]):
                continue
            if cat == "question_liked" and q.negated[i]:
                f["q_disliked"] += 1.0  # "what do you not appreciate": a negated like
            else:
                f["q_" + cat.split("_", 1)[1]] += 1.0
            taken[i:j] = [True] * (j - i)
    # "Why?" asks for the reasons of a choice: liked, unless the question asks for
    # something else and "why" only follows it up ("which would you try, and why?").
    if not f and any(not any(taken[i:j]) for i, j in q.matches.get("question_reason", ())):
        f["q_liked"] += 1.0
    return dict(f)
