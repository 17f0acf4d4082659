"""Stance accuracy on MAMS gold spans: the stance model fitted on a whole split.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/mams_stance.py [--test test] [--space use-m3 none] \
        [--C 0.3] [--weight 1.0]

MAMS (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0; read in place from
``../shared/datasets/mams-atsa/``): every sentence holds aspects of different
polarities. The stance model is fitted on the train split's gold spans and scored on
the test (or validation) split's gold spans; positive/negative/neutral read as
liked/disliked/neutral. The fit is deterministic (lbfgs, no sampling), so one run is
the figure. Prints accuracy, the majority share, and fit and prediction times, per
space, C and weight.
"""

from __future__ import annotations

import argparse
import sys
import time
from collections import Counter
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.stance import StanceModel  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.mams import SKIP_REASON, load_mams  # noqa: E402


def triples(split: str) -> list[tuple[Sentence, Span, str]]:
    """Return ``(sentence, span, stance)`` for every gold span of a MAMS split."""
    rows = load_mams(split)
    if rows is None:
        sys.exit(SKIP_REASON)
    return [
        (Sentence(n, row["sentence"], "en"), Span(s["start"], s["end"]), s["stance"])
        for n, row in enumerate(rows)
        for s in row["mentions"]
    ]


def main() -> None:
    """Print the figures."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--test", default="test", choices=("val", "test"))
    parser.add_argument("--space", nargs="+", default=["use-m3", "none"])
    parser.add_argument("--C", nargs="+", type=float, default=[0.3])
    parser.add_argument("--weight", nargs="+", type=float, default=[1.0])
    args = parser.parse_args()
    train, test = triples("train"), triples(args.test)
    gold = [y for *_, y in test]
    majority = Counter(gold).most_common(1)[0][1] / len(gold)
    print(f"MAMS train {len(train)} spans, {args.test} {len(test)} spans, majority {majority:.3f}")
    for space in args.space:
        for C in args.C:
            for weight in args.weight if space != "none" else [1.0]:
                started = time.perf_counter()
                model = StanceModel(C=C, space=space, dense_weight=weight).fit(train)
                fitted = time.perf_counter()
                predicted = model.predict_many([(s, sp) for s, sp, _ in test])
                done = time.perf_counter()
                accuracy = np.mean([p[0] == y for p, y in zip(predicted, gold, strict=True)])
                print(
                    f"space {space} C {C} weight {weight}: accuracy {accuracy:.3f} "
                    f"(fit {fitted - started:.1f} s, predict {done - fitted:.1f} s)",
                    flush=True,
                )


if __name__ == "__main__":
    main()
