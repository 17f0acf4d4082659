"""What the context vectors cost: stance fitting and prediction on the demo, with and without.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/stance_speed.py [--repeats 3] \
        [--baseline-blocks clause,sentence,region,mention]

Fits the stance model on the demo's gold stances (``sample_interviews/gold.jsonl``,
invented data) and predicts every gold span, with the space ``none`` and with the
default space, in the same run, in turn within each repeat. The first prediction with the
space encodes every context text (cold cache: what a new model version pays once per
run); later ones hit the cache (word vectors stay cached by the space). Prints seconds
per repeat (median and spread) and the ratio to ``none``. ``--baseline-blocks`` adds the
default space reading only those blocks of
:data:`~extractor.models.stance_context.BLOCKS` and prints the default's paired ratios
to it (median and range over the repeats).
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import extractor.models.stance as stance_module  # noqa: E402
from extractor.models import stance_context  # noqa: E402
from extractor.models.stance import StanceModel  # noqa: E402
from extractor.nlp import pretrained  # noqa: E402
from tests.bench.stance_transfer import demo, items  # noqa: E402

STAGES = ("fit", "predict, cold", "predict, cached")


def main() -> None:
    """Print the figures."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--baseline-blocks", default="")
    args = parser.parse_args()
    every = items(demo())
    train = [(s, sp, y) for _, s, sp, y in every]
    spans = [(s, sp) for _, s, sp, _ in every]
    started = time.perf_counter()
    pretrained.load_space()
    print(f"{len(spans)} demo spans; space loaded in {time.perf_counter() - started:.2f} s")
    default = stance_context.DEFAULT_BLOCKS
    configs = [(pretrained.NONE, default), (pretrained.DEFAULT, default)]
    if args.baseline_blocks:
        configs.append((pretrained.DEFAULT, tuple(args.baseline_blocks.split(","))))
    times: dict[int, dict[str, list[float]]] = {k: {s: [] for s in STAGES} for k in range(3)}
    for _ in range(args.repeats):
        for k, (space, blocks) in enumerate(configs):
            stance_module.DEFAULT_BLOCKS = blocks
            stance_context._CACHE.clear()
            t0 = time.perf_counter()
            model = StanceModel(space=space).fit(train)
            t1 = time.perf_counter()
            stance_context._CACHE.clear()
            model.predict_proba_many(spans)
            t2 = time.perf_counter()
            model.predict_proba_many(spans)
            t3 = time.perf_counter()
            for stage, seconds in zip(STAGES, (t1 - t0, t2 - t1, t3 - t2), strict=True):
                times[k][stage].append(seconds)
    stance_module.DEFAULT_BLOCKS = default
    for k, (space, blocks) in enumerate(configs):
        label = space if k < 2 else f"{space} reading {'+'.join(blocks)}"
        for stage in STAGES:
            runs = times[k][stage]
            median = statistics.median(runs)
            ratio = f", x{median / statistics.median(times[0][stage]):.1f} of none" if k else ""
            spread = max(runs) - min(runs)
            print(f"space {label}: {stage} {median:.2f} s (spread {spread:.2f} s){ratio}")
    if args.baseline_blocks:
        for stage in STAGES:
            ratios = [a / b for a, b in zip(times[1][stage], times[2][stage], strict=True)]
            print(
                f"default blocks vs {args.baseline_blocks}, {stage}: paired ratio median "
                f"{statistics.median(ratios):.2f} (range {min(ratios):.2f}-{max(ratios):.2f})"
            )


if __name__ == "__main__":
    main()
