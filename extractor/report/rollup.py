"""Roll-ups by the concept hierarchy: mentions counted at a chosen level of the list.

Level 1 is the top of the list (concepts without a parent); a concept's level is one more
than its nearest parent's (:func:`extractor.ingest.hierarchy.levels`). Rolling mentions up
to a level relabels each linked mention with its ancestor at that level, and with each
such ancestor when the concept has several parents; concepts at or above the level keep
their own ID. Every table then counts respondents per concept as it always does, so a
respondent who mentioned two traits under one parent counts once for that parent.
"""

from __future__ import annotations

from collections.abc import Sequence

import pandas as pd

from extractor.errors import InputError
from extractor.ingest.hierarchy import ancestors_at
from extractor.report.summary import trait_summary

PARENT_LEVEL = 1
"""The level of the workbook's parent-level sheet: the top of the list."""


def concept_parents(concepts: pd.DataFrame) -> dict[str, tuple[str, ...]]:
    """Return concept ID -> its parents in the list, from ``parents`` (else ``parent``)."""
    column = "parents" if "parents" in concepts.columns else "parent"
    if column not in concepts.columns:
        return {str(cid): () for cid in concepts.get("concept_id", [])}
    out: dict[str, tuple[str, ...]] = {}
    for cid, value in zip(concepts["concept_id"], concepts[column], strict=True):
        if isinstance(value, tuple | list):
            found = tuple(str(v) for v in value)
        elif isinstance(value, str) and value:
            found = (value,)
        else:
            found = ()
        out[str(cid)] = found
    return {cid: tuple(p for p in ps if p in out) for cid, ps in out.items()}


def has_hierarchy(concepts: pd.DataFrame) -> bool:
    """Whether any concept of the list has a parent in the list."""
    return any(concept_parents(concepts).values())


def roll_up(mentions: pd.DataFrame, concepts: pd.DataFrame, level: int) -> pd.DataFrame:
    """Return the mentions with each linked concept replaced by its ancestor(s) at ``level``.

    A mention of a concept with two ancestors at the level becomes two rows, one per
    ancestor. Unlinked mentions and concepts not in the list are left as they are.

    Raises:
        InputError: ``level`` is below 1.
    """
    if level < 1:
        raise InputError(f"The level must be 1 (the top of the concept list) or more; got {level}.")
    if mentions.empty or "concept_id" not in mentions.columns:
        return mentions
    targets = ancestors_at(concept_parents(concepts), level)
    labels = dict(zip(concepts["concept_id"].astype(str), concepts["label"], strict=True))

    def target(cid: object) -> tuple[object, ...]:
        if cid is None or (isinstance(cid, float) and pd.isna(cid)):
            return (None,)
        return targets.get(str(cid), (cid,))

    out = mentions.assign(concept_id=mentions["concept_id"].map(target))
    out = out.explode("concept_id", ignore_index=True)
    out["concept_id"] = out["concept_id"].astype(object).where(out["concept_id"].notna(), None)
    if "concept_label" in out.columns:
        out["concept_label"] = [
            labels.get(str(c), old) if c is not None else old
            for c, old in zip(out["concept_id"], out["concept_label"], strict=True)
        ]
    return out


def parent_summary(
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    concepts: pd.DataFrame,
    group_by: Sequence[str] = (),
) -> pd.DataFrame:
    """Return the group summary at :data:`PARENT_LEVEL`: shares of respondents per parent."""
    rolled = roll_up(mentions, concepts, PARENT_LEVEL)
    return trait_summary(rolled, respondents, concepts, list(group_by))
