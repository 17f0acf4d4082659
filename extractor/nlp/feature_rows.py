"""Token attributes as rows of a model's weight table, for decoding without attribute strings.

:func:`sentence_rows` gives what :func:`~extractor.nlp.features.sentence_attribute_parts`
gives, with the second part of each token (the attributes of its place in the sentence)
turned into rows of a weight table, in the same order: ``index`` maps an attribute's
bytes to its row (a row of zeros for attributes the model never saw). What a word shows
its neighbours, and what two neighbouring words make together, are looked up once per
word and per pair of words and kept, so tagging builds and looks up those attribute
strings only the first time. Tests check the rows against the look-up of every attribute
on open data.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import NamedTuple

from extractor.nlp.features import (
    _BOS,
    _EOS,
    _OFFSETS,
    _PADS,
    Attributes,
    Clusters,
    _Featurizer,
    _featurizer,
    _Word,
)

_LIMIT = 1 << 17
"""Words (and pairs of words) whose rows are kept before the caches start afresh."""


class _WordRows(NamedTuple):
    """The rows of what one word shows the tokens around it."""

    as_prev_x: tuple[int, ...]
    as_next_x: tuple[int, ...]
    window: tuple[tuple[int, ...], ...]  # seen from a token at each of _OFFSETS away
    s3_prev: int
    s3_next: int


class _PairRows(NamedTuple):
    """The rows of the word pair (a, b), seen from b's token and from a's token."""

    from_second: tuple[int, int, int]
    from_first: tuple[int, int]


class _NamedRows(dict[str, int]):
    """Value -> row of the attribute ``name:value`` (a dictionary tag or concept), kept."""

    def __init__(self, name: str, index: Mapping[bytes, int]) -> None:
        super().__init__()
        self.name = name
        self.index = index

    def __missing__(self, value: str) -> int:
        row = self[value] = self.index[f"{self.name}:{value}".encode()]
        return row


class _RowEncoder:
    """Keeps the rows of words and word pairs for one featurizer and one weight index.

    Entries hold the words they were made for, so the ``id`` of a word in use keys its
    own entry only.
    """

    def __init__(self, featurizer: _Featurizer, index: Mapping[bytes, int]) -> None:
        self.featurizer = featurizer
        self.index = index
        self._words: dict[int, tuple[_Word, _WordRows]] = {}
        self._pairs: dict[tuple[int, int], tuple[_Word, _Word, _PairRows]] = {}
        self.own_tag = _NamedRows("d", index)
        self.concept = _NamedRows("dc", index)
        self.window_tags = tuple(_NamedRows(f"{off}d", index) for off in _OFFSETS)
        self.bos, self.eos = index[_BOS], index[_EOS]
        self.pads = tuple(index[p] for p in _PADS)

    def word(self, w: _Word) -> _WordRows:
        """Return the rows of what ``w`` shows its neighbours."""
        hit = self._words.get(id(w))
        if hit is None:
            if len(self._words) >= _LIMIT:
                self._words.clear()
            ix = self.index
            rows = _WordRows(
                as_prev_x=tuple(ix[a] for a in w.as_prev_x),
                as_next_x=tuple(ix[a] for a in w.as_next_x),
                window=tuple(tuple(ix[a] for a in seen) for seen in w.window),
                s3_prev=ix[w.s3_prev],
                s3_next=ix[w.s3_next],
            )
            hit = self._words[id(w)] = (w, rows)
        return hit[1]

    def pair(self, a: _Word, b: _Word) -> _PairRows:
        """Return the rows of the word pair ``a b`` (see ``features._Featurizer.sentence``)."""
        hit = self._pairs.get((id(a), id(b)))
        if hit is None:
            if len(self._pairs) >= _LIMIT:
                self._pairs.clear()
            ix = self.index
            lw_lw, c_c, c_lw = a.pair_prev
            next_lw, next_c = a.pair_next
            rows = _PairRows(
                (ix[lw_lw + b.lower], ix[c_c + b.coarse], ix[c_lw + b.lower]),
                (ix[next_lw + b.lower], ix[next_c + b.coarse]),
            )
            hit = self._pairs[id(a), id(b)] = (a, b, rows)
        return hit[2]


_encoder_in_use: _RowEncoder | None = None


def _encoder(clusters: Clusters | None, index: Mapping[bytes, int]) -> _RowEncoder:
    """Return the row encoder of the featurizer of ``clusters`` and of ``index``, kept."""
    global _encoder_in_use
    featurizer = _featurizer(clusters)
    found = _encoder_in_use
    if found is None or found.featurizer is not featurizer or found.index is not index:
        found = _encoder_in_use = _RowEncoder(featurizer, index)
    return found


def sentence_rows(
    tokens: Sequence[str],
    *,
    index: Mapping[bytes, int],
    dict_tags: Sequence[str] | None = None,
    dict_concepts: Sequence[str | None] | None = None,
    clusters: Clusters | None = None,
    lang: str = "",
    axes: bool = False,
) -> list[tuple[Attributes, list[int]]]:
    """Return each token's own attributes and the rows of the rest of its attributes.

    Args:
        tokens: The token texts, in order.
        index: Attribute bytes -> row of a weight table; it must give a row for any
            attribute (a row of zeros for unknown ones).
        dict_tags: As for :func:`~extractor.nlp.features.sentence_attributes`.
        dict_concepts: As for :func:`~extractor.nlp.features.sentence_attributes`.
        clusters: As for :func:`~extractor.nlp.features.sentence_attributes`.
        lang: As for :func:`~extractor.nlp.features.sentence_attributes`.
        axes: As for :func:`~extractor.nlp.features.sentence_attributes`.

    Returns:
        Per token, the first part of :func:`~extractor.nlp.features.sentence_attribute_parts`
        (the same tuple object) and the rows of its second part, in order.
    """
    enc = _encoder(clusters, index)
    words = [enc.featurizer.word(t, lang) for t in tokens]
    rows = [enc.word(w) for w in words]
    pairs = [enc.pair(a, b) for a, b in zip(words, words[1:], strict=False)]
    n = len(words)
    tag_rows = window_tag_rows = None
    if dict_tags is not None:
        tag_rows = [enc.own_tag[t] for t in dict_tags]
        window_tag_rows = [[seen[t] for t in dict_tags] for seen in enc.window_tags]
    out: list[tuple[Attributes, list[int]]] = []
    for i, w in enumerate(words):
        r: list[int] = []
        if i > 0:
            r += rows[i - 1].as_prev_x
        if i < n - 1:
            r += rows[i + 1].as_next_x
        if tag_rows is not None:
            r.append(tag_rows[i])
            concept = dict_concepts[i] if dict_concepts is not None else None
            if concept:
                r.append(enc.concept[concept])
        if i == 0:
            r.append(enc.bos)
        if i == n - 1:
            r.append(enc.eos)
        for k, off in enumerate(_OFFSETS):
            j = i + off
            if 0 <= j < n:
                r += rows[j].window[k]
                if window_tag_rows is not None:
                    r.append(window_tag_rows[k][j])
            else:
                r.append(enc.pads[k])
        if i > 0:
            r += pairs[i - 1].from_second
            r.append(rows[i - 1].s3_prev)
        if i < n - 1:
            r += pairs[i].from_first
            r.append(rows[i + 1].s3_next)
        out.append((w.own_axes if axes else w.own, r))
    return out
