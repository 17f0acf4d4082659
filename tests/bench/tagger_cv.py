"""Choose the tagger's parameters by cross-validation on the MAMS train split only.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/tagger_cv.py '{"c2": 2.0}' '{"max_iterations": 50}' [--test]

MAMS (open data, ``../shared/datasets/mams-atsa/``): word clusters (workspace and
pretrained) are learned from the text of all three splits without labels, as the tool
learns them from a workspace's answers. Each argument is a JSON dict of
:class:`~extractor.models.tagger.TraitTagger` parameters; for each, the train split is
shuffled (seed 0) into 3 folds and strict span F1 is averaged over the folds. The test
split is scored only with ``--test``, to report the figure of a choice already made.
Training is deterministic (seeded SGD), so one run per setting gives its figure.
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.tagger import TraitTagger, sentence_items  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.features import Attributes, Clusters  # noqa: E402
from extractor.nlp.spans import iob_to_spans, span_prf, spans_to_iob  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.mams import load_mams, mams_texts  # noqa: E402

Item = tuple[list[tuple[int, int]], list[Attributes], list[str], list[Span]]


def items(split: str, clusters: Clusters) -> list[Item]:
    """Return tokens, features, IOB2 tags and gold spans of one MAMS split."""
    out = []
    for i, d in enumerate(load_mams(split) or []):
        spans = [Span(s["start"], s["end"]) for s in d["mentions"]]
        offsets, feats, _ = sentence_items(Sentence(i, d["sentence"], d["lang"]), None, clusters)
        out.append((offsets, feats, spans_to_iob(offsets, spans), spans))
    return out


def f1(train: list[Item], test: list[Item], params: dict[str, Any]) -> float:
    """Train on ``train`` and return strict span F1 on ``test``."""
    tagger = TraitTagger(**params).fit([f for _, f, _, _ in train], [y for _, _, y, _ in train])
    paths = tagger.predict([f for _, f, _, _ in test])
    pred = [iob_to_spans(o, p.tags) for (o, _, _, _), p in zip(test, paths, strict=True)]
    return span_prf([g for _, _, _, g in test], pred).f1


def main() -> None:
    """Print one JSON line of figures per parameter setting."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("settings", nargs="+", help="JSON dicts of TraitTagger parameters")
    parser.add_argument("--folds", type=int, default=3)
    parser.add_argument("--test", action="store_true", help="also score the test split")
    args = parser.parse_args()
    if load_mams("train") is None:
        sys.exit("MAMS is not in ../shared/datasets/mams-atsa/; see tests/mams.py.")
    texts = mams_texts()
    clusters = learn_clusters(texts)
    train = items("train", clusters)
    test = items("test", clusters) if args.test else []
    order = list(range(len(train)))
    random.Random(0).shuffle(order)
    for raw in args.settings:
        params = json.loads(raw)
        scores = []
        for k in range(args.folds):
            held = set(order[k :: args.folds])
            inside = [x for i, x in enumerate(train) if i not in held]
            scores.append(f1(inside, [train[i] for i in sorted(held)], params))
        row: dict[str, object] = {
            "params": params,
            "cv_f1": round(statistics.fmean(scores), 4),
            "fold_sd": round(statistics.stdev(scores), 4),
            "folds": [round(s, 4) for s in scores],
        }
        if args.test:
            row["test_f1"] = round(f1(train, test, params), 4)
        print(json.dumps(row), flush=True)


if __name__ == "__main__":
    main()
