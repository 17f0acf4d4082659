"""Token features for the CRF tagger, as python-crfsuite attributes.

Each token becomes a tuple of attribute names, each a feature of weight 1: ``b"lw:cook"``
(the indicator feature ``lw`` with value ``cook``, what CRFsuite also makes of the dict
``{"lw": "cook"}``) or a flag such as ``b"BOS"``. :func:`sentence_features` gives the
same features as readable dicts. Attributes that depend only on a word (its forms,
affixes, clusters, and what it shows as a neighbour) are built once per distinct word and
cached as bytes, which CRFsuite takes without conversion: building and converting
per-token dicts was most of the tagging time.
"""

from __future__ import annotations

import unicodedata
from collections.abc import Mapping, Sequence
from typing import Any, NamedTuple

from extractor.nlp.dictionary import stem_word
from extractor.nlp.fold import fold
from extractor.types import TAGS

WINDOW = 2
"""Neighbouring tokens seen on each side of a token."""

Clusters = Mapping[str, Any]
"""A word-cluster model from :func:`extractor.nlp.clusters.learn_clusters`."""

Attributes = tuple[bytes, ...]
"""One token's features as python-crfsuite attribute names (UTF-8), each of weight 1."""

SplitAttributes = tuple[Attributes, Attributes]
"""One token's attributes in two parts whose concatenation is its :data:`Attributes`: those
of the word alone (the same tuple object at every occurrence of the word while the cache
holds it), then those of its place in the sentence."""


def word_shape(word: str) -> str:
    """Return the shape of a word: ``X`` upper, ``x`` lower, ``d`` digit, other kept (``Xxxd``)."""
    out = []
    for ch in word[:12]:  # long words add nothing but distinct shapes
        if ch.isupper():
            out.append("X")
        elif ch.islower():
            out.append("x")
        elif ch.isdigit():
            out.append("d")
        else:
            out.append(ch)
    return "".join(out)


def short_shape(word: str) -> str:
    """Return the shape with runs of one class collapsed (``Xxxxd`` -> ``Xxd``)."""
    shape = word_shape(word)
    out = [c for i, c in enumerate(shape) if i == 0 or c != shape[i - 1]]
    return "".join(out)


def _is_punct(word: str) -> bool:
    return all(unicodedata.category(c).startswith("P") for c in word)


def _word_features(word: str, lang: str) -> list[tuple[str, str | None]]:
    """Return the features of a word that depend on nothing else, ``(name, value)``.

    A value of ``None`` marks a feature of weight 1 without a value (a flag).
    """
    lower = word.lower()
    feats: list[tuple[str, str | None]] = [
        ("bias", None),
        ("w", word),
        ("lw", lower),
        ("n", fold(word)),
        ("st", stem_word(word, lang)),
        ("sh", word_shape(word)),
        ("ssh", short_shape(word)),
    ]
    for k in range(1, 5):
        if len(lower) >= k:
            feats.append((f"p{k}", lower[:k]))
            feats.append((f"s{k}", lower[-k:]))
    if word.isdigit():
        feats.append(("digit", None))
    elif any(c.isdigit() for c in word):
        feats.append(("hasdigit", None))
    if _is_punct(word):
        feats.append(("punct", None))
    if word[:1].isupper():
        feats.append(("title", None))
    return feats


def cluster_ids(word: str, clusters: Clusters | None) -> tuple[str, ...]:
    """Return the cluster IDs of a word, coarse to fine, ``()`` when unknown or no model."""
    if not clusters:
        return ()
    ids = clusters["clusters"].get(fold(word))
    return tuple(str(i) for i in ids) if ids else ()


def space_ids(word: str, clusters: Clusters | None) -> tuple[str, ...]:
    """Return the word's clusters in the pretrained multilingual space, coarse to fine.

    ``()`` when the model has no pretrained clusters or does not know the word.
    """
    if not clusters:
        return ()
    ids = clusters.get("pretrained", {}).get("clusters", {}).get(fold(word))
    return tuple(str(i) for i in ids) if ids else ()


def neighbour_words(word: str, clusters: Clusters | None) -> list[str]:
    """Return the frequent words nearest to ``word`` in the cluster model, ``[]`` if none."""
    if not clusters:
        return []
    return list(clusters.get("neighbours", {}).get(fold(word), ()))


def _ids(found: Sequence[int] | None) -> tuple[str, ...]:
    return tuple(str(i) for i in found) if found else ()


_CLUSTER_KEYS = tuple(f"c{level}" for level in range(8))
_SPACE_KEYS = tuple(f"x{level}" for level in range(8))
AXES_SCALE = 2.0
"""Length of a word's vector of main-axis coordinates, as the tagger weighs it (the val
screen of DEVELOPERS.md, "Main-axis coordinates on few labels", chose it)."""


class AxisBlock(bytes):
    """A word's coordinates on the pretrained space's main axes, as the last of its attributes.

    The element itself is no attribute (its bytes name none: it adds no weight); it stands
    for the attributes ``names`` (``v0``, ``v1``, ...) with the float ``values``, in that
    order. The tagger gives them to CRFsuite as weighted attributes
    (:func:`extractor.models.crf_items.crf_tokens`), the numpy decoder adds weight x value.
    """

    names: tuple[bytes, ...]
    values: tuple[float, ...]

    @classmethod
    def of(cls, values: Sequence[float]) -> AxisBlock:
        """Return the block of these coordinates (scaled by :data:`AXES_SCALE`)."""
        block = cls(b"\x00axes")
        block.names = _AXIS_NAMES[: len(values)]
        block.values = tuple(AXES_SCALE * v for v in values)
        return block


_AXIS_NAMES = tuple(f"v{axis}".encode() for axis in range(256))
_OFFSETS = tuple(off for off in range(-WINDOW, WINDOW + 1) if off != 0)
_PADS = tuple(f"{off}lw:<pad>".encode() for off in _OFFSETS)
_DICT_TAGS = tuple({tag: f"{off}d:{tag}".encode() for tag in TAGS} for off in _OFFSETS)
_OWN_TAG = {tag: f"d:{tag}".encode() for tag in TAGS}
_BOS, _EOS = b"BOS", b"EOS"
_CACHE_LIMIT = 1 << 15
"""Distinct words whose features are kept before the cache starts afresh (memory bound)."""


class _Word(NamedTuple):
    """The attributes one word brings to its own token and to its neighbours', encoded."""

    own: Attributes  # word forms, affixes, shapes, flags, clusters, neighbours, space
    own_axes: Attributes  # own, then an AxisBlock of the word's main-axis coordinates
    as_prev_x: Attributes  # "-1x" of the next token: this word's coarsest space cluster
    as_next_x: Attributes  # "+1x" of the previous token
    window: tuple[Attributes, ...]  # seen from a token at each of _OFFSETS away
    lower: bytes  # lower-cased form and coarsest cluster, for word pairs
    coarse: bytes
    pair_prev: tuple[bytes, bytes, bytes]  # prefixes "-1lw|lw:<lw>|", "-1c|c:<c>|", "-1c|lw:<c>|"
    s3_prev: bytes  # "-1s3:<last 3 letters>" of the next token
    pair_next: tuple[bytes, bytes]  # prefixes "lw|+1lw:<lw>|", "lw|+1c:<lw>|"
    s3_next: bytes  # "+1s3:<last 3 letters>" of the previous token


class _Featurizer:
    """Builds tokens' attributes for one cluster model, caching what depends on the word alone.

    Attributes are bytes, as CRFsuite takes them without conversion, and every distinct
    attribute is stored once (``_atoms``), so the cache stays small.
    """

    def __init__(self, clusters: Clusters | None) -> None:
        self.clusters = clusters
        self._words_ids: Mapping[str, Sequence[int]] = clusters["clusters"] if clusters else {}
        self._near: Mapping[str, Sequence[str]] = clusters.get("neighbours", {}) if clusters else {}
        self._space: Mapping[str, Sequence[int]] = (
            clusters.get("pretrained", {}).get("clusters", {}) if clusters else {}
        )
        self._axes: Mapping[str, Sequence[float]] = (
            clusters.get("pretrained", {}).get("axes", {}) if clusters else {}
        )
        self._cache: dict[tuple[str, str], _Word] = {}
        self._atoms: dict[bytes, bytes] = {}

    def _atom(self, name: str, value: str | None = None) -> bytes:
        raw = (name if value is None else f"{name}:{value}").encode()
        return self._atoms.setdefault(raw, raw)

    def word(self, token: str, lang: str) -> _Word:
        """Return the cached attributes of a word in a language."""
        found = self._cache.get((token, lang))
        if found is None:
            if len(self._cache) >= _CACHE_LIMIT:
                self._cache.clear()
                self._atoms.clear()
            found = self._cache[token, lang] = self._make(token, lang)
        return found

    def _make(self, token: str, lang: str) -> _Word:
        atom = self._atom
        key = fold(token)
        clus = _ids(self._words_ids.get(key))
        space = _ids(self._space.get(key))
        own = [atom(name, value) for name, value in _word_features(token, lang)]
        own += [atom(k, cid) for k, cid in zip(_CLUSTER_KEYS, clus, strict=False)]
        own += [atom("nn=" + proto) for proto in self._near.get(key, ())]
        own += [atom(k, cid) for k, cid in zip(_SPACE_KEYS, space, strict=False)]
        place = self._axes.get(key)
        axes = (AxisBlock.of(place),) if place else ()
        own_t = tuple(own)
        lower = token.lower()
        coarse = clus[0] if clus else "-"
        window = []
        for off in _OFFSETS:
            # Neighbours show their coarsest cluster only: their finer clusters (next to
            # the token) were 9% of a token's attributes, and MAMS 3-fold CV span F1 was
            # 0.7500 without them against 0.7506 with them (test 0.7596 against 0.7572).
            window.append((atom(f"{off}lw", lower), atom(f"{off}c", coarse)))
        return _Word(
            own=own_t,
            own_axes=own_t + axes if axes else own_t,
            as_prev_x=(atom("-1x", space[0]),) if space else (),
            as_next_x=(atom("+1x", space[0]),) if space else (),
            window=tuple(window),
            lower=lower.encode(),
            coarse=coarse.encode(),
            pair_prev=(
                f"-1lw|lw:{lower}|".encode(),
                f"-1c|c:{coarse}|".encode(),
                f"-1c|lw:{coarse}|".encode(),
            ),
            s3_prev=atom("-1s3", lower[-3:]),
            pair_next=(f"lw|+1lw:{lower}|".encode(), f"lw|+1c:{lower}|".encode()),
            s3_next=atom("+1s3", lower[-3:]),
        )

    def sentence(
        self,
        tokens: Sequence[str],
        dict_tags: Sequence[str] | None,
        dict_concepts: Sequence[str | None] | None,
        lang: str,
        axes: bool = False,
    ) -> list[SplitAttributes]:
        """Return every token's attributes split in two (see :func:`sentence_attribute_parts`)."""
        words = [self.word(t, lang) for t in tokens]
        n = len(words)
        out: list[SplitAttributes] = []
        for i, w in enumerate(words):
            attrs: list[bytes] = []
            if i > 0:
                attrs += words[i - 1].as_prev_x
            if i < n - 1:
                attrs += words[i + 1].as_next_x
            if dict_tags is not None:
                attrs.append(_OWN_TAG.get(dict_tags[i]) or self._atom("d", dict_tags[i]))
                concept = dict_concepts[i] if dict_concepts is not None else None
                if concept:
                    attrs.append(self._atom("dc", concept))
            if i == 0:
                attrs.append(_BOS)
            if i == n - 1:
                attrs.append(_EOS)
            for k, off in enumerate(_OFFSETS):
                j = i + off
                if 0 <= j < n:
                    attrs += words[j].window[k]
                    if dict_tags is not None:
                        tag = dict_tags[j]
                        attrs.append(_DICT_TAGS[k].get(tag) or self._atom(f"{off}d", tag))
                else:
                    attrs.append(_PADS[k])
            # Word pairs with the neighbours catch two-word traits ("cooking time")
            # that unigrams miss.
            if i > 0:
                prev = words[i - 1]
                lw_lw, c_c, c_lw = prev.pair_prev
                attrs += (lw_lw + w.lower, c_c + w.coarse, c_lw + w.lower, prev.s3_prev)
            if i < n - 1:
                after = words[i + 1]
                lw_lw, lw_c = w.pair_next
                attrs += (lw_lw + after.lower, lw_c + after.coarse, after.s3_next)
            out.append((w.own_axes if axes else w.own, tuple(attrs)))
        return out


_featurizer_in_use = _Featurizer(None)


def _featurizer(clusters: Clusters | None) -> _Featurizer:
    """Return the featurizer of a cluster model, kept while the same model object is used.

    The model is held by identity (a cluster model is never changed once learned), so
    a long run over one model computes each word's features once.
    """
    global _featurizer_in_use
    if not clusters:
        clusters = None
    if _featurizer_in_use.clusters is not clusters:
        _featurizer_in_use = _Featurizer(clusters)
    return _featurizer_in_use


def sentence_attributes(
    tokens: Sequence[str],
    *,
    dict_tags: Sequence[str] | None = None,
    dict_concepts: Sequence[str | None] | None = None,
    clusters: Clusters | None = None,
    lang: str = "",
) -> list[Attributes]:
    """Return each token's features as python-crfsuite attributes, what the tagger reads.

    Args:
        tokens: The token texts, in order.
        dict_tags: The dictionary's IOB2 tag per token (``None``: no dictionary).
        dict_concepts: The concept of the dictionary match covering each token.
        clusters: A word-cluster model, or ``None`` to go without cluster features.
        lang: The sentence's language tag, choosing the stemmer.

    Returns:
        One tuple of attributes per token (see :data:`Attributes`): word identity,
        lower-cased, normalised and stemmed forms, prefixes and suffixes of 1-4
        characters, shapes, digit/punctuation/title flags, cluster IDs, nearest frequent
        words, pretrained-space clusters (also those of the tokens either side),
        dictionary tag and concept, sentence position, the lower-cased form, cluster
        and dictionary tag of the two tokens on each side, and word pairs with the
        neighbours.
    """
    parts = _featurizer(clusters).sentence(tokens, dict_tags, dict_concepts, lang)
    return [own + rest for own, rest in parts]


def sentence_attribute_parts(
    tokens: Sequence[str],
    *,
    dict_tags: Sequence[str] | None = None,
    dict_concepts: Sequence[str | None] | None = None,
    clusters: Clusters | None = None,
    lang: str = "",
    axes: bool = False,
) -> list[SplitAttributes]:
    """Return :func:`sentence_attributes` with each token's attributes split in two.

    The first part holds the attributes of the word alone and is the same tuple object
    wherever the word occurs (while the word cache holds it), so a decoder can sum its
    weights once per word (:class:`extractor.models.crf_decoder.CrfDecoder`); the second
    holds the rest. Arguments are those of :func:`sentence_attributes`, and ``axes``:
    end each word's own part with its coordinates on the pretrained space's main axes (an
    :class:`AxisBlock`, from the cluster model's ``pretrained["axes"]``; nothing for words
    it lacks), which the tagger reads while labels are few.
    """
    return _featurizer(clusters).sentence(tokens, dict_tags, dict_concepts, lang, axes)


def attribute_dict(attributes: Attributes) -> dict[str, str | float]:
    """Return a token's attributes as a ``{name: value}`` dict, weight 1.0 for flags.

    CRFsuite reads the dict the same way (``{"lw": "cook"}`` is ``lw:cook``); names
    never hold a colon, except the nearest-word flags ``nn=<word>``.
    """
    out: dict[str, str | float] = {}
    for raw in attributes:
        if isinstance(raw, AxisBlock):
            out.update({n.decode(): v for n, v in zip(raw.names, raw.values, strict=True)})
            continue
        text = raw.decode()
        name, colon, value = text.partition(":")
        if not colon or name.startswith("nn="):
            out[text] = 1.0
        else:
            out[name] = value
    return out


def sentence_features(
    tokens: Sequence[str],
    *,
    dict_tags: Sequence[str] | None = None,
    dict_concepts: Sequence[str | None] | None = None,
    clusters: Clusters | None = None,
    lang: str = "",
) -> list[dict[str, str | float]]:
    """Return :func:`sentence_attributes` as one readable ``{name: value}`` dict per token.

    String values are indicator features (``{"lw": "cook"}``), ``1.0`` marks a flag
    (``{"BOS": 1.0}``); python-crfsuite reads these dicts as the same features.
    """
    attributes = sentence_attributes(
        tokens, dict_tags=dict_tags, dict_concepts=dict_concepts, clusters=clusters, lang=lang
    )
    return [attribute_dict(a) for a in attributes]
