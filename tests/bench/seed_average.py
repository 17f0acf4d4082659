r"""Screen: the tagger trained with several shuffling seeds, its weights averaged, on MAMS.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/seed_average.py --sizes 100,200,0 --draws 3 --seeds 3

CRFsuite's SGD shuffles the training sentences with the C library's ``rand`` (seeded by
``random_state``); the L2-regularised CRF objective is convex, so models trained in
different orders differ only where SGD has not converged, and the mean of their weights
(every attribute's state weights and the transition weights, an attribute a model lacks
counting 0) is a model of the same form. For each size (0: the whole train split, in
file order) and draw (a random train subset seeded by the draw), strict span F1 on the
test split of each seed's model, of the seeds' mean F1, and of the averaged model;
decoding as the tool does (recall decoding at 0.3 below 250 sentences).
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

import numpy as np  # noqa: E402

from extractor.models.crf_decoder import CrfDecoder, _Index  # noqa: E402
from extractor.models.recall_decoding import RECALL_BELOW, RECALL_THRESHOLD  # noqa: E402
from extractor.models.tagger import TraitTagger, _tag_path, sentence_items  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.spans import iob_to_spans, span_prf, spans_to_iob  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.mams import load_mams, mams_texts  # noqa: E402


def averaged(decoders: list[CrfDecoder]) -> CrfDecoder:
    """Return the decoder of the mean of the decoders' weights, attributes aligned by name."""
    labels = decoders[0].labels
    names = sorted({name for d in decoders for name in d.index})
    row = {name: k for k, name in enumerate(names)}
    state = np.zeros((len(names) + 1, len(labels)))
    trans = np.zeros((len(labels), len(labels)))
    for d in decoders:
        order = [d.labels.index(lab) for lab in labels]
        rows = np.array([row[name] for name in d.index], dtype=np.intp)
        cols = np.array(list(d.index.values()), dtype=np.intp)
        state[rows] += d._state[cols][:, order]
        trans += d._trans[np.ix_(order, order)]
    index = _Index({name: k for k, name in enumerate(names)})
    index.zero = len(names)
    return CrfDecoder(labels, index, state / len(decoders), trans / len(decoders))


def f1(decoder: CrfDecoder, items: list[Any], recall: float | None) -> float:
    """Return strict span F1 of ``decoder`` on ``items``."""
    paths = [_tag_path(d, decoder.labels, recall) for d in decoder.decode([f for _, f, _ in items])]
    pred = [iob_to_spans(o, p.tags) for (o, _, _), p in zip(items, paths, strict=True)]
    return span_prf([g for _, _, g in items], pred).f1


def main() -> None:
    """Print one JSON line per size and draw, then the means."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="100,200,0")
    parser.add_argument("--draws", type=int, default=3)
    parser.add_argument("--seeds", type=int, default=3)
    args = parser.parse_args()
    if load_mams("train") is None:
        sys.exit("MAMS is not in ../shared/datasets/mams-atsa/; see tests/mams.py.")
    texts = mams_texts()
    clusters = learn_clusters(texts)

    def items(split: str) -> list[Any]:
        out = []
        for i, d in enumerate(load_mams(split) or []):
            spans = [Span(m["start"], m["end"]) for m in d["mentions"]]
            offsets, feats, _ = sentence_items(
                Sentence(i, d["sentence"], d["lang"]), None, clusters
            )
            out.append((offsets, feats, spans, spans_to_iob(offsets, spans)))
        return out

    train = items("train")
    test = [(o, f, g) for o, f, g, _ in items("test")]
    for size in (int(x) for x in args.sizes.split(",")):
        rows: list[dict[str, Any]] = []
        for draw in range(args.draws if size else 1):
            order = list(range(len(train)))
            if size:
                random.Random(draw).shuffle(order)
            chosen = [train[i] for i in order[: size or len(train)]]
            recall = RECALL_THRESHOLD if 0 < len(chosen) < RECALL_BELOW else None
            decoders = [
                CrfDecoder.from_model(
                    TraitTagger(random_state=seed)
                    .fit([x[1] for x in chosen], [x[3] for x in chosen])
                    .model_bytes_
                )
                for seed in range(args.seeds)
            ]
            singles = [f1(d, test, recall) for d in decoders]
            row: dict[str, Any] = {
                "size": size,
                "draw": draw,
                "seeds": [round(s, 4) for s in singles],
                "seed_mean": round(statistics.fmean(singles), 4),
                "averaged": round(f1(averaged(decoders), test, recall), 4),
            }
            print(json.dumps(row), flush=True)
            rows.append(row)
        print(
            json.dumps(
                {
                    "size": size,
                    "seed0": round(statistics.fmean(r["seeds"][0] for r in rows), 4),
                    "seed_mean": round(statistics.fmean(r["seed_mean"] for r in rows), 4),
                    "averaged": round(statistics.fmean(r["averaged"] for r in rows), 4),
                }
            ),
            flush=True,
        )


if __name__ == "__main__":
    main()
