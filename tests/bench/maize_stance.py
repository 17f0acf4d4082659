"""Stance and spans on real farmer answers: the maize concept-testing verbatims.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/maize_stance.py [--folds 5]

Reads the dataset in place (``../shared/datasets/maize-concept-testing/``, CC BY 4.0) and
our labels on 300 of its answers (``tests/maize.py`` says how they were made). Each answer
is one unit. Prints, at 0 labels (dictionary bootstrap from ``tests/maize_concepts.csv``):

- the share of predicted mentions, over all 4,800 answers, whose stance agrees with the
  direction the question asks for (``reason_preferred`` -> liked, ``reason_lesspreferred``
  -> disliked), with and without the two-question codebook;
- on our labelled answers: strict span F1, span+concept F1, and stance accuracy on the
  gold spans, with and without the codebook;
- stance accuracy on gold spans with labels: k-fold by respondent over our labelled
  answers, the stance model fitted on the other folds' labels and blended with the rules
  as a model version does (weight n / (n + STANCE_PRIOR)).
"""

from __future__ import annotations

import argparse
import sys
from collections import Counter
from pathlib import Path
from typing import Any

import numpy as np
from sklearn.model_selection import GroupKFold

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.bundle import STANCE_PRIOR, TraitModels  # noqa: E402
from extractor.models.stance import StanceModel, codebook_params  # noqa: E402
from extractor.nlp.spans import span_prf  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests import maize  # noqa: E402


def main() -> None:
    """Print the figures."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--folds", type=int, default=5)
    args = parser.parse_args()
    loaded = maize.load_workspace()
    if loaded is None:
        sys.exit(maize.SKIP_REASON)
    corpus, gold, aliases = loaded
    questions = codebook_params(maize.CODEBOOK)
    variants: list[tuple[str, dict[str, Any]]] = [("with codebook", {"questions": questions})]
    for label, params in [*variants, ("without", {})]:
        models = TraitModels(stance_params=params).fit([], corpus, aliases)
        predicted = models.predict(corpus)
        stances = [
            (s.question, m.stance)
            for s, p in zip(corpus, predicted, strict=True)
            for m in p.mentions
        ]
        agree = np.mean([maize.DIRECTION_STANCE[q or ""] == st for q, st in stances])
        print(
            f"{label}: {len(stances)} mentions in {len(corpus)} answers, "
            f"share agreeing with the question's direction {agree:.3f}; "
            f"stances {dict(Counter(st for _, st in stances))}"
        )
        by_row = {s.id: p for s, p in zip(corpus, predicted, strict=True)}
        gold_spans = [[Span(**sp) for sp in g["spans"]] for g in gold]
        pred_spans = [
            [Span(m.start, m.end, m.concept, m.stance) for m in by_row[g["row"]].mentions]
            for g in gold
        ]
        spans = span_prf(gold_spans, pred_spans)
        linked = span_prf(gold_spans, pred_spans, with_concept=True)
        items = [
            (Sentence(g["row"], g["text"], "en", g["question"]), sp)
            for g in gold
            for sp in g["spans"]
        ]
        rule = StanceModel(**params).predict_many(
            [(s, Span(sp["start"], sp["end"])) for s, sp in items]
        )
        acc = np.mean([p[0] == sp["stance"] for p, (_, sp) in zip(rule, items, strict=True)])
        print(
            f"  our 300 answers: span F1 {spans.f1:.3f} (P {spans.precision:.3f} "
            f"R {spans.recall:.3f}), span+concept F1 {linked.f1:.3f}, "
            f"stance accuracy on gold spans at 0 labels {acc:.3f} ({len(items)} spans)"
        )
    cross_validated_stance(gold, questions, args.folds)


def cross_validated_stance(gold: list[dict], questions: dict, folds: int) -> None:
    """Print stance accuracy on gold spans, k-fold by respondent, with labels."""
    items = [
        (Sentence(g["row"], g["text"], "en", g["question"]), Span(sp["start"], sp["end"]),
         sp["stance"], g["respondent"])
        for g in gold
        for sp in g["spans"]
    ]  # fmt: skip
    groups = [r for *_, r in items]
    right = 0
    for train, test in GroupKFold(n_splits=folds).split(items, groups=groups):
        model = StanceModel(questions=questions).fit([items[i][:3] for i in train])
        n = len(train)
        proba = model.predict_proba_blend([items[i][:2] for i in test], n / (n + STANCE_PRIOR))
        right += sum(
            ("liked", "disliked", "wanted", "neutral")[int(k)] == items[i][2]
            for k, i in zip(proba.argmax(axis=1), test, strict=True)
        )
    print(
        f"stance accuracy on gold spans, {folds}-fold by respondent, about "
        f"{len(items) * (folds - 1) // folds} labelled mentions per fold: {right / len(items):.3f}"
    )


if __name__ == "__main__":
    main()
