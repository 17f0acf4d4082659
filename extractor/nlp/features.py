"""Token features for the CRF tagger, as python-crfsuite item dicts.

Each token becomes a ``{name: value}`` dict: string values are indicator features
(CRFsuite reads ``{"lw": "cook"}`` as the feature ``lw:cook`` with weight 1) and float
values are weighted features. Features that depend only on the word are computed once
per distinct word and cached, so tagging stays fast on long pools of sentences.
"""

from __future__ import annotations

import unicodedata
from collections.abc import Mapping, Sequence
from functools import lru_cache
from typing import Any

from extractor.nlp.dictionary import stem_word
from extractor.nlp.fold import fold

WINDOW = 2
"""Neighbouring tokens seen on each side of a token."""

Clusters = Mapping[str, Any]
"""A word-cluster model from :func:`extractor.nlp.clusters.learn_clusters`."""


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


@lru_cache(maxsize=1 << 18)
def _word_features(word: str, lang: str) -> tuple[tuple[str, str | float], ...]:
    """Return the features of a word that depend on nothing else (cached)."""
    lower = word.lower()
    feats: list[tuple[str, str | float]] = [
        ("bias", 1.0),
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
        feats.append(("digit", 1.0))
    elif any(c.isdigit() for c in word):
        feats.append(("hasdigit", 1.0))
    if _is_punct(word):
        feats.append(("punct", 1.0))
    if word[:1].isupper():
        feats.append(("title", 1.0))
    return tuple(feats)


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


def _lookups(
    tokens: Sequence[str], clusters: Clusters | None
) -> tuple[list[tuple[str, ...]], list[Sequence[str]], list[tuple[str, ...]]]:
    """Return :func:`cluster_ids`, :func:`neighbour_words` and :func:`space_ids` per token.

    The same lookups, with each token folded once and the model's tables read once.
    """
    if not clusters:
        return [()] * len(tokens), [()] * len(tokens), [()] * len(tokens)
    words = clusters["clusters"]
    near = clusters.get("neighbours", {})
    pretrained = clusters.get("pretrained", {}).get("clusters", {})
    keys = [fold(t) for t in tokens]
    return (
        [_ids(words.get(k)) for k in keys],
        [near.get(k, ()) for k in keys],
        [_ids(pretrained.get(k)) for k in keys],
    )


_CLUSTER_KEYS = tuple(f"c{level}" for level in range(8))
_SPACE_KEYS = tuple(f"x{level}" for level in range(8))
# Feature names of the window, built once: (offset, word key, cluster key, dictionary key,
# finer-cluster keys used only right next to the token).
_WINDOW = tuple(
    (
        off,
        f"{off}lw",
        f"{off}c",
        f"{off}d",
        tuple(f"{off}c{level}" for level in range(1, 8)) if abs(off) == 1 else (),
    )
    for off in range(-WINDOW, WINDOW + 1)
    if off != 0
)


def sentence_features(
    tokens: Sequence[str],
    *,
    dict_tags: Sequence[str] | None = None,
    dict_concepts: Sequence[str | None] | None = None,
    clusters: Clusters | None = None,
    lang: str = "",
) -> list[dict[str, str | float]]:
    """Return one python-crfsuite feature dict per token of a sentence.

    Args:
        tokens: The token texts, in order.
        dict_tags: The dictionary's IOB2 tag per token (``None``: no dictionary).
        dict_concepts: The concept of the dictionary match covering each token.
        clusters: A word-cluster model, or ``None`` to go without cluster features.
        lang: The sentence's language tag, choosing the stemmer.

    Returns:
        One dict per token: word identity, lower-cased, normalised and stemmed forms,
        prefixes and suffixes of 1-4 characters, shapes, digit/punctuation/title flags,
        sentence position, cluster IDs, dictionary tag and concept, and the lower-cased
        form, cluster and dictionary tag of the two tokens on each side.
    """
    n = len(tokens)
    lowers = [t.lower() for t in tokens]
    clus, protos, space = _lookups(tokens, clusters)
    # Window features use the coarsest cluster: finer ones are too sparse at a distance.
    coarse = [c[0] if c else "-" for c in clus]
    tags = list(dict_tags) if dict_tags is not None else ["O"] * n
    out: list[dict[str, str | float]] = []
    for i, token in enumerate(tokens):
        f: dict[str, str | float] = dict(_word_features(token, lang))
        for level, cid in enumerate(clus[i]):
            f[_CLUSTER_KEYS[level]] = cid
        for proto in protos[i]:
            f["nn=" + proto] = 1.0
        for level, cid in enumerate(space[i]):
            f[_SPACE_KEYS[level]] = cid
        if i > 0 and space[i - 1]:
            f["-1x"] = space[i - 1][0]
        if i < n - 1 and space[i + 1]:
            f["+1x"] = space[i + 1][0]
        if dict_tags is not None:
            f["d"] = tags[i]
            concept = dict_concepts[i] if dict_concepts is not None else None
            if concept:
                f["dc"] = concept
        if i == 0:
            f["BOS"] = 1.0
        if i == n - 1:
            f["EOS"] = 1.0
        _add_window(f, i, lowers, coarse, clus, tags if dict_tags is not None else None)
        _add_pairs(f, i, lowers, coarse)
        out.append(f)
    return out


def _add_window(
    f: dict[str, str | float],
    i: int,
    lowers: list[str],
    coarse: list[str],
    clus: list[tuple[str, ...]],
    tags: list[str] | None,
) -> None:
    """Add the lower-cased form, cluster and dictionary tag of the tokens around token ``i``."""
    n = len(lowers)
    for off, lw_key, c_key, d_key, fine_keys in _WINDOW:
        j = i + off
        if 0 <= j < n:
            f[lw_key] = lowers[j]
            f[c_key] = coarse[j]
            # Next to the token, finer clusters still generalise (e.g. "the" vs "a"
            # before a trait noun) without being too sparse.
            for key, cid in zip(fine_keys, clus[j][1:], strict=False):
                f[key] = cid
            if tags is not None:
                f[d_key] = tags[j]
        else:
            f[lw_key] = "<pad>"


def _add_pairs(f: dict[str, str | float], i: int, lowers: list[str], coarse: list[str]) -> None:
    """Add word pairs with the neighbours of token ``i``.

    They catch two-word traits ("cooking time") that unigrams miss.
    """
    if i > 0:
        f["-1lw|lw"] = lowers[i - 1] + "|" + lowers[i]
        f["-1c|c"] = coarse[i - 1] + "|" + coarse[i]
        f["-1c|lw"] = coarse[i - 1] + "|" + lowers[i]
        f["-1s3"] = lowers[i - 1][-3:]
    if i < len(lowers) - 1:
        f["lw|+1lw"] = lowers[i] + "|" + lowers[i + 1]
        f["lw|+1c"] = lowers[i] + "|" + coarse[i + 1]
        f["+1s3"] = lowers[i + 1][-3:]
