r"""Calibration of the tagger's token probabilities on MAMS (open data), by trainer.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/tagger_calibration.py --sizes 100,200,0 --draws 3 \
        '{"algorithm": "l2sgd"}' '{"algorithm": "ap", "max_iterations": 5}'

Each argument is a JSON dict of :func:`~extractor.models.tagger_training.fit_tagger`
parameters. For each size (0: the whole train split) and draw, a random subset of the
MAMS train split (seeded by the draw) is the gold; the tagger is trained on it (no
dictionary, as in the labeling simulation on MAMS) with ``calibrate=True``, so that
:mod:`~extractor.models.tagger_calibration` fits a temperature by cross-fitting on that
gold alone. The same model is then scored on the test split's tokens at temperature 1 and
at the fitted one: token log-loss of the gold tags (3 tags), computed with scikit-learn's
``sklearn.metrics.log_loss`` (the outside reference); expected calibration error of the
TRAIT probability (1 - P(O)) against "the gold tag is not O", 10 equal-width bins,
from scikit-learn's ``sklearn.calibration.calibration_curve`` (bin means) weighted by the
bins' token counts; Brier score of that probability (``sklearn.metrics.brier_score_loss``);
median path probability; strict span F1 of the best path (unchanged by the temperature)
and of recall decoding at 0.3 (:mod:`~extractor.models.recall_decoding`), which does.
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

import numpy as np  # noqa: E402
from sklearn.calibration import calibration_curve  # noqa: E402
from sklearn.metrics import brier_score_loss, log_loss  # noqa: E402

from extractor.models.recall_decoding import RECALL_THRESHOLD, recall_tags  # noqa: E402
from extractor.models.tagger import TraitTagger, sentence_items  # noqa: E402
from extractor.models.tagger_training import fit_tagger  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.spans import OUTSIDE, iob_to_spans, span_prf, spans_to_iob  # noqa: E402
from extractor.types import TAGS, Sentence, Span  # noqa: E402
from tests.mams import load_mams, mams_texts  # noqa: E402

BINS = 10


def gold(split: str, first_id: int) -> list[tuple[Sentence, list[Span]]]:
    """Return one MAMS split as sentences with their gold spans."""
    return [
        (
            Sentence(first_id + i, d["sentence"], d["lang"]),
            [Span(s["start"], s["end"]) for s in d["mentions"]],
        )
        for i, d in enumerate(load_mams(split) or [])
    ]


def ece(truth: np.ndarray, prob: np.ndarray) -> float:
    """Return the expected calibration error of ``prob`` (equal-width bins, count-weighted).

    Bin means from scikit-learn's ``calibration_curve``; its bins drop empty ones, so the
    counts are taken with the same edges (``np.searchsorted`` on the inner edges, as it does).
    """
    frac_pos, mean_pred = calibration_curve(truth, prob, n_bins=BINS, strategy="uniform")
    edges = np.linspace(0.0, 1.0, BINS + 1)
    counts = np.bincount(np.searchsorted(edges[1:-1], prob), minlength=BINS)
    counts = counts[counts > 0]
    return float(np.sum(counts * np.abs(frac_pos - mean_pred)) / counts.sum())


def score(tagger: TraitTagger, items: list[Any], spans: list[list[Span]]) -> dict[str, float]:
    """Return the calibration figures and span F1 of ``tagger`` on ``items``."""
    recall_threshold, tagger.recall_threshold = tagger.recall_threshold, None
    paths = tagger.predict([f for _, f, _ in items])
    tagger.recall_threshold = recall_threshold
    rows, truth = [], []
    for (_, _, tags), path in zip(items, paths, strict=True):
        rows += [[m[t] for t in TAGS] for m in path.marginals]
        truth += [TAGS.index(t) for t in tags]
    probs = np.clip(np.array(rows), 1e-15, 1.0)
    probs = probs / probs.sum(axis=1, keepdims=True)
    gold_trait = (np.array(truth) != TAGS.index(OUTSIDE)).astype(int)
    trait = 1.0 - probs[:, TAGS.index(OUTSIDE)]
    best = [iob_to_spans(o, p.tags) for (o, _, _), p in zip(items, paths, strict=True)]
    recall = [
        iob_to_spans(o, recall_tags(p.tags, p.marginals, RECALL_THRESHOLD))
        for (o, _, _), p in zip(items, paths, strict=True)
    ]
    return {
        "log_loss": round(float(log_loss(truth, probs, labels=[0, 1, 2])), 4),
        "ece": round(ece(gold_trait, trait), 4),
        "brier": round(float(brier_score_loss(gold_trait, trait)), 4),
        "median_path_p": round(float(np.median([p.probability for p in paths])), 3),
        "f1_best_path": round(span_prf(spans, best).f1, 4),
        "f1_recall_0.3": round(span_prf(spans, recall).f1, 4),
    }


def main() -> None:
    """Print one JSON line per setting, size and draw, then the means."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("settings", nargs="+", help="JSON dicts of fit_tagger parameters")
    parser.add_argument("--sizes", default="100,200,0", help="gold sizes; 0 = all of train")
    parser.add_argument("--draws", type=int, default=3)
    args = parser.parse_args()
    if load_mams("train") is None:
        sys.exit("MAMS is not in ../shared/datasets/mams-atsa/; see tests/mams.py.")
    train = gold("train", 0)
    test = gold("test", len(train))
    texts = mams_texts()
    clusters = learn_clusters(texts)
    test_items = []
    for s, spans in test:
        offsets, feats, _ = sentence_items(s, None, clusters)
        test_items.append((offsets, feats, spans_to_iob(offsets, spans)))
    test_spans = [spans for _, spans in test]
    for raw in args.settings:
        params = json.loads(raw)
        for size in (int(x) for x in args.sizes.split(",")):
            rows = []
            for draw in range(args.draws if size else 1):
                order = list(range(len(train)))
                random.Random(draw).shuffle(order)
                labeled = [train[i] for i in order[: size or len(train)]]
                started = time.process_time()
                tagger = fit_tagger(labeled, [], None, clusters, calibrate=True, **params)
                seconds = time.process_time() - started
                fitted = tagger.temperature
                row: dict[str, Any] = {"params": params, "size": size, "draw": draw}
                row["temperature"] = round(fitted, 3)
                row["cpu_s"] = round(seconds, 1)
                tagger.temperature = 1.0
                row["t1"] = score(tagger, test_items, test_spans)
                tagger.temperature = fitted
                row["fitted"] = score(tagger, test_items, test_spans)
                print(json.dumps(row), flush=True)
                rows.append(row)
            mean = {
                key: {k: round(statistics.fmean(r[key][k] for r in rows), 4) for k in rows[0][key]}
                for key in ("t1", "fitted")
            }
            temps = [r["temperature"] for r in rows]
            print(json.dumps({"params": params, "size": size, "mean": mean, "temps": temps}))


if __name__ == "__main__":
    main()
