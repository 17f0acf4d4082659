"""Respondent-triple F1 on the demo with and without implicit (sentence-level) detection.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/implicit_demo.py [--folds 5] [--seed 0]

The demo's ``gold.jsonl`` (invented study; its mentions and 25 hand-written implicit
traits) is cross-validated in folds grouped by respondent: models are trained on the other
folds' labels (mentions and implicit traits) and the concept list, and predict the held-out
fold. Predictions of all folds are pooled and scored once:

* respondent-triple F1 ``(respondent, concept, stance)`` against gold mentions and implicit
  traits, from predicted mentions alone ("spans only") and from predicted mentions plus the
  implicit traits the sentence-level model adds ("with implicit detection");
* the same against gold mentions alone, for comparison with span-only figures;
* sentence-level concept F1 and stance accuracy (:mod:`extractor.models.sentence_metrics`).
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.ingest.concepts import load_concept_list  # noqa: E402
from extractor.ingest.labels import read_labels, to_gold  # noqa: E402
from extractor.models import bundle  # noqa: E402
from extractor.models.bundle import SentencePrediction, TraitModels  # noqa: E402
from extractor.models.metrics import respondent_scores  # noqa: E402
from extractor.models.sentence_metrics import sentence_scores, stated  # noqa: E402
from extractor.models.validation import group_folds  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.types import Implicit, Sentence, Span  # noqa: E402

Gold = list[tuple[Sentence, list[Span]]]


def predict_folds(
    folds: int, seed: int
) -> tuple[Gold, dict[int, tuple[Implicit, ...]], list[SentencePrediction]]:
    """Return the demo gold, its implicit traits by sentence ID, and the pooled predictions.

    Models of each fold are trained on the other folds' labels (grouped by respondent)
    and the concept list, with every gold sentence as the workspace's text; the i-th
    prediction is that of the i-th gold sentence.
    """
    records = read_labels(ROOT / "sample_interviews" / "gold.jsonl", default_lang="en")
    gold = to_gold(records)
    implicit = {s.id: r.implicit for (s, _), r in zip(gold, records, strict=True) if r.implicit}
    concepts = load_concept_list(ROOT / "sample_interviews" / "concepts.csv")
    aliases = [(a.concept_id, a.text, a.lang) for a in concepts.aliases]
    corpus = [s for s, _ in gold]
    clusters = learn_clusters([(s.text, s.lang) for s in corpus], seed=seed)
    groups = [s.respondent or str(s.id) for s in corpus]
    predicted: dict[int, SentencePrediction] = {}
    for fold in group_folds(groups, folds, seed):
        held = set(fold)
        train = [g for i, g in enumerate(gold) if i not in held]
        models = TraitModels().fit(train, corpus, aliases, clusters=clusters, implicit=implicit)
        test = [gold[i][0] for i in fold]
        predicted.update(zip(fold, models.predict(test), strict=True))
    return gold, implicit, [predicted[i] for i in range(len(gold))]


def main() -> None:
    """Cross-validate on the demo gold and print the figures as JSON."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--folds", type=int, default=5)
    parser.add_argument("--seed", type=int, default=0)
    args = parser.parse_args()
    # Predict implicit traits down to 0.4 (the sentence model's own threshold), so that the
    # sweep below can show every bar; the bundle itself adds them only at IMPLICIT_THRESHOLD.
    bundle.IMPLICIT_THRESHOLD = 0.4
    gold, implicit, predicted = predict_folds(args.folds, args.seed)
    order = range(len(gold))
    sentences = [gold[i][0] for i in order]
    spans = [list(gold[i][1]) for i in order]
    both = [
        [*spans[i], *(Span(0, 0, t.concept, t.stance) for t in implicit.get(gold[i][0].id, ()))]
        for i in order
    ]
    only = [list(predicted[i].mentions) for i in order]
    added = [[*predicted[i].mentions, *predicted[i].implicit] for i in order]
    whole = sentence_scores(
        sentences,
        [stated(spans[i], implicit.get(gold[i][0].id, ())) for i in order],
        [stated(added[i]) for i in order],
    )
    figures: dict[str, Any] = {
        "triple_f1_gold_both": {
            "spans_only": respondent_scores(sentences, both, only),
            "with_implicit_detection": respondent_scores(sentences, both, added),
        },
        "triple_f1_gold_spans": {
            "spans_only": respondent_scores(sentences, spans, only),
            "with_implicit_detection": respondent_scores(sentences, spans, added),
        },
        "sentence_concept": whole.concept,
        "sentence_stance_accuracy": whole.stance_accuracy,
        "implicit_predicted": sum(len(predicted[i].implicit) for i in order),
        "implicit_gold": sum(len(v) for v in implicit.values()),
        # The same predictions, keeping only implicit traits at or above each probability:
        # how the threshold of adding a trait without a span trades precision for recall.
        "triple_f1_gold_both_by_threshold": {
            str(t): respondent_scores(
                sentences,
                both,
                [
                    [
                        *predicted[i].mentions,
                        *(m for m in predicted[i].implicit if m.confidence >= t),
                    ]
                    for i in order
                ],
            )
            for t in (0.4, 0.5, 0.6, 0.7, 0.8, 0.9)
        },
    }
    print(json.dumps(figures, default=lambda o: getattr(o, "__dict__", str(o)), indent=1))


if __name__ == "__main__":
    main()
