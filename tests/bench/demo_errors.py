"""Where the demo's cross-validated respondent triples are lost, by cause, with bounds.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/demo_errors.py [--folds 5] [--seed 0] [--list CAUSE,...]

The predictions are those of ``implicit_demo.py``'s "spans only" figure (mentions alone,
5 folds by respondent, the same models). A triple is ``(respondent, concept, stance)``.
Each missed gold triple and each false predicted triple is put in one class, judged on
its first mention in sentence order:

* ``miss_wrong_stance`` / ``fp_wrong_stance``: the respondent has the concept in both sets,
  with another stance (anywhere: a missed one lists what was predicted on its own mention,
  ``predicted`` of words, concept and stance, empty when nothing overlaps it);
* ``miss_no_span``: no predicted mention overlaps the gold mention;
* ``miss_unlinked``: predicted mentions overlap it, none linked to a concept;
* ``miss_linked_other``: an overlapping prediction is linked to another concept;
* ``miss_implicit_only``: the gold triple comes from an implicit trait (no span);
* ``fp_no_gold_span``: the predicted mention overlaps no gold mention (a spurious span);
* ``fp_other_concept``: it overlaps a gold mention of another concept (or of none).

Bounds: the figure if every predicted mention that overlaps a gold mention took that
mention's concept (linking bound), if every prediction overlapping no gold mention were
dropped (spurious-span bound), or both; and the same mentions with the gold stance of the
mention they overlap (stance bound). They say how much each stage could still give, not
what any method reaches.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections import Counter
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
from extractor.models.bundle import Mention  # noqa: E402
from extractor.models.metrics import respondent_key, respondent_scores  # noqa: E402
from extractor.types import Implicit, Sentence, Span  # noqa: E402
from tests.bench.implicit_demo import predict_folds  # noqa: E402

Triple = tuple[str, str, str | None]
Where = tuple[int, Span | Mention | None]
"""Sentence index and the mention a triple was first seen on (``None``: implicit)."""


def first_seen(
    sentences: Sequence[Sentence], mentions: Sequence[Sequence[Span | Mention]]
) -> dict[Triple, Where]:
    """Return each linked triple with the first mention (in sentence order) that states it."""
    out: dict[Triple, Where] = {}
    for i, (sentence, spans) in enumerate(zip(sentences, mentions, strict=True)):
        for span in spans:
            if span.concept:
                out.setdefault((respondent_key(sentence), span.concept, span.stance), (i, span))
    return out


def _overlapping(span: Span | Mention, others: Sequence[Span | Mention]) -> list[Any]:
    return [o for o in others if o.start < span.end and span.start < o.end]


def classify(
    sentences: Sequence[Sentence],
    gold: Sequence[Sequence[Span]],
    implicit: Sequence[Sequence[Implicit]],
    pred: Sequence[Sequence[Span | Mention]],
) -> dict[str, list[dict[str, Any]]]:
    """Return the lost triples by cause (see the module docstring), each with its words."""
    gold_seen = first_seen(sentences, gold)
    for i, (sentence, traits) in enumerate(zip(sentences, implicit, strict=True)):
        for t in traits:
            gold_seen.setdefault((respondent_key(sentence), t.concept, t.stance), (i, None))
    pred_seen = first_seen(sentences, pred)
    gold_pairs = {t[:2] for t in gold_seen}
    pred_pairs = {t[:2] for t in pred_seen}
    out: dict[str, list[dict[str, Any]]] = {}

    def note(cause: str, triple: Triple, i: int, span: Span | Mention | None, **more: Any) -> None:
        text = sentences[i].text
        words = text[span.start : span.end] if span is not None else ""
        out.setdefault(cause, []).append(
            {"triple": list(triple), "words": words, "sentence": text, **more}
        )

    for triple, (i, span) in gold_seen.items():
        if triple in pred_seen:
            continue
        if triple[:2] in pred_pairs:
            # What was predicted on this very mention: empty when the other stance comes
            # from another of the respondent's mentions (a span or link loss here).
            on = (
                [
                    (_words(sentences[i], [m]), m.concept, m.stance)
                    for m in _overlapping(span, pred[i])
                ]
                if span is not None
                else []
            )
            note("miss_wrong_stance", triple, i, span, predicted=on)
        elif span is None:
            note("miss_implicit_only", triple, i, span)
        else:
            near = _overlapping(span, pred[i])
            if not near:
                note("miss_no_span", triple, i, span)
            elif not any(m.concept for m in near):
                note("miss_unlinked", triple, i, span, predicted=[_words(sentences[i], near)])
            else:
                linked = [(_words(sentences[i], [m]), m.concept) for m in near if m.concept]
                note("miss_linked_other", triple, i, span, predicted=linked)
    for triple, (i, span) in pred_seen.items():
        if triple in gold_seen or span is None:
            continue
        if triple[:2] in gold_pairs:
            note("fp_wrong_stance", triple, i, span)
            continue
        near = _overlapping(span, gold[i])
        if near:
            gold_words = [(_words(sentences[i], [g]), g.concept) for g in near]
            note("fp_other_concept", triple, i, span, gold=gold_words)
        else:
            note("fp_no_gold_span", triple, i, span)
    return out


def _words(sentence: Sentence, spans: Sequence[Span | Mention]) -> str:
    return " | ".join(sentence.text[s.start : s.end] for s in spans)


def bounds(
    sentences: Sequence[Sentence],
    both: Sequence[Sequence[Span]],
    gold: Sequence[Sequence[Span]],
    pred: Sequence[Sequence[Span | Mention]],
) -> dict[str, float]:
    """Return the triple F1 of the predictions and of the bounds (module docstring)."""

    def f1(change: Callable[[Span | Mention, list[Span]], Span | Mention | None]) -> float:
        changed = [
            [m2 for m in mentions if (m2 := change(m, _overlapping(m, spans))) is not None]
            for mentions, spans in zip(pred, gold, strict=True)
        ]
        scores = respondent_scores(sentences, both, changed)
        return round(scores.f1, 4) if scores is not None else 0.0

    def concept(m: Span | Mention, near: list[Span]) -> Span | Mention:
        return m._replace(concept=near[0].concept) if near else m

    def stance(m: Span | Mention, near: list[Span]) -> Span | Mention:
        return m._replace(stance=near[0].stance) if near else m

    return {
        "predicted": f1(lambda m, near: m),
        "linking_bound": f1(concept),
        "spurious_span_bound": f1(lambda m, near: m if near else None),
        "linking_and_spurious_bound": f1(lambda m, near: concept(m, near) if near else None),
        "stance_bound": f1(stance),
    }


def main() -> None:
    """Cross-validate on the demo gold and print the lost triples by cause as JSON."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--folds", type=int, default=5)
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument(
        "--list", default="", help="causes whose triples are listed, comma-separated"
    )
    args = parser.parse_args()
    gold, implicit, predicted = predict_folds(args.folds, args.seed)
    sentences = [s for s, _ in gold]
    spans = [list(g) for _, g in gold]
    traits = [list(implicit.get(s.id, ())) for s in sentences]
    mentions = [list(p.mentions) for p in predicted]
    both = [
        [*spans[i], *(Span(0, 0, t.concept, t.stance) for t in traits[i])]
        for i in range(len(sentences))
    ]
    lost = classify(sentences, spans, traits, mentions)
    figures = summary(lost, bounds(sentences, both, spans, mentions), args.list)
    print(json.dumps(figures, indent=1, ensure_ascii=False))


def summary(
    lost: dict[str, list[dict[str, Any]]], bounded: dict[str, float], listed: str
) -> dict[str, Any]:
    """Return the lost triples' counts by cause, the bounds, and the causes ``listed`` in full.

    ``listed`` names causes comma-separated, as ``--list`` takes them.
    """
    figures: dict[str, Any] = {
        "counts": dict(Counter({cause: len(items) for cause, items in lost.items()}).most_common()),
        "bounds": bounded,
    }
    for cause in filter(None, listed.split(",")):
        figures[cause] = lost.get(cause, [])
    return figures


if __name__ == "__main__":
    main()
