"""What CRFsuite's trainer and tagger are given: checked training data, tokens as it reads them.

The tagger's features are attribute tuples, split in two per token where a word's own
attributes are cached (:data:`~extractor.nlp.features.SplitAttributes`), and may end a
word's own part with its main-axis coordinates
(:class:`~extractor.nlp.features.AxisBlock`). python-crfsuite reads a token as a list of
names (weight 1) or a ``{name: value}`` dict; :func:`crf_tokens` converts.
"""

from __future__ import annotations

import ctypes
import ctypes.util
from collections.abc import Mapping, Sequence
from typing import Any

from extractor.errors import InputError
from extractor.nlp.features import Attributes, AxisBlock, SplitAttributes
from extractor.types import TAGS

Features = Sequence[Attributes | SplitAttributes | Mapping[str, str | float]]
"""One sentence's features: per token, attributes (whole or split in two) or a
``{name: value}`` dict."""


def seed_c_rand(seed: int) -> None:
    """Seed the C library's ``rand``; where no C library can be loaded, do nothing."""
    name = ctypes.util.find_library("c") or ctypes.util.find_library("msvcrt")
    try:
        libc = ctypes.CDLL(name)
        libc.srand(ctypes.c_uint(seed & 0xFFFFFFFF))
    except (OSError, AttributeError, TypeError):
        # Training still works, only without bit-for-bit reproducibility.
        return


def check_training_data(X: Sequence[Features], y: Sequence[Sequence[str]]) -> None:
    """Check that every sentence has one known tag per token.

    Raises:
        InputError: When there is nothing to train on, lengths differ or a tag is unknown.
    """
    if len(X) != len(y):
        raise InputError(
            f"Training needs one tag sequence per sentence; "
            f"got {len(X)} sentences and {len(y)} tag sequences."
        )
    if not any(len(x) for x in X):
        raise InputError(
            "There are no tokens to train the tagger on; label or import some sentences first."
        )
    for n, (xseq, yseq) in enumerate(zip(X, y, strict=True)):
        if len(xseq) != len(yseq):
            raise InputError(
                f"Training sentence {n} has {len(xseq)} tokens but {len(yseq)} tags; "
                "give one tag per token."
            )
        unknown = set(yseq) - set(TAGS)
        if unknown:
            raise InputError(
                f"Training sentence {n} has tags {sorted(unknown)}; allowed are {', '.join(TAGS)}."
            )


def crf_tokens(
    xseq: Features, weighted: dict[int, tuple[Attributes, dict[bytes, float]]]
) -> Features:
    """Return a sentence's features as CRFsuite takes them.

    Tokens split in two are joined again; a token whose own part ends in an
    :class:`~extractor.nlp.features.AxisBlock` becomes a ``{name: value}`` dict in the
    same order (weight 1 for the other attributes), so CRFsuite weighs the block's
    coordinates as the numpy decoder does. ``weighted`` keeps the dict of each own part
    (by identity, holding the part) across sentences.
    """
    if not any(a and isinstance(a, tuple) and isinstance(a[0], tuple) for a in xseq):
        return xseq
    out: list[Any] = []
    for token in xseq:
        if not (token and isinstance(token, tuple) and isinstance(token[0], tuple)):
            out.append(token)
            continue
        own, rest = token
        if not own or type(own[-1]) is not AxisBlock:
            out.append(own + rest)
            continue
        found = weighted.get(id(own))
        if found is None:
            block: AxisBlock = own[-1]
            head = dict.fromkeys(own[:-1], 1.0)
            head.update(zip(block.names, block.values, strict=True))
            found = weighted[id(own)] = (own, head)
        out.append({**found[1], **dict.fromkeys(rest, 1.0)})
    return out
