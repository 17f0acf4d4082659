"""Screen CRFsuite training options and extra token templates by cross-validation on MAMS.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/tagger_screen.py \
        '{"params": {"algorithm": "ap", "max_iterations": 10}}' \
        '{"trainer": {"feature.possible_states": true}}' \
        '{"templates": ["length", "skip_pairs"]}' '{"syntax": ["upos", "dep"]}' \
        [--clusters JSON] [--test] [--no-cv]

A companion of ``tagger_cv.py`` (same data, folds and scoring: strict span F1, 3 folds
of the MAMS train split shuffled with seed 0, the test split only with ``--test``) for
screening what the tagger's parameters cannot express. Each argument is a JSON dict with
optional keys ``params`` (:class:`~extractor.models.tagger.TraitTagger` parameters),
``trainer`` (further CRFsuite training options, e.g. ``{"type": 1, "c": 1.0}`` for
``pa``, or ``feature.possible_states``) and ``templates`` (names from
:data:`TEMPLATES`, whose attributes are appended to those the tagger builds).
``syntax`` (names or groups of ``tests/bench/syntax_attrs.py``, attributes from the
tags and dependency parse of a packaged spaCy pipeline) likewise. ``--clusters`` passes
keyword arguments to
:func:`~extractor.nlp.clusters.learn_clusters` (e.g. ``{"space_granularities": [32,
128, 512, 2048]}``). A template that wins here must be built into ``nlp/features.py`` and
``nlp/feature_rows.py`` and measured again with ``tagger_cv.py``.
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import pycrfsuite  # noqa: E402

from extractor.models.tagger import TraitTagger, sentence_items  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.features import Attributes, Clusters  # noqa: E402
from extractor.nlp.spans import iob_to_spans, span_prf, spans_to_iob  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.bench import syntax_attrs  # noqa: E402
from tests.mams import load_mams, mams_texts  # noqa: E402

Item = tuple[list[tuple[int, int]], list[Attributes], list[str], list[Span], list[str]]
Template = Callable[[list[str], list[Attributes], int], list[bytes]]


def _value(attrs: Attributes, name: bytes) -> bytes:
    """Return the value of attribute ``name:`` among ``attrs``, ``-`` when absent."""
    for a in attrs:
        if a.startswith(name):
            return a[len(name) :]
    return b"-"


def _at(words: list[str], j: int) -> str:
    return words[j].lower() if 0 <= j < len(words) else "<pad>"


_PUNCT = frozenset(",.;:!?()-\"'")


def _punct(word: str) -> bool:
    return bool(word) and all(c in _PUNCT for c in word)


def _nearest_punct(words: list[str], i: int) -> list[bytes]:
    out = []
    for side, steps in (("L", range(i - 1, -1, -1)), ("R", range(i + 1, len(words)))):
        found = next((j for j in steps if _punct(words[j])), None)
        out.append(
            f"p{side}:none".encode()
            if found is None
            else f"p{side}:{words[found]}|{min(abs(found - i), 3)}".encode()
        )
    return out


def _position(n: int, i: int) -> str:
    return "0" if i == 0 else "1" if i == 1 else "e" if i == n - 1 else "m"


def _space_word(words: list[str], feats: list[Attributes], i: int) -> list[bytes]:
    """Return the neighbours' coarsest pretrained clusters paired with word ``i``."""
    word, out = _at(words, i).encode(), []
    if i > 0:
        out.append(b"-1x|lw:" + _value(feats[i - 1], b"x0:") + b"|" + word)
    if i < len(words) - 1:
        out.append(b"lw|+1x:" + word + b"|" + _value(feats[i + 1], b"x0:"))
    return out


def _pairs(feats: list[Attributes], i: int, name: bytes, key: bytes) -> list[bytes]:
    """Return the pairs of attribute ``name`` of token ``i`` with its neighbours'."""
    mine, out = _value(feats[i], name), []
    if i > 0:
        out.append(b"-1" + key + b"|" + key + b":" + _value(feats[i - 1], name) + b"|" + mine)
    if i < len(feats) - 1:
        out.append(key + b"|+1" + key + b":" + mine + b"|" + _value(feats[i + 1], name))
    return out


TEMPLATES: dict[str, Template] = {
    # the lower-cased words 3 tokens away
    "words_3": lambda w, f, i: [f"-3lw:{_at(w, i - 3)}".encode(), f"+3lw:{_at(w, i + 3)}".encode()],
    # the coarsest workspace cluster 3 tokens away
    "clusters_3": lambda w, f, i: [
        f"{o:+d}c:".encode() + _value(f[i + o], b"c0:") for o in (-3, 3) if 0 <= i + o < len(w)
    ],
    "trigram": lambda w, f, i: [
        f"tri:{_at(w, i - 1) if i else '<s>'}|{_at(w, i)}|"
        f"{_at(w, i + 1) if i < len(w) - 1 else '</s>'}".encode()
    ],
    # word pairs skipping one token, where both words exist
    "skip_pairs": lambda w, f, i: [
        f"-2lw|lw:{_at(w, i - 2)}|{_at(w, i)}".encode() for _ in [0] if i > 1
    ]
    + [f"lw|+2lw:{_at(w, i)}|{_at(w, i + 2)}".encode() for _ in [0] if i < len(w) - 2],
    # the neighbour's coarsest pretrained cluster with the word itself
    "space_word_pairs": lambda w, f, i: _space_word(w, f, i),
    "space_pairs": lambda w, f, i: _pairs(f, i, b"x0:", b"x"),
    "middle_cluster_pairs": lambda w, f, i: _pairs(f, i, b"c1:", b"c1"),
    "position": lambda w, f, i: [f"pos:{_position(len(w), i)}".encode()],
    "length": lambda w, f, i: [f"len:{min(len(w) // 10, 4)}".encode()],
    "position_length": lambda w, f, i: [
        f"pos:{_position(len(w), i)}".encode(),
        f"len:{min(len(w) // 10, 4)}".encode(),
    ],
    "nearest_punctuation": lambda w, f, i: _nearest_punct(w, i),
    "affixes_5_6": lambda w, f, i: [
        f"{k}{n}:{a}".encode()
        for n in (5, 6)
        if len(w[i]) >= n
        for k, a in (("p", w[i].lower()[:n]), ("s", w[i].lower()[-n:]))
    ],
    "neighbour_suffix_2": lambda w, f, i: [
        f"{o:+d}s2:{w[i + o].lower()[-2:]}".encode() for o in (-1, 1) if 0 <= i + o < len(w)
    ],
    "neighbour_shape": lambda w, f, i: [
        f"{o:+d}ssh:".encode() + _value(f[i + o], b"ssh:") for o in (-1, 1) if 0 <= i + o < len(w)
    ],
    "neighbour_title": lambda w, f, i: [
        f"{o:+d}title".encode() for o in (-1, 1) if 0 <= i + o < len(w) and w[i + o][:1].isupper()
    ],
    # the coarsest pretrained cluster with the position
    "space_position": lambda w, f, i: [
        b"xpos:" + _value(f[i], b"x0:") + b"|"
        + (b"0" if i == 0 else b"e" if i == len(w) - 1 else b"m")
    ],
}  # fmt: skip
"""Extra token templates, each giving the attributes it adds to token ``i``."""


def items(split: str, clusters: Clusters) -> list[Item]:
    """Return tokens, features, IOB2 tags, gold spans and words of one MAMS split."""
    out = []
    for i, d in enumerate(load_mams(split) or []):
        spans = [Span(s["start"], s["end"]) for s in d["mentions"]]
        offsets, feats, _ = sentence_items(Sentence(i, d["sentence"], d["lang"]), None, clusters)
        words = [d["sentence"][a:b] for a, b in offsets]
        out.append((offsets, feats, spans_to_iob(offsets, spans), spans, words))
    return out


def with_templates(item: Item, names: list[str]) -> Item:
    """Return ``item`` with the attributes of the templates ``names`` appended per token."""
    offsets, feats, tags, spans, words = item
    new = [
        feats[i] + tuple(a for name in names for a in TEMPLATES[name](words, feats, i))
        for i in range(len(feats))
    ]
    return offsets, new, tags, spans, words


def with_syntax(item: Item, parse: syntax_attrs.Parse, names: list[str]) -> Item:
    """Return ``item`` with the syntax attributes of templates ``names`` appended per token."""
    if not names:
        return item
    offsets, feats, tags, spans, words = item
    extra = syntax_attrs.attributes(parse, names)
    return offsets, [f + e for f, e in zip(feats, extra, strict=True)], tags, spans, words


@contextmanager
def trainer_options(options: dict[str, Any]) -> Iterator[None]:
    """Add CRFsuite training ``options`` to every trainer set up inside the block."""
    original = pycrfsuite.Trainer.set_params

    def set_params(self: Any, params: dict[str, Any]) -> Any:
        return original(self, {**params, **options})

    pycrfsuite.Trainer.set_params = set_params
    try:
        yield
    finally:
        pycrfsuite.Trainer.set_params = original


def f1(train: list[Item], test: list[Item], params: dict[str, Any]) -> float:
    """Train on ``train`` and return strict span F1 on ``test``."""
    tagger = TraitTagger(**params).fit([x[1] for x in train], [x[2] for x in train])
    paths = tagger.predict([x[1] for x in test])
    pred = [iob_to_spans(x[0], p.tags) for x, p in zip(test, paths, strict=True)]
    return span_prf([x[3] for x in test], pred).f1


def main() -> None:
    """Print one JSON line of figures per setting."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("settings", nargs="+", help="JSON dicts: params, trainer, templates")
    parser.add_argument("--clusters", default="{}", help="JSON of learn_clusters arguments")
    parser.add_argument("--folds", type=int, default=3)
    parser.add_argument("--test", action="store_true", help="also score the test split")
    parser.add_argument("--no-cv", action="store_true", help="score the test split only")
    args = parser.parse_args()
    if load_mams("train") is None:
        sys.exit("MAMS is not in ../shared/datasets/mams-atsa/; see tests/mams.py.")
    settings = [json.loads(raw) for raw in args.settings]
    unknown = {n for s in settings for n in s.get("templates", [])} - set(TEMPLATES)
    if unknown:
        sys.exit(f"Unknown templates {sorted(unknown)}; choose from {sorted(TEMPLATES)}.")
    kwargs: dict[str, Any] = {
        k: tuple(v) if isinstance(v, list) else v for k, v in json.loads(args.clusters).items()
    }
    texts = mams_texts()
    clusters = learn_clusters(texts, **kwargs)
    base = items("train", clusters)
    base_test = items("test", clusters) if args.test or args.no_cv else []
    syntax = {n: syntax_attrs.expand(s.get("syntax", [])) for n, s in enumerate(settings)}
    parses: dict[str, list[syntax_attrs.Parse]] = {}
    if any(syntax.values()):
        parsed = syntax_attrs.parse(texts)
        for split in ("train", "test"):
            parses[split] = [parsed[d["sentence"]] for d in load_mams(split) or []]
    order = list(range(len(base)))
    random.Random(0).shuffle(order)
    for n, setting in enumerate(settings):
        params, names = setting.get("params", {}), setting.get("templates", [])
        train = [with_templates(x, names) for x in base]
        if syntax[n]:
            train = [
                with_syntax(x, p, syntax[n]) for x, p in zip(train, parses["train"], strict=True)
            ]
        row_attrs = len({a for x in train for f in x[1] for a in f})
        started = time.perf_counter()
        row: dict[str, object] = {"setting": setting}
        with trainer_options(setting.get("trainer", {})):
            if not args.no_cv:
                scores = []
                for k in range(args.folds):
                    held = set(order[k :: args.folds])
                    inside = [x for i, x in enumerate(train) if i not in held]
                    scores.append(f1(inside, [train[i] for i in sorted(held)], params))
                row["cv_f1"] = round(statistics.fmean(scores), 4)
                row["fold_sd"] = round(statistics.stdev(scores), 4)
                row["folds"] = [round(s, 4) for s in scores]
            if base_test:
                test = [with_templates(x, names) for x in base_test]
                if syntax[n]:
                    test = [
                        with_syntax(x, p, syntax[n])
                        for x, p in zip(test, parses["test"], strict=True)
                    ]
                row["test_f1"] = round(f1(train, test, params), 4)
        row["attributes"] = row_attrs
        row["seconds"] = round(time.perf_counter() - started, 1)
        print(json.dumps(row), flush=True)


if __name__ == "__main__":
    main()
