"""Cross-language transfer of the CRF at 0 labels with an English-only concept list.

Not part of the test suite. Run from the repository root:

    PYTHONPATH=$PWD .venv/bin/python tests/bench/english_list_transfer.py [--variants ...]

Like ``bench_english_list.py`` (space ``use-m3``, silver aliases on): models trained on the
demo's sentences with no label, span+concept F1 on its French and Spanish gold sentences.
Each variant changes how much the tagger can lean on the pretrained space's clusters
(``x0``-``x2``, shared by all languages) rather than on word forms:

* ``base``: as shipped;
* ``no-space``: the pretrained clusters removed from the tagger's features (the silver
  aliases still come from the space);
* ``gran=A-B-C``: the pretrained space clustered at granularities A, B, C (default 32-128-512);
* ``drop=P``: each token of an English silver sentence loses its word-form attributes
  (forms, stem, affixes, the words of its window and word pairs) with probability P
  (seeded), so the model must lean on shapes and clusters;
* ``drop-all=P``: the same for the silver tokens of every language;
* ``copies``: every silver sentence also once more without word-form attributes;
* ``space-weight=K``: each pretrained-cluster attribute of a token's own word repeated K
  times (a feature of value K, in training and tagging).

The last four patch functions of this process only.
"""

from __future__ import annotations

import argparse
import json
import random
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models import tagger_training  # noqa: E402
from extractor.models.bundle import TraitModels  # noqa: E402
from extractor.models.metrics import score  # noqa: E402
from extractor.nlp import features  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.features import Attributes  # noqa: E402
from extractor.nlp.fold import fold  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.bench.bench_english_list import demo_lists  # noqa: E402

_FORMS: tuple[bytes, ...] = (b"w:", b"lw:", b"n:", b"st:", b"p1:", b"p2:", b"p3:", b"p4:")
_FORMS += (b"s1:", b"s2:", b"s3:", b"s4:")


def _is_form(attribute: bytes) -> bool:
    """Whether an attribute names a word form (its own, a neighbour's, or a pair's)."""
    return attribute.startswith(_FORMS) or b"lw:" in attribute or b"lw|" in attribute


def _without_forms(token: Attributes) -> Attributes:
    return tuple(a for a in token if not _is_form(a))


def _patch(variant: str) -> Callable[[], None]:
    """Patch the silver training data for a variant; return what undoes the patch."""
    items, silver = tagger_training.sentence_items, tagger_training._silver
    make = features._Featurizer._make
    if variant.startswith("drop"):
        share = float(variant.partition("=")[2])
        rng = random.Random(0)
        every_language = variant.startswith("drop-all")

        def dropped(sentence: Sentence, *args: Any, **kwargs: Any) -> Any:
            offsets, feats, matches = items(sentence, *args, **kwargs)
            english = sentence.lang.split("-")[0] == "en"
            # Silver sentences are the only ones featurised without dictionary features.
            if kwargs.get("dictionary_features", True) is False and (english or every_language):
                feats = [_without_forms(f) if rng.random() < share else f for f in feats]
            return offsets, feats, matches

        tagger_training.sentence_items = dropped
    elif variant == "copies":

        def doubled(*args: Any, **kwargs: Any) -> Any:
            X, y, unmatched = silver(*args, **kwargs)
            return X + [[_without_forms(f) for f in x] for x in X], y + y, unmatched

        tagger_training._silver = doubled

    elif variant.startswith("space-weight="):
        repeats = int(variant.partition("=")[2])

        def heavier(self: features._Featurizer, token: str, lang: str) -> Any:
            word = make(self, token, lang)
            space = tuple(a for a in word.own if a[:1] == b"x" and a[1:2].isdigit())
            return word._replace(own=word.own + space * (repeats - 1))

        features._Featurizer._make = heavier  # type: ignore[method-assign]
        features._featurizer_in_use = features._Featurizer(None)  # drop cached words

    def undo() -> None:
        features._Featurizer._make = make  # type: ignore[method-assign]
        features._featurizer_in_use = features._Featurizer(None)
        tagger_training.sentence_items = items
        tagger_training._silver = silver

    return undo


def _exact_sources(
    target: list[tuple[Sentence, list[Span]]],
    predicted: list[list[Any]],
    silver: list[tuple[str, str, str]],
) -> dict[str, int]:
    """Count predictions with a gold span's exact boundaries, with and without a silver word.

    A prediction "with a silver word" holds a word (folded) of some silver alias: the
    tagger may have learnt it from the silver sentences that alias labelled.
    """
    words = {fold(w) for _, text, _ in silver for w in text.split()}
    counts = {"exact": 0, "exact_with_silver_word": 0}
    for (sentence, spans), mentions in zip(target, predicted, strict=True):
        bounds = {(g.start, g.end) for g in spans}
        for m in mentions:
            if (m.start, m.end) in bounds:
                counts["exact"] += 1
                found = {fold(w) for w in sentence.text[m.start : m.end].split()}
                counts["exact_with_silver_word"] += bool(found & words)
    return counts


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--variants", default="base,no-space,gran=16-64-256,drop=0.5,copies")
    parser.add_argument("--lists", default="english", help="english, full or english,full")
    args = parser.parse_args()
    corpus, target, lists = demo_lists()
    texts = [(s.text, s.lang) for s in corpus]
    default_clusters = learn_clusters(texts, space="use-m3")
    for variant in args.variants.split(","):
        clusters = default_clusters
        if variant.startswith("gran="):
            levels = tuple(int(k) for k in variant.partition("=")[2].split("-"))
            clusters = learn_clusters(texts, space="use-m3", space_granularities=levels)
        elif variant == "no-space":
            clusters = {**clusters, "pretrained": {**clusters["pretrained"], "clusters": {}}}
        undo = _patch(variant)
        try:
            for name in args.lists.split(","):
                models = TraitModels(silver_synonyms=True)
                models.fit([], corpus, lists[name], clusters=clusters)
                predicted = [p.mentions for p in models.predict([s for s, _ in target])]
                report = score(target, predicted)
                sc = report.span_concept
                print(
                    json.dumps(
                        {
                            "variant": variant,
                            "list": name,
                            "span_f1": round(report.span.f1, 4),
                            "span_recall": round(report.span.recall, 4),
                            "span_precision": round(report.span.precision, 4),
                            "concept_f1": sc and round(sc.f1, 4),
                            "silver_aliases": len(models.silver_aliases_),
                            **_exact_sources(target, predicted, models.silver_aliases_),
                        }
                    ),
                    flush=True,
                )
        finally:
            undo()


if __name__ == "__main__":
    main()
