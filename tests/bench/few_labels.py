r"""Screen what the tagger learns besides the labels, at few labels, on MAMS (open data).

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/few_labels.py --sizes 100,200 --draws 4 \\
        '{}' '{"self_rounds": 1}' '{"max_iterations": 60}'

MAMS (``../shared/datasets/mams-atsa/``): word clusters (workspace and pretrained) are
learned from the text of all three splits without labels, as the tool learns them from a
workspace's answers. For each draw, a random subset of the train split (seeded by the
draw) is the labeled set and the rest of the train split is the unlabeled pool; strict
span F1 is scored on the val split, so that the test split stays for the simulation that
confirms a choice. Every setting sees the same subsets, so gains are paired by draw.

Each argument is a JSON dict: :class:`~extractor.models.tagger.TraitTagger` parameters,
plus the self-training keys of :func:`extractor.models.tagger_training.fit_tagger`.
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.tagger import sentence_items  # noqa: E402
from extractor.models.tagger_training import fit_tagger  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.spans import iob_to_spans, span_prf  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.mams import load_mams  # noqa: E402

Gold = list[tuple[Sentence, list[Span]]]


def gold(split: str, first_id: int) -> Gold:
    """Return one MAMS split as sentences with their gold spans."""
    return [
        (
            Sentence(first_id + i, d["sentence"], d["lang"]),
            [Span(s["start"], s["end"]) for s in d["mentions"]],
        )
        for i, d in enumerate(load_mams(split) or [])
    ]


def main() -> None:
    """Print one JSON line per setting and size: F1 per draw and paired gain over the first."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("settings", nargs="+", help="JSON dicts of fit_tagger parameters")
    parser.add_argument("--sizes", default="100,200")
    parser.add_argument("--draws", type=int, default=4)
    parser.add_argument("--pool", type=int, default=0, help="unlabeled pool size (0: all)")
    args = parser.parse_args()
    if load_mams("train") is None:
        sys.exit("MAMS is not in ../shared/datasets/mams-atsa/; see tests/mams.py.")
    train = gold("train", 0)
    val = gold("val", len(train))
    test_text = [(d["sentence"], d["lang"]) for d in load_mams("test") or []]
    clusters = learn_clusters([(s.text, s.lang) for s, _ in train + val] + test_text)
    val_items = [sentence_items(s, None, clusters)[:2] for s, _ in val]
    base: dict[tuple[int, int], float] = {}
    for raw in args.settings:
        params: dict[str, Any] = json.loads(raw)
        for size in (int(x) for x in args.sizes.split(",")):
            scores, seconds = [], []
            for draw in range(args.draws):
                order = list(range(len(train)))
                random.Random(draw).shuffle(order)
                labeled = [train[i] for i in order[:size]]
                rest = [train[i][0] for i in order[size:]]
                if args.pool:
                    rest = rest[: args.pool]
                started = time.process_time()
                tagger = fit_tagger(labeled, rest, None, clusters, **params)
                seconds.append(time.process_time() - started)
                paths = tagger.predict([f for _, f in val_items])
                pred = [iob_to_spans(o, p.tags) for (o, _), p in zip(val_items, paths, strict=True)]
                scores.append(span_prf([g for _, g in val], pred).f1)
                if raw == args.settings[0]:
                    base[(size, draw)] = scores[-1]
            gains = [100 * (s - base[(size, d)]) for d, s in enumerate(scores)]
            row = {
                "params": params,
                "size": size,
                "f1": round(statistics.fmean(scores), 4),
                "sd": round(statistics.stdev(scores), 4) if len(scores) > 1 else 0.0,
                "gain_pt": round(statistics.fmean(gains), 2),
                "wins": sum(g > 0 for g in gains),
                "draws": [round(s, 4) for s in scores],
                "cpu_s": round(statistics.fmean(seconds), 1),
            }
            print(json.dumps(row), flush=True)


if __name__ == "__main__":
    main()
