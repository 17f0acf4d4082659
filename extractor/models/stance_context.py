"""Dense stance features: the pretrained encoder's vectors of a mention's clause and sentence.

The cue lexicon reads stance only in languages it has words for. The multilingual
encoder of :mod:`extractor.nlp.pretrained` places "the taste is very good", "le goût est
très bon" and "el sabor es muy bueno" near each other, so a stance model that also reads
the encoder's vector of the clause around a mention learns from labels in one language
and applies what it learned in another, cue words or not.

The texts encoded are the mention's clause (the tokens between the clause boundaries of
:func:`extractor.models.cues.clause`, span included) and its whole sentence, side by
side: on MAMS the pair beat the clause alone, the sentence alone, a window of five
tokens either side and the contrast segment (the figures are in DEVELOPERS.md, "Stance
figures"). Vectors are cached per text, so mentions sharing a clause or a sentence, and
a sentence predicted again, cost one encoder call.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Sequence

import numpy as np

from extractor.models.cues import Cues, clause, lexicon, parse, span_tokens
from extractor.nlp.pretrained import Space
from extractor.types import Sentence, Span

CACHE_SIZE = 8192
"""Clause vectors kept per process (512 floats each: about 16 MB)."""

_CACHE: OrderedDict[tuple[str, str], np.ndarray] = OrderedDict()
_LOCK = threading.Lock()


def context_text(sentence: Sentence, span: Span, cues: Cues) -> str:
    """Return the text of the clause holding the span (the sentence when none is found)."""
    p = parse(sentence.text, lexicon(cues, sentence.lang))
    a, b = span_tokens(p, span)
    lo, hi = clause(p, a, b)
    if hi <= lo:
        return sentence.text
    return sentence.text[p.offsets[lo][0] : p.offsets[hi - 1][1]]


def context_vectors(space: Space, items: Sequence[tuple[Sentence, Span]], cues: Cues) -> np.ndarray:
    """Return one row per mention: the encoder's vectors of its clause and its sentence.

    Args:
        space: The loaded pretrained space.
        items: ``(sentence, span)`` pairs.
        cues: The lexicon whose clause boundaries delimit the context.

    Returns:
        An ``(n, 2 * space dimension)`` array, both halves of unit length.
    """
    if not items:
        return np.zeros((0, 0), dtype=np.float32)
    clauses = _encoded(space, [context_text(s, sp, cues) for s, sp in items])
    sentences = _encoded(space, [s.text for s, _ in items])
    return np.hstack([clauses, sentences])


def _encoded(space: Space, texts: list[str]) -> np.ndarray:
    """Return the encoder's rows of the texts, through the cache."""
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
