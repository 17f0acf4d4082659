"""Dense stance features: the pretrained encoder's view of a mention's own context.

The cue lexicon reads stance only in languages it has words for. The multilingual
encoder of :mod:`extractor.nlp.pretrained` places "the taste is very good", "le goût est
très bon" and "el sabor es muy bueno" near each other, so a stance model that also reads
the encoder's vectors of the text around a mention learns from labels in one language
and applies what it learned in another, cue words or not.

A sentence often holds several mentions of different stance ("the taste is good but
the pods rot"), so most of these views belong to the mention alone. The blocks
(:data:`BLOCKS`, each of unit length, or zero when empty):

* ``clause``: the mention's clause (between the clause boundaries of
  :func:`extractor.models.cues.clause`, span included);
* ``sentence``: the whole sentence;
* ``region``: the mention's share of the sentence, the tokens nearer to it than to any
  other mention of the same sentence (cut halfway between neighbouring mentions);
* ``mention``: the span's own words (what is usually said of such a trait);
* ``left`` and ``right``: the mean of the word vectors on each side, weighted by
  ``exp(-(d - 1) / TAU)`` at distance ``d`` and stopping at the next other mention;
* ``before`` and ``after``: the :data:`SIDE_WORDS` words on each side of the mention,
  stopping at the next other mention, encoded as one phrase each (zero when none);
* ``others``: the mean of the other mentions' ``region`` rows (zero for a mention alone
  in its sentence), so the model can read a mention against its neighbours.

The other mentions of a sentence are those among the items passed in the same call
(the bundle passes every span it tagged); a mention passed alone has the whole
sentence as its region. The blocks were chosen on MAMS by 3-fold cross-validation on the
train split only; the figures are in DEVELOPERS.md, "Stance figures". Text vectors are
cached per text, word vectors by the space, so a sentence predicted again costs no
encoder call.
"""

from __future__ import annotations

import threading
from collections import OrderedDict, defaultdict
from collections.abc import Iterable, Sequence

import numpy as np

from extractor.models.cue_file import Cues
from extractor.models.cues import Parsed, clause, lexicon, parse, span_tokens
from extractor.nlp.pretrained import Space
from extractor.types import Sentence, Span

BLOCKS = (
    "clause", "sentence", "region", "mention", "left", "right", "before", "after", "others",
)  # fmt: skip
"""The dense blocks of :func:`context_vectors`, in column order."""

DEFAULT_BLOCKS = ("clause", "sentence", "region", "mention", "before", "after", "others")
"""The blocks a new stance model reads (MAMS CV on train 0.772; clause to mention alone
0.755). The side word averages (``left``, ``right``) lift MAMS too (0.767) but are
single-word vectors, which the encoder aligns across languages less well than phrases: a
model learned from English MAMS labels then read 9 of 12 French and Spanish check
sentences right instead of 10 (``tests/models/test_stance_context.py``), and stance
learned in one language must carry to the others. The two-word phrases ``before`` and
``after`` read the same neighbourhood as phrases and keep the 10."""

OLD_BLOCKS = ("clause", "sentence")
"""The blocks of models saved before the region, mention and side blocks existed."""

SIDE_WORDS = 2
"""Words each side in the ``before`` and ``after`` phrases; chosen by CV on MAMS train (2, 3, 5)."""

TAU = 1.0
"""Decay length (tokens) of the side word averages; chosen by CV on MAMS train (1, 2, 4)."""

CACHE_SIZE = 16384
"""Text vectors kept per process (512 floats each: about 32 MB); up to six texts a mention."""

_CACHE: OrderedDict[tuple[str, str], np.ndarray] = OrderedDict()
_LOCK = threading.Lock()


def context_text(sentence: Sentence, span: Span, cues: Cues) -> str:
    """Return the text of the clause holding the span (the sentence when none is found)."""
    p = parse(sentence.text, lexicon(cues, sentence.lang))
    a, b = span_tokens(p, span)
    lo, hi = clause(p, a, b)
    return _slice(sentence.text, p, lo, hi)


def region_bounds(p: Parsed, a: int, b: int, others: Sequence[tuple[int, int]]) -> tuple[int, int]:
    """Return the token range of the mention ``[a, b)``'s share of the sentence.

    It runs halfway to the nearest other mention on each side (to the sentence's ends
    when there is none); ``others`` are the token ranges of the other mentions.
    """
    before = [e for s, e in others if e <= a]
    after = [s for s, e in others if s >= b]
    lo = (max(before) + a + 1) // 2 if before else 0
    hi = (b + min(after)) // 2 if after else len(p.words)
    return min(lo, a), max(hi, b)


def context_vectors(
    space: Space,
    items: Sequence[tuple[Sentence, Span]],
    cues: Cues,
    blocks: Sequence[str] = BLOCKS,
) -> np.ndarray:
    """Return one row per mention: the blocks of :data:`BLOCKS` asked for, side by side.

    Args:
        space: The loaded pretrained space.
        items: ``(sentence, span)`` pairs; pairs of one sentence are each other's
            "other mentions".
        cues: The lexicon whose tokens and clause boundaries delimit the contexts.
        blocks: Which blocks, in order (names of :data:`BLOCKS`).

    Returns:
        An ``(n, len(blocks) * space dimension)`` array; each block of unit length
        (``others``: a mean of unit rows), or zero when its text is empty.
    """
    if not items:
        return np.zeros((0, 0), dtype=np.float32)
    parsed = [parse(s.text, lexicon(cues, s.lang)) for s, _ in items]
    tokens = [span_tokens(p, sp) for p, (_, sp) in zip(parsed, items, strict=True)]
    groups: defaultdict[tuple[int, str], list[int]] = defaultdict(list)
    for k, (s, _) in enumerate(items):
        groups[(s.id, s.text)].append(k)
    texts: dict[str, list[str]] = defaultdict(list)
    sides = []
    for k, ((s, sp), p, (a, b)) in enumerate(zip(items, parsed, tokens, strict=True)):
        others = [
            tokens[j] for j in groups[(s.id, s.text)] if j != k and not _overlap(tokens[j], a, b)
        ]
        texts["clause"].append(_slice(s.text, p, *clause(p, a, b)))
        texts["sentence"].append(s.text)
        texts["region"].append(_slice(s.text, p, *region_bounds(p, a, b, others)))
        texts["mention"].append(s.text[sp.start : sp.end] or s.text)
        before, after = side_bounds(p, a, b, others)
        texts["before"].append(_slice(s.text, p, *before) if before[1] > before[0] else "")
        texts["after"].append(_slice(s.text, p, *after) if after[1] > after[0] else "")
        if "left" in blocks or "right" in blocks:
            sides.append(_side_means(space, p, a, b, others))
    encoded = {
        name: _encoded(space, texts[name])
        for name in {"region" if n == "others" else n for n in blocks} - {"left", "right"}
    }
    columns = []
    for name in blocks:
        if name in ("left", "right"):
            columns.append(np.stack([row[0 if name == "left" else 1] for row in sides]))
        elif name == "others":
            columns.append(_others_mean(encoded["region"], groups.values()))
        else:
            columns.append(encoded[name])
    return np.hstack(columns).astype(np.float32)


def side_bounds(
    p: Parsed, a: int, b: int, others: Sequence[tuple[int, int]]
) -> tuple[tuple[int, int], tuple[int, int]]:
    """Return the token ranges of the :data:`SIDE_WORDS` words before and after ``[a, b)``.

    Each stops short of the nearest other mention on its side; an empty range
    (``lo == hi``) when the mention has no word on that side before one.
    """
    lo = max([e for s, e in others if e <= a], default=0)
    hi = min([s for s, e in others if s >= b], default=len(p.words))
    return (max(a - SIDE_WORDS, lo), a), (b, max(b, min(b + SIDE_WORDS, hi)))


def _others_mean(rows: np.ndarray, groups: Iterable[list[int]]) -> np.ndarray:
    """Return, per row, the mean of the other rows of its group (zero when alone)."""
    out = np.zeros_like(rows)
    for members in groups:
        if len(members) > 1:
            total = rows[members].sum(axis=0)
            out[members] = (total - rows[members]) / (len(members) - 1)
    return out


def _encoded(space: Space, texts: list[str]) -> np.ndarray:
    """Return the encoder's rows of the texts, through the cache; zero rows for empty texts."""
    rows = np.zeros((len(texts), space.dim), dtype=np.float32)
    full = [k for k, text in enumerate(texts) if text]
    if full:
        rows[full] = _cached_rows(space, [texts[k] for k in full])
    return rows


def _overlap(other: tuple[int, int], a: int, b: int) -> bool:
    return other[0] < b and a < other[1] or other == (a, b)


def _slice(text: str, p: Parsed, lo: int, hi: int) -> str:
    """Return the text of tokens ``[lo, hi)`` (the whole text when the range is empty)."""
    if hi <= lo:
        return text
    return text[p.offsets[lo][0] : p.offsets[hi - 1][1]]


def _side_means(
    space: Space, p: Parsed, a: int, b: int, others: Sequence[tuple[int, int]]
) -> tuple[np.ndarray, np.ndarray]:
    """Return the distance-weighted mean word vectors left and right of ``[a, b)``."""
    taken = [False] * len(p.words)
    for s, e in others:
        taken[s:e] = [True] * (e - s)
    means = []
    for ks in (range(a - 1, -1, -1), range(b, len(p.words))):
        words: list[str] = []
        for k in ks:
            if taken[k]:
                break
            words.append(p.words[k])
        if not words:
            means.append(np.zeros(space.dim, dtype=np.float32))
            continue
        weights = np.exp(-np.arange(len(words), dtype=np.float32) / TAU)
        mean = weights @ space.words(words)
        means.append(mean / (np.linalg.norm(mean) + 1e-9))
    return means[0], means[1]


def _cached_rows(space: Space, texts: list[str]) -> np.ndarray:
    """Return the encoder's rows of (non-empty) texts, through the cache."""
    with _LOCK:
        missing = sorted({t for t in texts if (space.name, t) not in _CACHE})
    fresh = dict(zip(missing, space.texts(missing), strict=True)) if missing else {}
    with _LOCK:
        for text, row in fresh.items():
            _CACHE[(space.name, text)] = row
        rows = []
        for text in texts:
            row = fresh.get(text)
            if row is None:
                row = _CACHE[(space.name, text)]
                _CACHE.move_to_end((space.name, text))
            rows.append(row)
        while len(_CACHE) > CACHE_SIZE:
            _CACHE.popitem(last=False)
    return np.stack(rows).astype(np.float32)
