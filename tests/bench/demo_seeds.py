"""The demo's cross-validated respondent-triple F1 over several fold seeds, with its spread.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/demo_seeds.py [--repeats 10] [--folds 5] [--jobs 2]

``implicit_demo.py`` reports one split of the demo's respondents into folds (seed 0). The
figure moves with the split, because the 58 respondents are few and each fold's models
learn from the others; this bench repeats the same cross-validation for seeds 0 to
``--repeats - 1`` (each seed draws other folds and other workspace clusters) and prints
each seed's respondent-triple F1, spans only and with the sentence-level model's implicit
traits at the shipped threshold (as ``traits run`` adds them), then their mean, sample
standard deviation, minimum and maximum. Compare a change with main as paired gains per
seed, not as the difference of two means.
"""

from __future__ import annotations

import argparse
import json
import statistics
import sys
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.metrics import respondent_scores  # noqa: E402
from extractor.types import Span  # noqa: E402
from tests.bench.implicit_demo import predict_folds  # noqa: E402


def one_seed(folds: int, seed: int) -> dict[str, float]:
    """Return the respondent-triple F1 of one fold seed, spans only and with implicit traits."""
    gold, implicit, predicted = predict_folds(folds, seed)
    sentences = [s for s, _ in gold]
    both = [
        [*spans, *(Span(0, 0, t.concept, t.stance) for t in implicit.get(s.id, ()))]
        for s, spans in gold
    ]
    only = [list(p.mentions) for p in predicted]
    added = [[*p.mentions, *p.implicit] for p in predicted]
    figures = {}
    for name, pred in (("spans_only", only), ("with_implicit", added)):
        scores = respondent_scores(sentences, both, pred)
        figures[name] = round(scores.f1, 4) if scores else float("nan")
    return figures


def spread(values: list[float]) -> dict[str, float]:
    """Mean, sample standard deviation, minimum and maximum, rounded to 4 places."""
    return {
        "mean": round(statistics.fmean(values), 4),
        "sd": round(statistics.stdev(values), 4) if len(values) > 1 else 0.0,
        "min": min(values),
        "max": max(values),
    }


def main() -> None:
    """Cross-validate the demo once per seed and print the figures and their spread as JSON."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=10)
    parser.add_argument("--folds", type=int, default=5)
    parser.add_argument("--jobs", type=int, default=1, help="processes (one seed each)")
    args = parser.parse_args()
    seeds = range(args.repeats)
    with ProcessPoolExecutor(max_workers=args.jobs) as pool:
        runs = list(pool.map(one_seed, [args.folds] * args.repeats, seeds))
    out: dict[str, Any] = {"by_seed": dict(zip(seeds, runs, strict=True))}
    for name in ("spans_only", "with_implicit"):
        out[name] = spread([run[name] for run in runs])
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
