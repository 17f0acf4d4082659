"""Agreement between annotators: Krippendorff's alpha, Cohen's kappa and pairwise span F1.

The units are the trait mentions of sentences that two or more annotators labeled.
Mentions of one sentence that overlap are one unit (grouped across all annotators); an
annotator who labeled the sentence but marked nothing there gave that unit the value
``none``, so the coefficients on concept and on stance weigh missed mentions too.
Traits a label states without words (implicit traits) are units too, one per concept
of the sentence.
Span F1 compares the annotators' spans by exact boundaries (and, per concept, by
boundaries and concept), as in the strict scoring of :mod:`extractor.nlp.spans`.

The coefficients come from well-kept libraries: the ``krippendorff`` package (nominal
alpha, missing values allowed) and scikit-learn's ``cohen_kappa_score``.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import krippendorff
import numpy as np
from sklearn.metrics import cohen_kappa_score

from extractor.nlp.spans import PRF, prf
from extractor.types import Implicit, Span

NONE = "none"
"""The value of a unit an annotator saw (labeled the sentence) but marked no trait in."""

Labels = Mapping[str, Mapping[int, Sequence[Span]]]
"""Annotator -> sentence ID -> the spans of that annotator's label in force."""
Implied = Mapping[str, Mapping[int, Sequence[Implicit]]]
"""Annotator -> sentence ID -> the traits that label states without words."""


@dataclass(frozen=True)
class Coefficient:
    """An agreement coefficient and the number of units it rests on (None: undefined)."""

    value: float | None
    items: int


@dataclass(frozen=True)
class PairAgreement:
    """Agreement of two annotators on the sentences both labeled."""

    first: str
    second: str
    sentences: int
    concept_kappa: Coefficient
    stance_kappa: Coefficient
    span: PRF
    span_with_concept: PRF


@dataclass(frozen=True)
class ConceptAgreement:
    """Pairwise span F1 for one concept (boundaries and concept must match), pooled over pairs.

    ``items`` counts the spans with this concept, by either annotator of each pair.
    """

    concept: str
    items: int
    span: PRF


@dataclass(frozen=True)
class AgreementReport:
    """Agreement between annotators over the sentences labeled by at least two of them."""

    annotators: tuple[str, ...]
    sentences: int
    concept_alpha: Coefficient
    stance_alpha: Coefficient
    pairs: tuple[PairAgreement, ...]
    by_concept: tuple[ConceptAgreement, ...]
    disagreements: tuple[int, ...]


def nominal_alpha(data: Sequence[Sequence[str | None]]) -> Coefficient:
    """Return Krippendorff's alpha for nominal values, annotators x units, None for missing.

    Units with fewer than two values cannot be paired and do not count. Alpha is
    undefined (``value`` None) when no unit is pairable or only one value occurs.
    """
    categories = sorted({v for row in data for v in row if v is not None})
    codes = {c: float(k) for k, c in enumerate(categories)}
    matrix = np.array(
        [[math.nan if v is None else codes[v] for v in row] for row in data], dtype=float
    )
    pairable = int((np.sum(~np.isnan(matrix), axis=0) >= 2).sum()) if matrix.size else 0
    if pairable == 0 or len(categories) < 2:
        return Coefficient(None, pairable)
    value = krippendorff.alpha(reliability_data=matrix, level_of_measurement="nominal")
    return Coefficient(float(value), pairable)


def kappa(first: Sequence[str], second: Sequence[str]) -> Coefficient:
    """Return Cohen's kappa of two annotators' values over the same units.

    Undefined (``value`` None) with no units, or when both gave one and the same value
    throughout (chance agreement is then 1).
    """
    if not first:
        return Coefficient(None, 0)
    if len(set(first) | set(second)) < 2:
        return Coefficient(None, len(first))
    value = float(cohen_kappa_score(list(first), list(second)))
    return Coefficient(None if math.isnan(value) else value, len(first))


def mention_units(spans: Mapping[str, Sequence[Span]]) -> list[dict[str, Span]]:
    """Group one sentence's spans of several annotators into units of overlapping spans.

    Returns:
        One mapping annotator -> span per unit, in text order; an annotator with two
        spans in one unit keeps the first.
    """
    marked = sorted(
        ((s.start, s.end, who, s) for who, found in spans.items() for s in found),
        key=lambda t: (t[0], t[1], t[2]),
    )
    units: list[dict[str, Span]] = []
    reach = -1
    for start, end, who, span in marked:
        if not units or start >= reach:
            units.append({})
        units[-1].setdefault(who, span)
        reach = max(reach, end) if start < reach else end
    return units


def implied_units(implicit: Mapping[str, Sequence[Implicit]]) -> list[dict[str, Span]]:
    """Group one sentence's implicit traits of several annotators into units, one per concept.

    An implicit trait has no words, so the unit is its concept; the value is carried in a
    span without offsets (``-1, -1``) so that units of both kinds are read the same way.
    """
    concepts = sorted({t.concept for found in implicit.values() for t in found})
    return [
        {
            who: Span(-1, -1, t.concept, t.stance)
            for who, found in implicit.items()
            for t in found
            if t.concept == concept
        }
        for concept in concepts
    ]


def _units(labels: Labels, implied: Implied, sid: int, who: Sequence[str]) -> list[dict[str, Span]]:
    """Return one sentence's units: overlapping mentions, then implicit traits by concept."""
    spans = {w: labels[w][sid] for w in who}
    implicit = {w: implied.get(w, {}).get(sid, ()) for w in who}
    return mention_units(spans) + implied_units(implicit)


def _value(unit: Mapping[str, Span], who: str, field: str) -> str:
    span = unit.get(who)
    if span is None:
        return NONE
    return str(getattr(span, field) or NONE)


def _shared(labels: Labels) -> list[int]:
    """Return the sentences labeled by at least two annotators, in ID order."""
    counts: dict[int, int] = {}
    for found in labels.values():
        for sid in found:
            counts[sid] = counts.get(sid, 0) + 1
    return sorted(sid for sid, n in counts.items() if n >= 2)


def _alpha(labels: Labels, implied: Implied, shared: Sequence[int], field: str) -> Coefficient:
    who = sorted(labels)
    columns: list[list[str | None]] = []
    for sid in shared:
        seen = [w for w in who if sid in labels[w]]
        for unit in _units(labels, implied, sid, seen):
            columns.append([_value(unit, w, field) if w in seen else None for w in who])
    return nominal_alpha([list(row) for row in zip(*columns, strict=True)] if columns else [])


def _pair(labels: Labels, implied: Implied, first: str, second: str) -> PairAgreement:
    both = sorted(set(labels[first]) & set(labels[second]))
    values: dict[str, tuple[list[str], list[str]]] = {"concept": ([], []), "stance": ([], [])}
    counts = {"span": [0, 0, 0], "concept": [0, 0, 0]}
    for sid in both:
        a, b = labels[first][sid], labels[second][sid]
        for unit in _units(labels, implied, sid, (first, second)):
            for field, (xs, ys) in values.items():
                xs.append(_value(unit, first, field))
                ys.append(_value(unit, second, field))
        for name, key in (("span", _bounds), ("concept", _bounds_concept)):
            tp, fp, fn = _overlap({key(s) for s in a}, {key(s) for s in b})
            counts[name] = [counts[name][0] + tp, counts[name][1] + fp, counts[name][2] + fn]
    return PairAgreement(
        first=first,
        second=second,
        sentences=len(both),
        concept_kappa=kappa(*values["concept"]),
        stance_kappa=kappa(*values["stance"]),
        span=prf(*counts["span"]),
        span_with_concept=prf(*counts["concept"]),
    )


def _bounds(span: Span) -> tuple[int, int, str | None]:
    return (span.start, span.end, None)


def _bounds_concept(span: Span) -> tuple[int, int, str | None]:
    return (span.start, span.end, span.concept)


def _overlap(a: set[tuple[int, int, str | None]], b: set[tuple[int, int, str | None]]) -> tuple:
    hits = len(a & b)
    return hits, len(b) - hits, len(a) - hits


def _by_concept(labels: Labels, pairs: Sequence[tuple[str, str]]) -> list[ConceptAgreement]:
    counts: dict[str, list[int]] = {}
    for first, second in pairs:
        for sid in set(labels[first]) & set(labels[second]):
            a, b = labels[first][sid], labels[second][sid]
            for concept in {s.concept or NONE for s in [*a, *b]}:
                tp, fp, fn = _overlap(
                    {_bounds(s) for s in a if (s.concept or NONE) == concept},
                    {_bounds(s) for s in b if (s.concept or NONE) == concept},
                )
                found = counts.setdefault(concept, [0, 0, 0])
                counts[concept] = [found[0] + tp, found[1] + fp, found[2] + fn]
    return [
        ConceptAgreement(concept, tp * 2 + fp + fn, prf(tp, fp, fn))
        for concept, (tp, fp, fn) in sorted(counts.items())
    ]


def _differs(found: Sequence[Sequence[Span]], implicit: Sequence[Sequence[Implicit]]) -> bool:
    keys = [
        (
            sorted((s.start, s.end, s.concept or "", s.stance or "") for s in spans),
            sorted((t.concept, t.stance or "") for t in traits),
        )
        for spans, traits in zip(found, implicit, strict=True)
    ]
    return any(k != keys[0] for k in keys[1:])


def agreement(labels: Labels, implied: Implied | None = None) -> AgreementReport:
    """Return the agreement between annotators on the sentences two or more of them labeled.

    Args:
        labels: Each annotator's label in force per sentence: its spans (an empty list
            with no implicit traits: no trait).
        implied: The traits each label states without words; they are units of the
            coefficients on concept and stance (one per concept), not of span F1.
    """
    implied = implied or {}
    shared = _shared(labels)
    annotators = tuple(sorted(labels))
    pairs = [
        (a, b) for a, b in itertools.combinations(annotators, 2) if set(labels[a]) & set(labels[b])
    ]
    disagreements = tuple(
        sid
        for sid in shared
        if _differs(
            [labels[w][sid] for w in annotators if sid in labels[w]],
            [implied.get(w, {}).get(sid, ()) for w in annotators if sid in labels[w]],
        )
    )
    return AgreementReport(
        annotators=annotators,
        sentences=len(shared),
        concept_alpha=_alpha(labels, implied, shared, "concept"),
        stance_alpha=_alpha(labels, implied, shared, "stance"),
        pairs=tuple(_pair(labels, implied, a, b) for a, b in pairs),
        by_concept=tuple(_by_concept(labels, pairs)),
        disagreements=disagreements,
    )
