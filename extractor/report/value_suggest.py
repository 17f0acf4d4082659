"""Suggested merges of metadata values written in several languages or spellings.

A multilingual study records one role as "agricultrice", "agricultor" and "farmer";
a grouping with more than :data:`~extractor.report.pivot.MAX_GROUPS` values is left out
of the pivot and the charts. This module proposes which values to read as one, from
the pretrained multilingual space (:mod:`extractor.nlp.pretrained`): values whose
vectors stay close under average-linkage agglomeration (every merge joins the two
closest groups, and stops when their mean cosine falls below :data:`THRESHOLD`).

The proposals are only returned, never applied: the analyst checks them and pastes the
``[metadata] values`` line that :func:`values_line` writes into ``traits.toml``. Without
the space (``"none"`` or its package missing) there are no proposals.
"""

from __future__ import annotations

import json
from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from sklearn.cluster import AgglomerativeClustering

from extractor.nlp import pretrained
from extractor.nlp.text import primary_subtag
from extractor.progress import track
from extractor.report.metadata import FIXED_KEYS
from extractor.report.pivot import MAX_GROUPS

THRESHOLD = 0.80
"""Mean cosine (use-m3) below which two groups of values are not merged.

Chosen on the demo's 33 role values: at 0.80 the French, Spanish and English words
for farmer form one group, "school cook" stays apart (its nearest value is at 0.56);
at 0.75 "consumer (teacher)" and "consumidor (estudiante)" (0.78) would join too."""


@dataclass(frozen=True)
class MergeSuggestion:
    """Values of one column that the space finds close enough to read as one.

    Attributes:
        column: The (harmonised) column.
        value: The value to read them as: the most frequent, then one in the
            workspace's first language, then the first in alphabetical order.
        others: The other values with their respondent counts, most first.
        respondents: Respondents with ``value`` or one of ``others``.
        count: Respondents with ``value`` itself.
    """

    column: str
    value: str
    others: tuple[tuple[str, int], ...]
    respondents: int
    count: int


def wide_columns(records: Sequence[Mapping[str, Any]]) -> dict[str, Counter[str]]:
    """Return column -> value counts for columns with more than ``MAX_GROUPS`` text values."""
    counts: dict[str, Counter[str]] = {}
    for rec in records:
        for key, value in rec.items():
            if key not in FIXED_KEYS and isinstance(value, str) and value.strip():
                counts.setdefault(key, Counter())[value] += 1
    return {col: c for col, c in sorted(counts.items()) if len(c) > MAX_GROUPS}


def _groups(vectors: np.ndarray, threshold: float) -> list[list[int]]:
    """Return groups of row indices (two or more rows) whose mean cosine is >= threshold."""
    if len(vectors) < 2:
        return []
    labels = AgglomerativeClustering(
        n_clusters=None, metric="cosine", linkage="average", distance_threshold=1 - threshold
    ).fit_predict(vectors)
    by_label: dict[int, list[int]] = {}
    for i, label in enumerate(labels):
        by_label.setdefault(int(label), []).append(i)
    return [rows for rows in by_label.values() if len(rows) > 1]


def suggest_merges(
    records: Sequence[Mapping[str, Any]],
    *,
    value_langs: Mapping[str, Mapping[str, str]] | None = None,
    first_language: str = "",
    space: str | None = pretrained.DEFAULT,
    threshold: float = THRESHOLD,
) -> tuple[MergeSuggestion, ...]:
    """Return suggested merges for every column with more than ``MAX_GROUPS`` values.

    Args:
        records: Harmonised respondent records (as :func:`harmonise` returns them).
        value_langs: Per column, value -> the language its respondents mostly answered
            in (primary subtag), to prefer a value in ``first_language`` on a tie.
        first_language: The workspace's first language.
        space: The pretrained space's name; ``"none"`` or a missing package gives ``()``.
        threshold: See :data:`THRESHOLD`.
    """
    wide = wide_columns(records)
    if not wide:
        return ()
    first = primary_subtag(first_language)
    out = []
    loaded = None
    # Loading the space takes seconds: it happens under the first column's progress bar.
    for column, counts in track(wide.items(), "Suggesting value merges", total=len(wide)):
        loaded = loaded or pretrained.load_space(space)
        if loaded is None:
            return ()
        values = sorted(counts)
        langs = (value_langs or {}).get(column, {})
        for rows in _groups(loaded.words(values), threshold):
            members = sorted(
                (values[i] for i in rows),
                key=lambda v: (-counts[v], langs.get(v, "") != first, v),
            )
            others = tuple((v, counts[v]) for v in members[1:])
            total = sum(counts[v] for v in members)
            out.append(MergeSuggestion(column, members[0], others, total, counts[members[0]]))
    out.sort(key=lambda s: (s.column, -s.respondents, s.value))
    return tuple(out)


def _quoted(text: str) -> str:
    # A JSON string is a TOML basic string (same escapes) when non-ASCII is kept as is.
    return json.dumps(text, ensure_ascii=False)


def values_line(
    suggestions: Sequence[MergeSuggestion], existing: Mapping[str, Mapping[str, str]]
) -> str:
    """Return one TOML line ``values = { ... }`` for ``[metadata]``.

    It holds the existing mappings and the suggested ones; an existing mapping of a
    spelling wins.
    """
    merged: dict[str, dict[str, str]] = {col: dict(m) for col, m in existing.items()}
    for s in suggestions:
        column = merged.setdefault(s.column, {})
        for other, _ in s.others:
            column.setdefault(other, s.value)
    tables = ", ".join(
        f"{_quoted(col)} = {{ "
        + ", ".join(f"{_quoted(k)} = {_quoted(v)}" for k, v in mapping.items())
        + " }"
        for col, mapping in merged.items()
        if mapping
    )
    return f"values = {{ {tables} }}"
