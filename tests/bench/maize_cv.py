"""Tagging, linking and respondent triples on real farmer answers, with and without labels.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/maize_cv.py [--folds 5] [--seed 0]

Reads the maize concept-testing verbatims in place (``../shared/datasets/``, CC BY 4.0;
never copied) and our labels on 300 of the answers (``tests/maize.py`` says how they were
made), with our concept list ``tests/maize_concepts.csv`` and the two-question codebook a
user would write. Each answer is one unit; all 4,800 answers are the workspace's text.

The 300 labelled answers are split into folds by respondent. For each fold the models are
trained as a model version would be (dictionary bootstrap from the concept list, the other
folds' labels, all answers as unlabelled text) and predict the held-out fold; the folds'
predictions are pooled and scored once, against the same predictions with no label at all
(the cold start every new study begins with):

- strict span F1, span+concept F1 and span+concept+stance F1 (:func:`span_prf`);
- respondent-triple F1: ``(respondent, concept, stance)`` sets, the unit the workbook's
  per-respondent table reports (:func:`respondent_scores`).
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

from extractor.models.bundle import TraitModels  # noqa: E402
from extractor.models.metrics import respondent_scores  # noqa: E402
from extractor.models.stance import codebook_params  # noqa: E402
from extractor.models.validation import group_folds  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.spans import span_prf  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests import maize  # noqa: E402


def scores(
    sentences: list[Sentence], gold: list[list[Span]], pred: list[list[Span]]
) -> dict[str, Any]:
    """Return span, span+concept, span+concept+stance and respondent-triple P/R/F1."""
    out: dict[str, Any] = {}

    def with_stance(spans: list[list[Span]]) -> list[list[Span]]:
        return [[Span(s.start, s.end, f"{s.concept}|{s.stance}") for s in ss] for ss in spans]

    for name, got in [
        ("span", span_prf(gold, pred)),
        ("span_concept", span_prf(gold, pred, with_concept=True)),
        ("span_concept_stance", span_prf(with_stance(gold), with_stance(pred), with_concept=True)),
    ]:
        out[name] = {"p": got.precision, "r": got.recall, "f1": got.f1}
    triples = respondent_scores(sentences, gold, pred)
    assert triples is not None
    out["respondent_triples"] = {"p": triples.precision, "r": triples.recall, "f1": triples.f1}
    return out


Predicted = list[list[Span]]


def predict(folds: int, seed: int) -> tuple[list[Sentence], Predicted, Predicted, Predicted]:
    """Return the labelled answers, their gold spans, and the predictions at 0 labels and by fold.

    The ``i``-th entry of each list is that of the ``i``-th labelled answer; the fold
    predictions are pooled over ``folds`` folds by respondent (none when ``folds`` is 0).
    """
    loaded = maize.load_workspace()
    if loaded is None:
        sys.exit(maize.SKIP_REASON)
    corpus, labelled, aliases = loaded
    params = {"questions": codebook_params(maize.CODEBOOK)}
    clusters = learn_clusters([(s.text, s.lang) for s in corpus], seed=seed)
    gold = [(corpus[g["row"]], [Span(**sp) for sp in g["spans"]]) for g in labelled]
    sentences = [s for s, _ in gold]

    def as_spans(mentions: Any) -> list[Span]:
        return [Span(m.start, m.end, m.concept, m.stance) for m in mentions]

    cold = TraitModels(stance_params=params).fit([], corpus, aliases, clusters=clusters)
    zero = [as_spans(p.mentions) for p in cold.predict(sentences)]
    pooled: dict[int, list[Span]] = {}
    groups = [s.respondent or "" for s in sentences]
    for fold in group_folds(groups, folds, seed) if folds else []:
        held = set(fold)
        train = [g for i, g in enumerate(gold) if i not in held]
        # The held-out answers stay in the corpus, as unlabelled sentences do in a
        # workspace: the dictionary's silver labels on them are no gold.
        models = TraitModels(stance_params=params).fit(train, corpus, aliases, clusters=clusters)
        predicted = models.predict([sentences[i] for i in fold])
        pooled.update((i, as_spans(p.mentions)) for i, p in zip(fold, predicted, strict=True))
    gold_spans = [list(spans) for _, spans in gold]
    return sentences, gold_spans, zero, [pooled[i] for i in sorted(pooled)]


def main() -> None:
    """Cross-validate on our maize labels and print the figures as JSON."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--folds", type=int, default=5)
    parser.add_argument("--seed", type=int, default=0)
    args = parser.parse_args()
    started = time.perf_counter()
    sentences, gold_spans, zero, pooled = predict(args.folds, args.seed)
    figures = {
        "answers": len(maize.load_answers() or ()),
        "labelled_answers": len(sentences),
        "gold_spans": sum(len(s) for s in gold_spans),
        "zero_labels": scores(sentences, gold_spans, zero),
        f"{args.folds}_fold_by_respondent": scores(sentences, gold_spans, pooled),
        "seconds": round(time.perf_counter() - started, 1),
    }
    print(json.dumps(figures, indent=1))


if __name__ == "__main__":
    main()
