"""MAMS-ACSA: 100 sentences chosen by sentence-level uncertainty against 100 random, paired.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/acsa_strategy.py [--repeats 10] [--budget 100]

MAMS-ACSA (open data, ``../shared/datasets/mams-acsa/``) has no spans, so the tagger has
nothing to be unsure about and ``--strategy`` (``norm_logprob_sentence`` by default: the
default strategy's scoring plus :func:`extractor.loop.strategies.sentence_uncertainty`)
ranks by its sentence-level part, weighed by information density and picked in diverse
batches exactly as ``traits label`` does. A simulated annotator
answers from the gold categories; the sentence-level model (with the test's concept list
of the eight categories) is retrained after every batch of 10 and scored on the test
split by category micro-F1 (scikit-learn's ``f1_score``). Each repeat starts both
strategies from the same 10 random seed sentences; the gain is paired by repeat.
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
from sklearn.metrics import f1_score  # noqa: E402
from sklearn.preprocessing import MultiLabelBinarizer  # noqa: E402

from extractor.ingest.labels import records_from_dicts  # noqa: E402
from extractor.loop import strategies as active  # noqa: E402
from extractor.models.sentence_traits import SentenceTraits  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.dictionary import build_dictionary  # noqa: E402
from extractor.types import Sentence  # noqa: E402
from tests.mams_acsa import ACSA_SKIP, CATEGORIES, load_acsa  # noqa: E402
from tests.models.test_sentence_traits import mams_aliases  # noqa: E402

BATCH = 10
SUBPOOL = 500


def _run(
    strategy: str, seed_ids: list[int], shared: dict[str, Any], budget: int, repeat: int
) -> float:
    spec = active.get_strategy(strategy)
    pool, concepts = shared["pool"], shared["concepts"]
    labeled = list(seed_ids)
    rng = random.Random(1000 + repeat)
    model = None
    while len(labeled) < budget:
        model = SentenceTraits().fit(
            [pool[i] for i in labeled],
            [concepts[i] for i in labeled],
            dictionary=shared["dictionary"],
            clusters=shared["clusters"],
        )
        taken = set(labeled)
        unlabeled = [i for i in range(len(pool)) if i not in taken]
        unlabeled = sorted(rng.sample(unlabeled, min(SUBPOOL, len(unlabeled))))
        if spec.score is active.random_score:
            scores = np.zeros(len(unlabeled))
        else:
            proba = model.predict_proba(
                [pool[i] for i in unlabeled],
                dictionary=shared["dictionary"],
                clusters=shared["clusters"],
            )
            items = [active.PoolItem(concept_probs=tuple(row)) for row in proba]
            scores = active.weigh_by_density(
                spec.score(items), shared["density"][unlabeled], spec.density_beta
            )
        picked = active.select(
            scores,
            shared["vectors"][unlabeled] if spec.diversity else None,
            min(BATCH, budget - len(labeled)),
            diversity=spec.diversity,
            labeled_vectors=shared["vectors"][labeled] if spec.diversity else None,
            seed=repeat + len(labeled),
        )
        labeled += [unlabeled[k] for k in picked]
    model = SentenceTraits().fit(
        [pool[i] for i in labeled],
        [concepts[i] for i in labeled],
        dictionary=shared["dictionary"],
        clusters=shared["clusters"],
    )
    proba = model.predict_proba(
        shared["test"], dictionary=shared["dictionary"], clusters=shared["clusters"]
    )
    found = [[c for c, _ in row] for row in model.detected(proba)]
    binarizer = shared["binarizer"]
    return float(f1_score(shared["gold"], binarizer.transform(found), average="micro"))


def main() -> None:
    """Run the paired comparison and print the figures as JSON."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=10)
    parser.add_argument("--budget", type=int, default=100)
    parser.add_argument("--strategy", default="norm_logprob_sentence")
    args = parser.parse_args()
    train, test = load_acsa("train"), load_acsa("test")
    if train is None or test is None:
        sys.exit(ACSA_SKIP)
    train_records, test_records = records_from_dicts(train), records_from_dicts(test)
    pool = [Sentence(i, r.text, r.lang) for i, r in enumerate(train_records)]
    binarizer = MultiLabelBinarizer(classes=list(CATEGORIES)).fit([])
    vectors = active.sentence_vectors([s.text for s in pool], seed=0)
    shared = {
        "pool": pool,
        "concepts": [[t.concept for t in r.implicit] for r in train_records],
        "test": [Sentence(10_000 + i, r.text, r.lang) for i, r in enumerate(test_records)],
        "gold": binarizer.transform([[t.concept for t in r.implicit] for r in test_records]),
        "binarizer": binarizer,
        "dictionary": build_dictionary(mams_aliases()),
        "clusters": learn_clusters(
            [(s.text, s.lang) for s in pool], seed=0, granularities=(32,), prototypes=0
        ),
        "vectors": vectors,
        "density": active.density(vectors),
    }
    results: dict[str, list[float]] = {args.strategy: [], "random": []}
    for repeat in range(args.repeats):
        seed_ids = random.Random(repeat).sample(range(len(pool)), BATCH)
        for strategy in results:
            results[strategy].append(_run(strategy, seed_ids, shared, args.budget, repeat))
        print(repeat, {k: round(v[-1], 3) for k, v in results.items()}, flush=True)
    chosen = results[args.strategy]
    gains = [d - r for d, r in zip(chosen, results["random"], strict=True)]
    print(
        json.dumps(
            {
                "budget": args.budget,
                "repeats": args.repeats,
                "strategy": args.strategy,
                "strategy_mean": statistics.mean(chosen),
                "random_mean": statistics.mean(results["random"]),
                "paired_gain_mean": statistics.mean(gains),
                "paired_gain_sd": statistics.stdev(gains) if len(gains) > 1 else 0.0,
                "repeats_won": sum(g > 0 for g in gains),
                "runs": results,
            },
            indent=1,
        )
    )


if __name__ == "__main__":
    main()
