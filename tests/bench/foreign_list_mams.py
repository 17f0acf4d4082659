"""How far a concept list without English rows reaches into real English answers, 0 labels.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/foreign_list_mams.py [--train 1500] [--offset 0] [--space use-m3]

The reverse of ``bench_english_list.py`` on real text: MAMS aspect terms (English
restaurant reviews, open data, read from ``../shared/datasets/mams-atsa/``) and a small
concept list of restaurant aspects written by us in French and Spanish only (below; the
categories are MAMS-ACSA's). Models are trained without a label (dictionary silver from
the list and its silver aliases) on ``--train`` train sentences from ``--offset`` plus the test
sentences, and strict span F1 is scored on the test split (MAMS has no concept per term).
Also printed: the silver aliases, and the share of them that MAMS marks as an aspect
term somewhere in its train split (their precision as aspect terms).
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.bundle import TraitModels  # noqa: E402
from extractor.models.metrics import score  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.fold import fold  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.mams import SKIP_REASON, load_mams  # noqa: E402

# Written for this bench (common restaurant words, typed from memory).
LIST = {
    "food": {
        "fr": "nourriture|plat|plats|cuisine|repas|dessert|viande|poisson|entrée",
        "es": "comida|plato|platos|postre|carne|pescado|entrante",
    },
    "drinks": {"fr": "boissons|vin|bière|cocktails", "es": "bebidas|vino|cerveza|cócteles"},
    "service": {"fr": "service|attente|accueil", "es": "servicio|atención|espera"},
    "staff": {
        "fr": "personnel|serveur|serveuse|serveurs|gérant|hôtesse",
        "es": "personal|camarero|camarera|meseros|gerente|anfitriona",
    },
    "price": {"fr": "prix|addition|cher|tarifs", "es": "precio|precios|cuenta|caro|barato"},
    "ambience": {"fr": "ambiance|décor|musique|atmosphère", "es": "ambiente|decoración|música"},
    "menu": {"fr": "menu|carte|carte des vins|choix", "es": "menú|carta|carta de vinos"},
    "place": {"fr": "endroit|salle|table|terrasse", "es": "lugar|local|mesa|terraza"},
}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--train", type=int, default=1500)
    parser.add_argument("--offset", type=int, default=0, help="first train sentence used")
    parser.add_argument("--space", default="use-m3")
    args = parser.parse_args()
    train, test = load_mams("train"), load_mams("test")
    if train is None or test is None:
        sys.exit(SKIP_REASON)
    aliases = [
        (concept, text, lang)
        for concept, by_lang in LIST.items()
        for lang, texts in by_lang.items()
        for text in texts.split("|")
    ]
    used = train[args.offset : args.offset + args.train]
    rows = used + test
    corpus = [Sentence(i, r["sentence"], "en") for i, r in enumerate(rows)]
    target = [
        (s, [Span(m["start"], m["end"]) for m in r["mentions"]])
        for s, r in zip(corpus[len(used) :], test, strict=True)
    ]
    terms = {fold(r["sentence"][m["start"] : m["end"]]) for r in train for m in r["mentions"]}
    clusters = learn_clusters([(s.text, s.lang) for s in corpus], space=args.space)
    started = time.perf_counter()
    models = TraitModels().fit([], corpus, aliases, clusters=clusters)
    pred = models.predict([s for s, _ in target])
    report = score(target, [p.mentions for p in pred])
    silver = models.silver_aliases_
    print(
        json.dumps(
            {
                "space": args.space,
                "sentences": len(target),
                "train": [args.offset, args.offset + len(used)],
                "span": [round(report.span.precision, 4), round(report.span.recall, 4)],
                "span_f1": round(report.span.f1, 4),
                "silver_aliases": len(silver),
                "silver_marked_in_train": round(
                    sum(fold(t) in terms for _, t, _ in silver) / max(1, len(silver)), 3
                ),
                "seconds": round(time.perf_counter() - started, 1),
            }
        )
    )
    print(sorted((c, t) for c, t, _ in silver))


if __name__ == "__main__":
    main()
