"""How far an English-only concept list reaches into French and Spanish answers, 0 labels.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/bench_english_list.py [--spaces none,use-m3]

The demo's models are trained without a single label (dictionary silver only), once with
the full concept list and once with its English rows only, with and without the
pretrained space; span+concept F1 is scored on the demo's French and Spanish gold
sentences. The figure of interest is the English-only score as a share of the full one.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.ingest.concepts import load_concept_list  # noqa: E402
from extractor.models.bundle import TraitModels  # noqa: E402
from extractor.models.metrics import score  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402

Alias = tuple[str, str, str]
Gold = list[tuple[Sentence, list[Span]]]


def demo_lists() -> tuple[list[Sentence], Gold, dict[str, list[Alias]]]:
    """Return the demo's gold sentences, the French and Spanish ones with their spans, lists.

    The lists are the concept list's aliases whole (``full``) and cut to its English rows
    (``english``), as ``(concept_id, text, lang)``.
    """
    records = [
        json.loads(line)
        for line in (ROOT / "sample_interviews" / "gold.jsonl").read_text("utf-8").splitlines()
    ]
    gold = []
    for i, r in enumerate(records):
        spans = [Span(s["start"], s["end"], concept=s.get("concept")) for s in r["mentions"]]
        gold.append((Sentence(i, r["sentence"], r["lang"], respondent=r["respondent"]), spans))
    target = [(s, spans) for s, spans in gold if s.lang.split("-")[0] in ("fr", "es")]
    concepts = load_concept_list(ROOT / "sample_interviews" / "concepts.csv")
    full = [(a.concept_id, a.text, a.lang) for a in concepts.aliases]
    english = [a for a in full if a[2].split("-")[0] == "en"]
    return [s for s, _ in gold], target, {"full": full, "english": english}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--spaces", default="none,use-m3")
    parser.add_argument(
        "--silver",
        default="on",
        help="on, off or on,off: whether candidate synonyms join the silver dictionary",
    )
    args = parser.parse_args()
    corpus, target, lists = demo_lists()
    full, english = lists["full"], lists["english"]
    for space, silver in [
        (sp, si) for sp in args.spaces.split(",") for si in args.silver.split(",")
    ]:
        clusters = learn_clusters([(s.text, s.lang) for s in corpus], space=space)
        figures: dict[str, Any] = {}
        for name, aliases in (("full", full), ("english", english)):
            started = time.perf_counter()
            models = TraitModels(silver_synonyms=silver == "on")
            models.fit([], corpus, aliases, clusters=clusters)
            fit_seconds = time.perf_counter() - started
            pred = models.predict([s for s, _ in target])
            report = score(target, [p.mentions for p in pred])
            sc = report.span_concept
            figures[name] = {
                "span_f1": round(report.span.f1, 4),
                "concept_f1": sc and round(sc.f1, 4),
                "silver_aliases": len(models.silver_aliases_),
                "fit_s": round(fit_seconds, 1),
            }
        share = None
        if figures["full"]["concept_f1"]:
            share = round(
                (figures["english"]["concept_f1"] or 0) / figures["full"]["concept_f1"], 3
            )
        print(
            json.dumps(
                {
                    "space": space,
                    "silver": silver,
                    "sentences": len(target),
                    **figures,
                    "share": share,
                }
            )
        )


if __name__ == "__main__":
    main()
