"""Respondent metadata harmonised: columns that name the same thing, spellings of one value.

Interview files from one study name the same fact differently (``sex`` in one file,
``gender`` in another) and spell the same value differently (``F``, ``female``,
``Female``). The store keeps every value as it was read; this module reads them as
one column and one value each, every time the respondents are read, so changing a
mapping applies to everything stored without adding the files again.

Nothing here touches the store: it takes the stored records and the mappings and
returns new records together with what was merged, for ``traits status`` to list.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from extractor.nlp.fold import fold_words

GENDER_COLUMNS = ("gender", "sex")
"""Columns whose one-letter and plural codes are read as ``female`` and ``male``."""
GENDER_CODES = {
    "f": "female",
    "female": "female",
    "woman": "female",
    "women": "female",
    "m": "male",
    "male": "male",
    "man": "male",
    "men": "male",
}
"""Folded gender codes -> value (common practice in survey codebooks: F/M, female/male)."""

FIXED_KEYS = ("respondent", "is_group")


@dataclass(frozen=True)
class ColumnMerge:
    """Stored columns read as one column.

    Attributes:
        column: The column they are read as.
        sources: The stored column names read as ``column`` (other than itself).
        respondents: Respondents whose value came from one of ``sources``.
    """

    column: str
    sources: tuple[str, ...]
    respondents: int


@dataclass(frozen=True)
class ValueMerge:
    """Spellings of one column read as one value.

    Attributes:
        column: The (harmonised) column.
        value: The value they are read as.
        spellings: The stored spellings, sorted.
        respondents: Respondents with one of the spellings.
    """

    column: str
    value: str
    spellings: tuple[str, ...]
    respondents: int


@dataclass(frozen=True)
class Harmonised:
    """Respondent records read through the mappings, and what was merged."""

    records: list[dict[str, Any]]
    columns: tuple[ColumnMerge, ...]
    values: tuple[ValueMerge, ...]


def _empty(value: Any) -> bool:
    return value is None or (isinstance(value, str) and not value.strip())


def _rename(
    records: Sequence[Mapping[str, Any]], renames: Mapping[str, str]
) -> tuple[list[dict[str, Any]], tuple[ColumnMerge, ...]]:
    """Return records with renamed columns; a column's own value wins over a renamed one."""
    renames = {k: v for k, v in renames.items() if k != v and v not in FIXED_KEYS}
    used: dict[str, Counter[str]] = {}
    out = []
    for rec in records:
        new: dict[str, Any] = {}
        # Columns under their own name first, so they win over values renamed into them.
        for key in sorted(rec, key=lambda k: k in renames):
            target = renames.get(key, key)
            if target in new and not _empty(new[target]):
                continue
            new[target] = rec[key]
            if key != target and not _empty(rec[key]):
                used.setdefault(target, Counter())[key] += 1
        out.append(new)
    merges = tuple(
        ColumnMerge(target, tuple(sorted(sources)), sum(sources.values()))
        for target, sources in sorted(used.items())
    )
    return out, merges


def _value_map(
    column: str, spellings: Counter[str], explicit: Mapping[str, str], merge: bool
) -> dict[str, str]:
    """Return stored spelling -> value for one column's text values."""
    folded_explicit = {fold_words(k): v for k, v in explicit.items()}
    first: dict[str, str] = {}
    for text in spellings:
        key = fold_words(text)
        if text in explicit:
            first[text] = explicit[text]
        elif key in folded_explicit:
            first[text] = folded_explicit[key]
        elif merge and column.casefold() in GENDER_COLUMNS and key in GENDER_CODES:
            first[text] = GENDER_CODES[key]
        else:
            first[text] = text
    if not merge:
        return first
    # Spellings of one value that differ in case, accents or spaces: the commonest wins.
    weight: Counter[str] = Counter()
    for text, n in spellings.items():
        weight[first[text]] += n
    best: dict[str, str] = {}
    for value in sorted(weight, key=lambda v: (-weight[v], v)):
        best.setdefault(fold_words(value), value)
    return {text: best[fold_words(value)] for text, value in first.items()}


def _revalue(
    records: list[dict[str, Any]], values: Mapping[str, Mapping[str, str]], merge: bool
) -> tuple[ValueMerge, ...]:
    """Replace text values in place by their harmonised value; return the merges made."""
    columns = sorted({k for rec in records for k in rec if k not in FIXED_KEYS})
    merges = []
    for column in columns:
        spellings = Counter(
            rec[column] for rec in records if isinstance(rec.get(column), str) and rec[column]
        )
        mapping = _value_map(column, spellings, values.get(column, {}), merge)
        for rec in records:
            old = rec.get(column)
            if isinstance(old, str) and old in mapping:
                rec[column] = mapping[old]
        by_value: dict[str, list[str]] = {}
        for text, value in mapping.items():
            by_value.setdefault(value, []).append(text)
        for value, texts in sorted(by_value.items()):
            if texts != [value]:
                n = sum(spellings[t] for t in texts)
                merges.append(ValueMerge(column, value, tuple(sorted(texts)), n))
    return tuple(merges)


def harmonise(
    records: Sequence[Mapping[str, Any]],
    renames: Mapping[str, str],
    values: Mapping[str, Mapping[str, str]] | None = None,
    *,
    merge_spellings: bool = True,
) -> Harmonised:
    """Return respondent records read as harmonised columns and values.

    Args:
        records: One mapping per respondent: ``respondent``, ``is_group`` and the
            metadata keys as stored.
        renames: Stored column -> the column it is read as (``{"sex": "gender"}``).
            Where a respondent has both, the column's own value wins.
        values: Per harmonised column, stored spelling -> value; a spelling also
            matches ignoring case, accents and spacing.
        merge_spellings: Also read spellings that differ only in case, accents or
            spacing as one value (the commonest spelling), and gender codes
            (``F``, ``woman``) as ``female`` or ``male``.

    Returns:
        New records (the inputs are unchanged) and the column and value merges made.
    """
    renamed, columns = _rename(records, renames)
    merged = _revalue(renamed, values or {}, merge_spellings)
    return Harmonised(renamed, columns, merged)
