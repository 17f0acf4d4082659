"""The frames every report starts from, checked and completed: mentions and respondents.

Input frames
------------
``mentions``: one row per trait mention.
    ``respondent`` (str, external ID), ``sentence_id`` (int), ``answer_id`` (int),
    ``sentence`` (full sentence text), ``question`` (str or None), ``lang``,
    ``start``, ``end`` (char offsets in the sentence, end exclusive),
    ``answer_start``, ``answer_end`` (char offsets in the answer), ``span_text``,
    ``concept_id`` (str, None = unlinked), ``concept_label`` (str or None),
    ``link_prob`` (float or None), ``stance`` (liked/disliked/wanted/neutral or None),
    ``stance_prob``, ``variety`` (str or None), ``ref_variety`` (str or None),
    ``confidence`` (tagger probability or None), ``source`` ("person", "predicted"
    or "dictionary"), ``model_version`` (str or None), ``annotator`` (str or None),
    ``implicit`` (bool: a trait the sentence states without a phrase naming it; its
    span is the whole sentence, which is its evidence; missing means False).
    Only ``respondent``, ``sentence_id``, ``sentence``, ``start``, ``end``,
    ``span_text``, ``concept_id``, ``stance`` and ``source`` are required; a missing
    optional column is treated as empty.
``respondents``: one row per respondent.
    ``respondent``, ``is_group`` (bool: a focus group, counted as one group and
    never as individuals; missing means False) and any metadata columns (gender,
    role, district...). A respondent found in ``mentions`` but not here is added
    with empty metadata.
``concepts``: ``concept_id``, ``label``, ``parent``.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from datetime import datetime
from typing import Any

import numpy as np
import pandas as pd

from extractor.errors import InputError
from extractor.report.privacy import PrivacyOptions, pseudonymise_frames

REQUIRED_MENTION_COLUMNS = (
    "respondent",
    "sentence_id",
    "sentence",
    "start",
    "end",
    "span_text",
    "concept_id",
    "stance",
    "source",
)
OPTIONAL_MENTION_COLUMNS = (
    "answer_id",
    "question",
    "lang",
    "answer_start",
    "answer_end",
    "concept_label",
    "link_prob",
    "stance_prob",
    "variety",
    "ref_variety",
    "confidence",
    "model_version",
    "annotator",
    "implicit",
)
SOURCES = ("person", "predicted", "dictionary")


def plain_value(value: Any) -> Any:
    """Return a frame value as a plain Python scalar for a file: None for anything missing.

    NumPy numbers become ``int``, ``float`` or ``bool``, NaN and pandas' missing markers
    None; strings and datetimes stay; anything else becomes its text.
    """
    if value is None:
        return None
    if isinstance(value, float | np.floating):
        return None if math.isnan(value) else float(value)
    if isinstance(value, bool | np.bool_):
        return bool(value)
    if isinstance(value, int | np.integer):
        return int(value)
    if isinstance(value, str):
        return value
    if np.ndim(value) == 0 and pd.isna(value):  # pd.NA, and NaT (a datetime)
        return None
    if isinstance(value, datetime):
        return value
    return str(value)


def check_columns(frame: pd.DataFrame, required: Iterable[str], what: str) -> None:
    """Raise InputError naming the columns of ``frame`` that are missing."""
    missing = [c for c in required if c not in frame.columns]
    if missing:
        raise InputError(
            f"The {what} table lacks the column(s) {', '.join(missing)}; "
            f"it has {', '.join(map(str, frame.columns)) or 'none'}."
        )


def complete_mentions(mentions: pd.DataFrame) -> pd.DataFrame:
    """Return mentions with every optional column present (empty where missing)."""
    check_columns(mentions, REQUIRED_MENTION_COLUMNS, "mentions")
    out = mentions.copy()
    for col in OPTIONAL_MENTION_COLUMNS:
        if col not in out.columns:
            out[col] = None
    bad = sorted(set(out["source"].dropna()) - set(SOURCES))
    if bad:
        raise InputError(
            f"The mentions column 'source' must hold {', '.join(SOURCES)}; "
            f"got {', '.join(map(str, bad))}."
        )
    out["respondent"] = out["respondent"].astype(str)
    out["implicit"] = out["implicit"].map(lambda v: bool(v) if pd.notna(v) else False)
    return out.reset_index(drop=True)


def complete_respondents(respondents: pd.DataFrame, mentions: pd.DataFrame) -> pd.DataFrame:
    """Return respondents with ``is_group`` as bool and every respondent of ``mentions``."""
    check_columns(respondents, ["respondent"], "respondents")
    out = respondents.copy()
    out["respondent"] = out["respondent"].astype(str)
    if out["respondent"].duplicated().any():
        dup = out.loc[out["respondent"].duplicated(), "respondent"].iloc[0]
        raise InputError(f"The respondents table lists respondent {dup!r} more than once.")
    if "is_group" not in out.columns:
        out["is_group"] = False
    out["is_group"] = out["is_group"].map(lambda v: bool(v) if pd.notna(v) else False)
    extra = sorted(set(mentions["respondent"]) - set(out["respondent"]))
    if extra:
        out = pd.concat(
            [out, pd.DataFrame({"respondent": extra, "is_group": False})], ignore_index=True
        )
    return out


def metadata_columns(respondents: pd.DataFrame) -> list[str]:
    """Return the respondent metadata columns, in their original order."""
    return [c for c in respondents.columns if c not in ("respondent", "is_group")]


def merge_gold(mentions: pd.DataFrame) -> pd.DataFrame:
    """Keep only person-labeled rows for sentences that have any.

    A person's labels for a sentence replace everything the models said about it,
    including spans the person chose not to mark.
    """
    check_columns(mentions, ["sentence_id", "source"], "mentions")
    gold_sentences = set(mentions.loc[mentions["source"] == "person", "sentence_id"])
    drop = mentions["sentence_id"].isin(gold_sentences) & (mentions["source"] != "person")
    return mentions.loc[~drop].reset_index(drop=True)


def filter_confidence(mentions: pd.DataFrame, min_confidence: float | None) -> pd.DataFrame:
    """Drop predicted mentions whose tagger confidence is below ``min_confidence``.

    Person-labeled and dictionary mentions are always kept, and so are predicted
    mentions without a recorded confidence.
    """
    if min_confidence is None:
        return mentions
    if not (isinstance(min_confidence, int | float) and 0.0 <= min_confidence <= 1.0):
        raise InputError(
            f"The minimum confidence must be a number between 0 and 1; got {min_confidence!r}."
        )
    conf = pd.to_numeric(mentions["confidence"], errors="coerce")
    drop = (mentions["source"] == "predicted") & (conf < min_confidence)
    return mentions.loc[~drop].reset_index(drop=True)


def prepare(
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    *,
    min_confidence: float | None = None,
    pseudonymise: PrivacyOptions | None = None,
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Return the mentions and respondents an export shows: gold merged, filtered, private."""
    m = filter_confidence(merge_gold(complete_mentions(mentions)), min_confidence)
    r = complete_respondents(respondents, m)
    if pseudonymise is not None:
        m, r = pseudonymise_frames(m, r, pseudonymise)
    return m, r


def concept_labels(mentions: pd.DataFrame, concepts: pd.DataFrame) -> dict[str, str]:
    """Return ``{concept_id: label}``, from the concept list first, then from mentions."""
    labels: dict[str, str] = {}
    if "concept_label" in mentions.columns:
        for cid, label in zip(mentions["concept_id"], mentions["concept_label"], strict=True):
            if pd.notna(cid) and isinstance(label, str) and label:
                labels.setdefault(str(cid), label)
    if len(concepts):
        check_columns(concepts, ["concept_id", "label"], "concepts")
        for cid, label in zip(concepts["concept_id"], concepts["label"], strict=True):
            if pd.notna(cid) and isinstance(label, str) and label:
                labels[str(cid)] = label
    return labels


def trait_name(concept_id: str, labels: Mapping[str, str]) -> str:
    """Return ``"label (ID)"``, or the bare ID when the concept has no label."""
    label = labels.get(concept_id)
    return f"{label} ({concept_id})" if label else concept_id
