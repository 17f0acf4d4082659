"""Benchmark of the tagger: throughput end to end, training time, peak memory.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/bench_tagger.py [--sizes 20000,100000] [--train 2000] [--gold 100]

The corpus is synthetic: sentences of the demo study recombined (clauses of two demo
sentences joined), so that vocabulary and lengths look like real answers. Goals:
>= 3,000 sentences/s tagging on one core (features + CRF), <= 5 s to train on 2,000
sentences, <= 1 GB peak memory at 100k sentences; dictionary matching alone well above
1,700 sentences/s (100k sentences in under a minute). Times are CPU seconds of this
process (one core); on a machine shared with other work they still rise with the load
(shared caches and cores), so compare with a baseline in the same run: this script of
another revision (``git archive REV``) run in turn with this one.

The clusters are learned as `traits train` learns them, with the pretrained multilingual
space by default (``--space``; ``none`` for the workspace clusters alone), so the
tagger's features include the pretrained clusters users get; the script stops if the
space asked for did not load.
"""

from __future__ import annotations

import argparse
import json
import random
import resource
import sys
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.ingest.concepts import load_concept_list  # noqa: E402
from extractor.models.tagger import tag_sentences  # noqa: E402
from extractor.models.tagger_training import fit_tagger  # noqa: E402
from extractor.nlp import pretrained  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.dictionary import Dictionary, build_dictionary  # noqa: E402
from extractor.nlp.fold import fold  # noqa: E402
from extractor.nlp.text import tokenize  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402


def demo_gold() -> list[dict[str, Any]]:
    """Return the demo's gold sentences (the recombination material)."""
    path = ROOT / "sample_interviews" / "gold.jsonl"
    return [json.loads(line) for line in path.read_text(encoding="utf-8").splitlines()]


def synthetic(records: list[dict[str, Any]], n: int, seed: int = 0) -> list[Sentence]:
    """Return ``n`` sentences, each half of one demo sentence joined to half of another.

    Both halves come from sentences of the same language.
    """
    rng = random.Random(seed)
    by_lang: dict[str, list[str]] = {}
    for r in records:
        by_lang.setdefault(r["lang"].split("-")[0], []).append(r["sentence"])
    langs = sorted(by_lang)
    out = []
    for i in range(n):
        lang = rng.choice(langs)
        a, b = rng.choice(by_lang[lang]), rng.choice(by_lang[lang])
        wa, wb = a.split(), b.split()
        text = " ".join(wa[: max(1, len(wa) // 2)] + wb[len(wb) // 2 :])
        out.append(Sentence(id=i, text=text, lang=lang))
    return out


def peak_mb() -> float:
    """Peak resident memory of this process so far, in MB (Linux reports KiB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def one_size(
    size: int,
    records: list[dict[str, Any]],
    gold: list[tuple[Sentence, list[Span]]],
    dictionary: Dictionary,
    train: int,
    space: str,
) -> dict[str, float]:
    """Learn clusters on ``size`` sentences, train, then match and tag them all; return figures."""
    figures: dict[str, float] = {}
    corpus = synthetic(records, size)
    t0 = time.process_time()
    clusters = learn_clusters([(s.text, s.lang) for s in corpus], space=space)
    figures[f"clusters_s_{size}"] = time.process_time() - t0
    used = clusters["pretrained"]
    if used["space"] != space:
        raise SystemExit(f"The pretrained space {space!r} did not load (got {used['space']!r}).")
    words = [
        fold(s.text[a:b])
        for s in corpus[:1000]
        for a, b in tokenize(s.text, s.lang)
        if any(c.isalpha() for c in s.text[a:b])
    ]
    figures[f"pretrained_word_share_{size}"] = sum(w in used["clusters"] for w in words) / max(
        1, len(words)
    )
    silver = synthetic(records, max(0, train - len(gold)), seed=1)
    t0 = time.process_time()
    tagger = fit_tagger(gold, silver, dictionary, clusters)
    figures[f"train_s_{train}"] = time.process_time() - t0
    # CPU time of this process: "on one core" whatever else the machine is doing.
    t0 = time.process_time()
    dictionary.match_many(corpus)
    figures[f"dictionary_sentences_per_s_{size}"] = size / (time.process_time() - t0)
    t0, w0 = time.process_time(), time.perf_counter()
    for start in range(0, size, 1000):
        tag_sentences(tagger, corpus[start : start + 1000], dictionary, clusters)
    figures[f"tag_sentences_per_s_{size}"] = size / (time.process_time() - t0)
    figures[f"tag_wall_s_{size}"] = time.perf_counter() - w0
    figures[f"peak_mb_after_{size}"] = peak_mb()
    return figures


def demo_aliases() -> list[tuple[str, str, str]]:
    """Return the demo concept list's aliases as ``(concept_id, text, lang)``."""
    loaded = load_concept_list(ROOT / "sample_interviews" / "concepts.csv")
    return [(a.concept_id, a.text, a.lang) for a in loaded.aliases]


def main() -> None:
    """Run the benchmark and print its figures as a table and JSON."""
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--sizes", default="20000,100000")
    parser.add_argument("--train", type=int, default=2000)
    parser.add_argument(
        "--gold",
        type=int,
        default=100,
        help="labeled sentences among the training sentences (the rest are silver); the "
        "tool is meant for a few dozen to a hundred labels",
    )
    parser.add_argument("--space", default=pretrained.DEFAULT, choices=sorted(pretrained.SPACES))
    args = parser.parse_args()

    records = demo_gold()
    dictionary = build_dictionary(demo_aliases())
    gold = [
        (
            Sentence(id=-(i + 1), text=r["sentence"], lang=r["lang"]),
            [Span(s["start"], s["end"], s.get("concept"), s.get("stance")) for s in r["mentions"]],
        )
        for i, r in enumerate(records[: min(args.gold, args.train)])
    ]
    figures: dict[str, float] = {}
    for size in (int(s) for s in args.sizes.split(",")):
        found = one_size(size, records, gold, dictionary, args.train, args.space)
        figures |= found
        print(
            f"{size:>7} sentences: clusters {found[f'clusters_s_{size}']:.1f} s "
            f"({args.space}: {found[f'pretrained_word_share_{size}']:.0%} of words known), "
            f"train on {args.train} ({len(gold)} labeled) "
            f"{found[f'train_s_{args.train}']:.1f} s, "
            f"dictionary {found[f'dictionary_sentences_per_s_{size}']:,.0f} sentences/s, "
            f"tagging {found[f'tag_sentences_per_s_{size}']:,.0f} sentences/s, "
            f"peak {found[f'peak_mb_after_{size}']:,.0f} MB",
            flush=True,
        )
    print(json.dumps(figures, indent=1))


if __name__ == "__main__":
    main()
