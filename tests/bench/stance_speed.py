"""What the context vectors cost: stance fitting and prediction on the demo, with and without.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/stance_speed.py [--repeats 3]

Fits the stance model on the demo's gold stances (``sample_interviews/gold.jsonl``,
invented data) and predicts every gold span, with the space ``none`` and with the
default space, in the same run. The first prediction with the space encodes every
context text (cold cache: what a new model version pays once per run); later ones hit
the cache (word vectors stay cached by the space). Prints seconds per repeat (median and
spread) and the ratio to ``none``.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models import stance_context  # noqa: E402
from extractor.models.stance import StanceModel  # noqa: E402
from extractor.nlp import pretrained  # noqa: E402
from tests.bench.stance_transfer import demo, items  # noqa: E402


def main() -> None:
    """Print the figures."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    every = items(demo())
    train = [(s, sp, y) for _, s, sp, y in every]
    spans = [(s, sp) for _, s, sp, _ in every]
    started = time.perf_counter()
    pretrained.load_space()
    print(f"{len(spans)} demo spans; space loaded in {time.perf_counter() - started:.2f} s")
    base: dict[str, float] = {}
    for space in (pretrained.NONE, pretrained.DEFAULT):
        fits, colds, warms = [], [], []
        for _ in range(args.repeats):
            stance_context._CACHE.clear()
            t0 = time.perf_counter()
            model = StanceModel(space=space).fit(train)
            t1 = time.perf_counter()
            stance_context._CACHE.clear()
            model.predict_proba_many(spans)
            t2 = time.perf_counter()
            model.predict_proba_many(spans)
            t3 = time.perf_counter()
            fits.append(t1 - t0)
            colds.append(t2 - t1)
            warms.append(t3 - t2)
        for what, runs in (("fit", fits), ("predict, cold", colds), ("predict, cached", warms)):
            median = statistics.median(runs)
            spread = max(runs) - min(runs)
            ratio = f", x{median / base[what]:.1f} of none" if what in base else ""
            base.setdefault(what, median)
            print(f"space {space}: {what} {median:.2f} s (spread {spread:.2f} s){ratio}")


if __name__ == "__main__":
    main()
