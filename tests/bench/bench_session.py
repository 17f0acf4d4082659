"""Latency of submit -> next on a synthetic 5,000-sentence pool (not part of the test suite).

Run: ``python tests/bench/bench_session.py [--answers 200] [--sentences 5000]``.

A fake model tags the pool in pure Python (so the background thread competes with the
annotator's thread for the interpreter, as a real tagger would) and its retraining
sleeps, to imitate slow fitting; the simulated annotator spends ``--think`` seconds
per sentence (outside the measured time). Prints startup time and the p50/p95/max of the time
from calling ``submit`` to ``next`` returning the following sentence, per strategy.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path[:0] = [str(ROOT), str(ROOT / "tests")]

from extractor.loop.samples import SessionSettings  # noqa: E402
from extractor.loop.session import Session  # noqa: E402
from tests.fake_model import FakeModel, build_store  # noqa: E402

SUBJECTS = [
    "Zamaro Red",
    "Lintu Yellow",
    "the climbing one",
    "this bean",
    "the new seed",
    "my mother's variety",
    "the Kalowa type",
]
VERBS = [
    "cooks fast",
    "is bitter",
    "has big grains",
    "gives a small harvest",
    "survives the dry spell",
    "turns the soup dark",
    "sells well in Tinsoka",
    "stores badly",
    "needs stakes",
    "tastes sweet",
]
TAILS = [
    "after the rains",
    "when we grow it near the river",
    "according to my husband",
    "in the short season",
    "",
    "at the market",
    "if the soil is poor",
]


def synthetic_answers(n_sentences: int, seed: int = 0) -> list[tuple[str, str]]:
    """Invented two-sentence answers, ``n_sentences`` sentences in all."""
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(n_sentences // 2):
        parts = []
        for _ in range(2):
            words = (rng.choice(SUBJECTS), rng.choice(VERBS), rng.choice(TAILS))
            parts.append(" ".join(w for w in words if w).capitalize() + ".")
        out.append((parts[0], parts[1]))
    return out


def bench(
    strategy: str, answers: int, n_sentences: int, retrain_delay: float, think: float
) -> None:
    """Label ``answers`` sentences in one session and print latency figures."""
    rng = np.random.default_rng(1)
    probs = rng.uniform(0.05, 0.99, size=n_sentences + 1)
    with tempfile.TemporaryDirectory() as folder:
        conn = build_store(Path(folder) / "bench.sqlite", synthetic_answers(n_sentences))

        def retrain(data: object) -> FakeModel:
            time.sleep(retrain_delay)
            shift = rng.uniform(0.8, 1.2, size=n_sentences + 1)
            return FakeModel(path_prob=lambda s: float(min(probs[s.id] * shift[s.id], 0.99)))

        started = time.perf_counter()
        session = Session.open(
            conn,
            annotator="Bench",
            strategy=strategy,
            batch_size=10,
            predictor=FakeModel(path_prob=lambda s: float(probs[s.id])),
            retrain=retrain,
            settings=SessionSettings(retrain_every=10),
        )
        item = session.next()
        startup = time.perf_counter() - started
        latencies = []
        for _ in range(answers):
            if item is None:
                break
            t0 = time.perf_counter()
            session.submit(item.sentence.id, list(item.suggestion))
            item = session.next()
            latencies.append(time.perf_counter() - t0)
            time.sleep(think)  # the annotator reads the sentence; retraining goes on
        session.quit()
        conn.close()
    ms = np.array(latencies) * 1000
    print(
        f"{strategy:>16}: startup {startup:5.2f} s | {len(ms)} answers | submit->next "
        f"p50 {np.percentile(ms, 50):6.1f} ms  p95 {np.percentile(ms, 95):6.1f} ms  "
        f"max {ms.max():6.1f} ms | models installed {session.model_version} "
        f"| kappas {len(session.kappas)}"
    )


def main() -> None:
    """Parse options and run the benchmark for each strategy."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--answers", type=int, default=200)
    parser.add_argument("--sentences", type=int, default=5000)
    parser.add_argument(
        "--retrain-delay", type=float, default=1.5, help="seconds the fake retraining sleeps"
    )
    parser.add_argument(
        "--think",
        type=float,
        default=0.1,
        help="seconds the simulated annotator spends per sentence",
    )
    parser.add_argument("--strategies", default="default,least_confidence,random")
    args = parser.parse_args()
    for name in args.strategies.split(","):
        bench(name, args.answers, args.sentences, args.retrain_delay, args.think)


if __name__ == "__main__":
    main()
