"""Aggregation per respondent and the Excel workbook that analysts open.

The main engineer builds three frames and a dict from the store and calls
:func:`write_workbook`; every table on a sheet is also available as a pure
function returning a DataFrame.

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
    or "dictionary"), ``model_version`` (str or None), ``annotator`` (str or None).
    Only ``respondent``, ``sentence_id``, ``sentence``, ``start``, ``end``,
    ``span_text``, ``concept_id``, ``stance`` and ``source`` are required; a missing
    optional column is treated as empty.
``respondents``: one row per respondent.
    ``respondent``, ``is_group`` (bool: a focus group, counted as one group and
    never as individuals; missing means False) and any metadata columns (gender,
    role, district...). A respondent found in ``mentions`` but not here is added
    with empty metadata.
``concepts``: ``concept_id``, ``label``, ``parent``.
``about``: a flat or nested dict of facts about the run (model version, measured
    quality, concept list version and hash, date...), shown on the About sheet.

Shares are always shares of respondents (k of n people), never of mentions.
"""

from __future__ import annotations

import json
import math
import time
from collections.abc import Iterable, Mapping, Sequence
from datetime import datetime
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from openpyxl import Workbook
from openpyxl.cell.cell import ERROR_CODES, ILLEGAL_CHARACTERS_RE
from openpyxl.chart import BarChart, Reference
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet

from extractor.errors import InputError
from extractor.report.privacy import PrivacyOptions, identifying_columns, pseudonymise_frames
from extractor.report.stats import (
    MONTE_CARLO_RESAMPLES,
    MONTE_CARLO_SEED,
    NO_TEST,
    GroupTest,
    bh_adjust,
    group_difference,
    wilson_interval,
)

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
)
SOURCES = ("person", "predicted", "dictionary")

SHEETS = {
    "preferred": "Traits per respondent",
    "matrix": "Respondent x trait",
    "mentions": "Mentions",
    "summary": "Summary by group",
    "unlinked": "Unlinked terms",
    "chart": "Chart",
    "about": "About",
}
OUTCOMES = {"mention": None, "like": "liked", "dislike": "disliked", "want": "wanted"}
"""Outcome name on the summary sheet -> stance it counts (None = any mention)."""

ALL_INDIVIDUALS = "(all individuals)"
FOCUS_GROUPS = "(focus groups, counted as groups)"
NOT_RECORDED = "(not recorded)"
MIXED = "mixed"
CAUTION = (
    "Automatic extraction makes mistakes: a person must review these results, "
    "and the quotes behind them, before they inform any decision."
)
SUMMARY_NOTES = (
    "Shares are shares of respondents, not of mentions: a respondent who names a trait "
    "five times counts once.",
    "Focus groups are counted as groups, never as individuals: they are left out of every "
    f"individual share and reported on their own in the rows '{FOCUS_GROUPS}'.",
    "Difference between groups: Pearson chi-square (no continuity correction) when no "
    "expected count is below 1 and at most 20% are below 5; otherwise Fisher's exact test "
    "(exact for 2x2 tables; for larger tables a Monte-Carlo p-value from "
    f"{MONTE_CARLO_RESAMPLES:,} random tables with the observed margins, seed "
    f"{MONTE_CARLO_SEED}). p-values are adjusted across traits with Benjamini-Hochberg, "
    f"separately for each grouping and outcome. Respondents shown as '{NOT_RECORDED}' "
    "are left out of the tests.",
    "The Caution column marks cells resting on one or two respondents: read them as "
    "single voices, not as shares.",
)
RISKY_FIRST = ("=", "+", "-", "@", "\t", "\r")
EXCEL_MAX_CHARS = 32767


# --- preparing the inputs ----------------------------------------------------------


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


# --- per-respondent tables ---------------------------------------------------------


def respondent_concepts(mentions: pd.DataFrame) -> pd.DataFrame:
    """Return one row per (respondent, concept) with flags mention/like/dislike/want."""
    linked = mentions.loc[mentions["concept_id"].notna(), ["respondent", "concept_id", "stance"]]
    if linked.empty:
        return pd.DataFrame(columns=["respondent", "concept_id", *OUTCOMES])
    linked = linked.assign(concept_id=linked["concept_id"].astype(str))
    for outcome, stance in OUTCOMES.items():
        linked[outcome] = True if stance is None else (linked["stance"] == stance)
    return linked.groupby(["respondent", "concept_id"], as_index=False)[list(OUTCOMES)].any()


def _respondent_type(is_group: bool) -> str:
    return "focus group" if is_group else "individual"


def preferred_traits(
    mentions: pd.DataFrame, respondents: pd.DataFrame, concepts: pd.DataFrame
) -> pd.DataFrame:
    """Return one row per respondent and variety with liked, disliked and wanted traits.

    Each list reads "label (ID); ...", most-mentioned first, then by label.
    Respondents without any mention still get one row, so the table lists everyone
    interviewed. Variety is blank where the statement names none.
    """
    labels = concept_labels(mentions, concepts)
    meta = metadata_columns(respondents)
    variety = mentions["variety"].where(mentions["variety"].notna(), "").astype(str)
    keyed = mentions.assign(_variety=variety)
    totals = keyed.groupby(["respondent", "_variety"]).size()
    said = keyed.loc[
        keyed["concept_id"].notna() & keyed["stance"].isin(["liked", "disliked", "wanted"])
    ]
    lists: dict[tuple[str, str, str], str] = {}
    if len(said):
        counts = (
            said.groupby(["respondent", "_variety", "stance", said["concept_id"].astype(str)])
            .size()
            .reset_index(name="n")
        )
        counts["name"] = counts["concept_id"].map(lambda c: trait_name(c, labels))
        counts["key"] = counts["name"].str.casefold()
        counts = counts.sort_values(["n", "key"], ascending=[False, True], kind="stable")
        for key, grp in counts.groupby(["respondent", "_variety", "stance"], sort=False):
            lists[key] = "; ".join(grp["name"])
    by_resp: dict[str, list[tuple[str, int]]] = {}
    for (resp, var), n in totals.items():
        by_resp.setdefault(resp, []).append((var, int(n)))
    rows = []
    for rec in respondents.to_dict("records"):
        resp = rec["respondent"]
        base = {"Respondent": resp, "Type": _respondent_type(rec["is_group"])}
        base.update({m: rec[m] for m in meta})
        for var, n in sorted(by_resp.get(resp, [("", 0)])):
            rows.append(
                {
                    **base,
                    "Variety": var or None,
                    "Liked": lists.get((resp, var, "liked"), ""),
                    "Disliked": lists.get((resp, var, "disliked"), ""),
                    "Wanted": lists.get((resp, var, "wanted"), ""),
                    "Mentions": n,
                }
            )
    columns = ["Respondent", "Type", *meta, "Variety", "Liked", "Disliked", "Wanted", "Mentions"]
    return pd.DataFrame(rows, columns=columns)


def _cell_stance(stances: Iterable[Any]) -> str:
    said = {s for s in stances if s in ("liked", "disliked", "wanted")}
    if len(said) > 1:
        return MIXED
    if said:
        return said.pop()
    return "neutral"


def concept_order(mentions: pd.DataFrame) -> list[str]:
    """Return linked concept IDs, most respondents first, then by ID."""
    linked = mentions.loc[mentions["concept_id"].notna()]
    counts = linked.groupby(linked["concept_id"].astype(str))["respondent"].nunique()
    return sorted(counts.index, key=lambda c: (-counts[c], c))


def trait_matrix(
    mentions: pd.DataFrame, respondents: pd.DataFrame, concepts: pd.DataFrame
) -> pd.DataFrame:
    """Return one row per respondent and one column per mentioned concept.

    Cells hold ``liked``, ``disliked``, ``wanted``, ``mixed`` (more than one of
    these), ``neutral`` (mentioned without a stance) or blank (not mentioned).
    """
    labels = concept_labels(mentions, concepts)
    order = concept_order(mentions)
    linked = mentions.loc[mentions["concept_id"].notna()]
    cells = (
        linked.groupby(["respondent", linked["concept_id"].astype(str)])["stance"]
        .agg(_cell_stance)
        .unstack()
        if len(linked)
        else pd.DataFrame()
    )
    meta = metadata_columns(respondents)
    out = pd.DataFrame(
        {
            "Respondent": respondents["respondent"].to_numpy(),
            "Type": respondents["is_group"].map(_respondent_type).to_numpy(),
        }
    )
    for m in meta:
        out[m] = respondents[m].to_numpy()
    for cid in order:
        col = cells[cid] if cid in cells.columns else pd.Series(dtype=object)
        out[trait_name(cid, labels)] = out["Respondent"].map(col).to_numpy()
    return out


EVIDENCE_COLUMNS = {
    "respondent": "Respondent",
    "question": "Question",
    "sentence": "Sentence",
    "span_text": "Span text",
    "concept_id": "Concept ID",
    "trait": "Trait",
    "stance": "Stance",
    "variety": "Variety",
    "ref_variety": "Compared with",
    "start": "Start",
    "end": "End",
    "answer_id": "Answer ID",
    "sentence_id": "Sentence ID",
    "answer_start": "Answer start",
    "answer_end": "Answer end",
    "lang": "Language",
    "link_prob": "Link probability",
    "stance_prob": "Stance probability",
    "confidence": "Tagger confidence",
    "source": "Source",
    "model_version": "Model version",
    "annotator": "Annotator",
}


def mention_evidence(
    mentions: pd.DataFrame, respondents: pd.DataFrame, concepts: pd.DataFrame
) -> pd.DataFrame:
    """Return every mention with its sentence, offsets, concept, stance and provenance."""
    labels = concept_labels(mentions, concepts)
    out = mentions.assign(
        trait=mentions["concept_id"].map(lambda c: labels.get(str(c)) if pd.notna(c) else None)
    )
    out = out[list(EVIDENCE_COLUMNS)].rename(columns=EVIDENCE_COLUMNS)
    meta = metadata_columns(respondents)
    if meta:
        info = respondents.set_index("respondent")[meta]
        for i, m in enumerate(meta):
            out.insert(1 + i, m, out["Respondent"].map(info[m]).to_numpy())
    return out.sort_values(["Respondent", "Sentence ID", "Start"], kind="stable", ignore_index=True)


def unlinked_terms(mentions: pd.DataFrame, examples: int = 3) -> pd.DataFrame:
    """Return spans without a concept, grouped by normalised text, for curators.

    Columns: Term (the commonest spelling), Mentions, Respondents, Examples (up to
    ``examples`` distinct sentences, one per line).
    """
    free = mentions.loc[mentions["concept_id"].isna() & mentions["span_text"].notna()]
    columns = ["Term", "Mentions", "Respondents", "Examples"]
    if free.empty:
        return pd.DataFrame(columns=columns)
    key = free["span_text"].astype(str).str.casefold().str.split().str.join(" ")
    rows = []
    for _, grp in free.groupby(key, sort=False):
        rows.append(
            {
                "Term": grp["span_text"].astype(str).value_counts().index[0],
                "Mentions": len(grp),
                "Respondents": grp["respondent"].nunique(),
                "Examples": "\n".join(
                    grp["sentence"].dropna().astype(str).drop_duplicates().head(examples)
                ),
            }
        )
    out = pd.DataFrame(rows, columns=columns)
    return out.sort_values(["Mentions", "Term"], ascending=[False, True], ignore_index=True)


# --- summary by group --------------------------------------------------------------


def _caution(k: int, n: int) -> str | None:
    if 0 < k <= 2:
        return f"only {k} respondent{'s' if k > 1 else ''}"
    if 0 < n <= 2:
        return f"group of {n}"
    return None


def _share_row(k: int, n: int) -> dict[str, Any]:
    low, high = wilson_interval(k, n) if n else (math.nan, math.nan)
    return {
        "Respondents in group": n,
        "Respondents": k,
        "Share": k / n if n else math.nan,
        "95% CI low": low,
        "95% CI high": high,
        "Caution": _caution(k, n),
    }


def outcome_matrix(
    mentions: pd.DataFrame, respondent_ids: Sequence[str], concept_ids: Sequence[str], outcome: str
) -> np.ndarray:
    """Return a respondents x concepts boolean array: who has ``outcome`` for which trait."""
    flags = respondent_concepts(mentions)
    if flags.empty:
        return np.zeros((len(respondent_ids), len(concept_ids)), dtype=bool)
    wide = flags.pivot_table(
        index="respondent", columns="concept_id", values=outcome, aggfunc="any", fill_value=False
    )
    wide = wide.reindex(index=list(respondent_ids), columns=list(concept_ids), fill_value=False)
    return wide.to_numpy(dtype=bool)


def _group_codes(values: pd.Series) -> tuple[list[str], np.ndarray]:
    """Return the sorted group labels (not recorded last) and each row's group index."""
    labels = values.map(lambda v: NOT_RECORDED if pd.isna(v) else str(v))
    groups = sorted(labels.unique(), key=lambda v: (v == NOT_RECORDED, v))
    index = {g: i for i, g in enumerate(groups)}
    return groups, labels.map(index).to_numpy(dtype=int)


def trait_summary(
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    concepts: pd.DataFrame,
    group_by: Sequence[str] = (),
) -> pd.DataFrame:
    """Return shares of respondents per concept, outcome and group, with tests.

    One row per (concept, outcome, grouping, group). Outcomes: ``mention``,
    ``like``, ``dislike``, ``want``. Grouping ``(all individuals)`` gives the
    overall share; each column of ``group_by`` gives one row per value, with a
    test of difference between the recorded values and its Benjamini-Hochberg
    adjustment across concepts; focus groups are reported as their own grouping.

    Raises:
        InputError: If a ``group_by`` column is not in ``respondents``.
    """
    for g in group_by:
        if g not in respondents.columns:
            raise InputError(
                f"The grouping column {g!r} is not among the respondent columns "
                f"({', '.join(metadata_columns(respondents)) or 'none'})."
            )
    labels = concept_labels(mentions, concepts)
    order = concept_order(mentions)
    is_group = respondents["is_group"].to_numpy(dtype=bool)
    individuals = respondents.loc[~is_group]
    codes = {g: _group_codes(individuals[g]) for g in group_by}
    rows: list[dict[str, Any]] = []
    for outcome in OUTCOMES:
        mat = outcome_matrix(mentions, respondents["respondent"].tolist(), order, outcome)
        ind, grp = mat[~is_group], mat[is_group]
        # counts[g][i, j]: respondents of group i of grouping g with the outcome for concept j
        counts = {
            g: (
                np.array([ind[c == i].sum(axis=0) for i in range(len(groups))], dtype=int).reshape(
                    len(groups), len(order)
                ),
                np.bincount(c, minlength=len(groups)),
            )
            for g, (groups, c) in codes.items()
        }
        for j, cid in enumerate(order):
            base = {"Trait": labels.get(cid), "Concept ID": cid, "Outcome": outcome}
            rows.append(
                {
                    **base,
                    "Grouping": ALL_INDIVIDUALS,
                    "Group": "all",
                    **_share_row(int(ind[:, j].sum()), len(ind)),
                }
            )
            for g, (groups, _) in codes.items():
                k_by, n_by = counts[g]
                table = [
                    [int(k_by[i, j]), int(n_by[i] - k_by[i, j])]
                    for i, name in enumerate(groups)
                    if name != NOT_RECORDED
                ]
                test = (
                    group_difference(table)
                    if len(table) >= 2
                    else GroupTest(NO_TEST, math.nan, math.nan)
                )
                for i, name in enumerate(groups):
                    # The test is repeated on every group row so a filtered view still shows it.
                    rows.append(
                        {
                            **base,
                            "Grouping": g,
                            "Group": name,
                            **_share_row(int(k_by[i, j]), int(n_by[i])),
                            "Test": test.test,
                            "Statistic": test.statistic,
                            "p": test.p_value,
                        }
                    )
            if len(grp):
                rows.append(
                    {
                        **base,
                        "Grouping": FOCUS_GROUPS,
                        "Group": "focus groups",
                        **_share_row(int(grp[:, j].sum()), len(grp)),
                    }
                )
    columns = [
        "Trait",
        "Concept ID",
        "Outcome",
        "Grouping",
        "Group",
        "Respondents in group",
        "Respondents",
        "Share",
        "95% CI low",
        "95% CI high",
        "Caution",
        "Test",
        "Statistic",
        "p",
        "p (BH-adjusted)",
    ]
    out = pd.DataFrame(rows, columns=columns)
    if out.empty:
        return out
    rank = {c: i for i, c in enumerate(order)}
    out = out.sort_values("Concept ID", key=lambda s: s.map(rank), kind="stable", ignore_index=True)
    # BH family: one grouping and one outcome, across traits; one p-value per trait.
    for _, part in out.loc[out["p"].notna()].groupby(["Grouping", "Outcome"]):
        first = part.drop_duplicates("Concept ID")
        adjusted = dict(zip(first["Concept ID"], bh_adjust(first["p"].tolist()), strict=True))
        out.loc[part.index, "p (BH-adjusted)"] = part["Concept ID"].map(adjusted)
    return out


def chart_data(
    summary: pd.DataFrame, grouping: str | None, outcome: str = "like", top: int = 10
) -> pd.DataFrame:
    """Return shares for the ``top`` concepts by overall share, one column per group.

    Concepts are ranked by their share among all individuals for ``outcome``;
    with ``grouping`` None the only column is all individuals.
    """
    part = summary.loc[summary["Outcome"] == outcome]
    overall = part.loc[part["Grouping"] == ALL_INDIVIDUALS]
    overall = overall.loc[overall["Respondents"] > 0]
    overall = overall.sort_values(["Share", "Concept ID"], ascending=[False, True]).head(top)
    names = [
        f"{t} ({c})" if isinstance(t, str) else c
        for t, c in zip(overall["Trait"], overall["Concept ID"], strict=True)
    ]
    out = pd.DataFrame({"Trait": names})
    if grouping is None:
        out["all individuals"] = overall["Share"].to_numpy()
        return out
    by = part.loc[(part["Grouping"] == grouping) & (part["Group"] != NOT_RECORDED)]
    for value in sorted(by["Group"].unique()):
        shares = by.loc[by["Group"] == value].set_index("Concept ID")["Share"]
        out[value] = overall["Concept ID"].map(shares).fillna(0.0).to_numpy()
    return out


def write_chart_png(data: pd.DataFrame, path: Path, title: str) -> None:
    """Draw ``data`` from :func:`chart_data` as a horizontal grouped bar chart PNG."""
    import matplotlib

    matplotlib.use("Agg")  # no display on servers; set before pyplot is imported
    import matplotlib.pyplot as plt

    series = [c for c in data.columns if c != "Trait"]
    if data.empty or not series:
        fig, ax = plt.subplots(figsize=(6, 2))
        ax.axis("off")
        ax.text(0.5, 0.5, "No linked traits to chart.", ha="center", va="center")
        fig.savefig(path, dpi=150)
        plt.close(fig)
        return
    fig, ax = plt.subplots(figsize=(8, 0.5 + 0.45 * max(1, len(data)) * max(1, len(series)) / 1.5))
    height = 0.8 / max(1, len(series))
    ypos = np.arange(len(data))
    for i, name in enumerate(series):
        ax.barh(ypos + i * height, data[name].to_numpy() * 100, height=height, label=str(name))
    ax.set_yticks(ypos + height * (len(series) - 1) / 2, labels=data["Trait"].tolist())
    ax.invert_yaxis()  # top trait at the top, as in the workbook table
    ax.set_xlabel("% of respondents")
    top = float(np.nanmax(data[series].to_numpy(dtype=float))) * 100 if len(data) else 0.0
    ax.set_xlim(0, min(100.0, max(10.0, math.ceil(top * 1.15 / 10) * 10)))
    ax.set_title(title)
    if len(series) > 1:
        ax.legend()
    fig.tight_layout()
    fig.savefig(path, dpi=150)
    plt.close(fig)


def about_table(about: Mapping[str, Any], counts: Mapping[str, Any]) -> pd.DataFrame:
    """Return the About sheet as Item/Value rows: caution, run facts, then counts."""
    rows: list[tuple[str, Any]] = [("Caution", CAUTION)]

    def flatten(prefix: str, value: Any) -> None:
        if isinstance(value, Mapping):
            for k, v in value.items():
                flatten(f"{prefix} / {k}" if prefix else str(k), v)
        elif isinstance(value, list | tuple | set):
            rows.append((prefix, json.dumps(list(value), ensure_ascii=False, default=str)))
        else:
            rows.append((prefix, value))

    flatten("", dict(about))
    for k, v in counts.items():
        rows.append((k, v))
    return pd.DataFrame(rows, columns=["Item", "Value"])


# --- safe cells and sheet craft ----------------------------------------------------


def _plain(value: Any) -> Any:
    """Return a value openpyxl can store: Python scalars, None for missing."""
    if value is None:
        return None
    if isinstance(value, float | np.floating):
        return None if math.isnan(value) else float(value)
    if isinstance(value, bool | np.bool_):
        return bool(value)
    if isinstance(value, int | np.integer):
        return int(value)
    if isinstance(value, str | datetime):
        return value
    if np.ndim(value) == 0 and pd.isna(value):
        return None
    return str(value)


def safe_text(value: str) -> str:
    """Return text Excel can hold: no control characters, at most 32,767 characters."""
    cleaned = ILLEGAL_CHARACTERS_RE.sub("", value)
    return cleaned[:EXCEL_MAX_CHARS]


def put(ws: Worksheet, row: int, col: int, value: Any) -> None:
    """Write one value; strings always as text, never as a formula or error code.

    openpyxl infers a formula from a leading "=" and an error from "#N/A"; setting
    ``data_type`` after the value makes the cell an inline string whatever it
    starts with. The quote prefix keeps Excel from re-reading it as a formula
    when someone edits the cell.
    """
    value = _plain(value)
    cell = ws.cell(row=row, column=col)
    if isinstance(value, str):
        cell.value = safe_text(value)
        _force_text(cell)
    else:
        cell.value = value


def _force_text(cell: Any) -> None:
    cell.data_type = "s"
    if isinstance(cell.value, str) and cell.value.startswith(RISKY_FIRST):
        cell.quotePrefix = True


def _needs_forcing(value: Any) -> bool:
    """Return whether openpyxl would store this string as something other than text."""
    return isinstance(value, str) and (value.startswith(RISKY_FIRST) or value in ERROR_CODES)


def append_row(ws: Worksheet, values: Iterable[Any]) -> None:
    """Append one row of values, with the same text guarantee as :func:`put`.

    ``ws.append`` is several times faster than cell-by-cell writing; only the
    strings openpyxl would misread are fixed afterwards.
    """
    plain = [_plain(v) for v in values]
    plain = [safe_text(v) if isinstance(v, str) else v for v in plain]
    ws.append(plain)
    row = ws._current_row
    for j, v in enumerate(plain, start=1):
        if _needs_forcing(v):
            cell = ws.cell(row=row, column=j)
            cell.value = v
            _force_text(cell)


HEADER_FONT = Font(bold=True)
HEADER_FILL = PatternFill("solid", fgColor="DDE4EE")
NOTE_FONT = Font(italic=True)
WRAP = Alignment(wrap_text=True, vertical="top")
WRAPPED_COLUMNS = {
    "Sentence",
    "Examples",
    "Question",
    "Liked",
    "Disliked",
    "Wanted",
    "Value",
    "Caution",
}
PERCENT_COLUMNS = {"Share", "95% CI low", "95% CI high"}
PROBABILITY_COLUMNS = {
    "p",
    "p (BH-adjusted)",
    "Link probability",
    "Stance probability",
    "Tagger confidence",
    "Statistic",
}


def write_table(
    ws: Worksheet, frame: pd.DataFrame, *, notes: Sequence[str] = (), freeze_columns: int = 1
) -> None:
    """Write notes, a bold header and the rows of ``frame``, with filter, freeze and widths.

    The sheet must be empty: rows are appended.
    """
    for note in notes:
        append_row(ws, [note])
        ws.cell(row=ws._current_row, column=1).font = NOTE_FONT
    if notes:
        ws.append([])
    columns = [str(c) for c in frame.columns]
    append_row(ws, columns)
    header = ws._current_row
    for j in range(1, len(columns) + 1):
        ws.cell(row=header, column=j).font = HEADER_FONT
        ws.cell(row=header, column=j).fill = HEADER_FILL
    values = frame.to_numpy(dtype=object)
    for record in values:
        append_row(ws, record)
    last_row = header + max(len(frame), 1)
    if columns:
        ws.auto_filter.ref = f"A{header}:{get_column_letter(len(columns))}{last_row}"
        ws.freeze_panes = ws.cell(row=header + 1, column=min(freeze_columns, len(columns)) + 1)
    for j, name in enumerate(columns, start=1):
        letter = get_column_letter(j)
        sample = [len(str(v)) for v in values[:200, j - 1] if _plain(v) is not None]
        width = max([len(name), *sample]) + 2
        wrapped = name in WRAPPED_COLUMNS
        ws.column_dimensions[letter].width = min(60 if wrapped else 40, max(8, width))
        if wrapped or name in PERCENT_COLUMNS or name in PROBABILITY_COLUMNS:
            fmt = "0.0%" if name in PERCENT_COLUMNS else "0.0000"
            for (cell,) in ws.iter_rows(
                min_row=header + 1, max_row=header + len(frame), min_col=j, max_col=j
            ):
                if wrapped:
                    cell.alignment = WRAP
                elif isinstance(cell.value, float):
                    cell.number_format = fmt


def add_bar_chart(ws: Worksheet, data: pd.DataFrame, title: str, anchor: str) -> None:
    """Add a native clustered bar chart of ``data`` (first column = categories)."""
    if data.empty or data.shape[1] < 2:
        return
    chart = BarChart()
    chart.type = "bar"
    chart.grouping = "clustered"
    chart.title = title
    chart.x_axis.title = "Trait"
    chart.y_axis.title = "Share of respondents"
    chart.y_axis.number_format = "0%"
    chart.y_axis.scaling.min = 0
    chart.y_axis.scaling.max = 1
    chart.x_axis.scaling.orientation = "maxMin"  # top trait at the top
    chart.height = 4 + 0.8 * len(data)
    chart.width = 20
    values = Reference(ws, min_col=2, max_col=data.shape[1], min_row=1, max_row=len(data) + 1)
    cats = Reference(ws, min_col=1, min_row=2, max_row=len(data) + 1)
    chart.add_data(values, titles_from_data=True)
    chart.set_categories(cats)
    ws.add_chart(chart, anchor)


# --- the workbook ------------------------------------------------------------------


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


def export_counts(mentions: pd.DataFrame, respondents: pd.DataFrame) -> dict[str, Any]:
    """Return the counts shown on the About sheet."""
    source = mentions["source"].value_counts()
    return {
        "Individual respondents": int((~respondents["is_group"]).sum()),
        "Focus groups": int(respondents["is_group"].sum()),
        "Mentions exported": len(mentions),
        "Mentions linked to a concept": int(mentions["concept_id"].notna().sum()),
        "Mentions not linked": int(mentions["concept_id"].isna().sum()),
        "Mentions labeled by a person": int(source.get("person", 0)),
        "Mentions predicted by the tagger": int(source.get("predicted", 0)),
        "Mentions from the dictionary": int(source.get("dictionary", 0)),
        "Distinct concepts mentioned": int(mentions["concept_id"].nunique()),
    }


def write_workbook(
    path: Path | str,
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    concepts: pd.DataFrame,
    about: Mapping[str, Any],
    *,
    group_by: Sequence[str] = (),
    min_confidence: float | None = None,
    pseudonymise: PrivacyOptions | None = None,
    chart_png: Path | str | None = None,
) -> dict[str, float]:
    """Write the analysis workbook (.xlsx) and, optionally, the chart as PNG.

    Args:
        path: Where to write the ``.xlsx``; its folder must exist.
        mentions: Mention rows (see the module docstring).
        respondents: One row per respondent with ``is_group`` and metadata.
        concepts: The concept list: ``concept_id``, ``label``, ``parent``.
        about: Facts about the run for the About sheet.
        group_by: Respondent columns to break shares down by (e.g. gender, role);
            the first one also splits the chart.
        min_confidence: Drop predicted mentions below this tagger confidence.
        pseudonymise: Pseudonyms, screened text and dropped identifying columns.
        chart_png: Where to write the chart as a PNG too.

    Returns:
        Seconds spent per step (``prepare``, ``tables``, ``write``, ``png``).

    Raises:
        InputError: If a column is missing, a value is out of range, a grouping
            column is unknown or dropped as identifying, or the folder is missing.
    """
    path = Path(path)
    if path.suffix.lower() != ".xlsx":
        raise InputError(f"The workbook file must end in .xlsx; got {path.name!r}.")
    if not path.parent.is_dir():
        raise InputError(f"The folder {str(path.parent)!r} for the workbook does not exist.")
    group_by = list(group_by)
    if pseudonymise is not None:
        dropped = identifying_columns(group_by, pseudonymise.drop_columns)
        if dropped:
            raise InputError(
                f"The grouping column {dropped[0]!r} is dropped as identifying when "
                "pseudonymising; remove it from the grouping or the drop list."
            )
    timings: dict[str, float] = {}
    t0 = time.perf_counter()
    m, r = prepare(mentions, respondents, min_confidence=min_confidence, pseudonymise=pseudonymise)
    timings["prepare"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    summary = trait_summary(m, r, concepts, group_by)
    grouping = group_by[0] if group_by else None
    chart = chart_data(summary, grouping) if not summary.empty else pd.DataFrame()
    counts = export_counts(m, r)
    counts.update(
        {
            "Minimum tagger confidence": min_confidence if min_confidence is not None else "none",
            "Pseudonymised": "yes" if pseudonymise is not None else "no",
            "Written": datetime.now().isoformat(timespec="seconds"),
        }
    )
    tables = [
        (SHEETS["preferred"], preferred_traits(m, r, concepts), (), 1),
        (SHEETS["matrix"], trait_matrix(m, r, concepts), (), 1),
        (SHEETS["mentions"], mention_evidence(m, r, concepts), (), 1),
        (SHEETS["summary"], summary, SUMMARY_NOTES, 2),
        (SHEETS["unlinked"], unlinked_terms(m), (), 1),
    ]
    timings["tables"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    wb = Workbook()
    wb.remove(wb.active)
    for title, frame, notes, freeze in tables:
        write_table(wb.create_sheet(title), frame, notes=notes, freeze_columns=freeze)
    ws = wb.create_sheet(SHEETS["chart"])
    chart_title = (
        f"Share of individual respondents liking each trait, by {grouping}"
        if grouping
        else "Share of individual respondents liking each trait"
    )
    write_table(ws, chart, freeze_columns=1)
    for j in range(2, chart.shape[1] + 1):
        for i in range(2, len(chart) + 2):
            ws.cell(row=i, column=j).number_format = "0.0%"
    add_bar_chart(ws, chart, chart_title, f"{get_column_letter(chart.shape[1] + 2)}2")
    about_frame = about_table(about, counts)
    ws = wb.create_sheet(SHEETS["about"])
    write_table(ws, about_frame, freeze_columns=1)
    ws.column_dimensions["B"].width = 80
    ws.cell(row=2, column=1).font = HEADER_FONT
    ws.cell(row=2, column=2).font = HEADER_FONT
    try:
        wb.save(path)
    except OSError as exc:
        raise InputError(
            f"Cannot write the workbook {str(path)!r}: {exc.strerror or exc}; close it in any "
            "spreadsheet program and check the folder is writable."
        ) from exc
    timings["write"] = time.perf_counter() - t0

    if chart_png is not None:
        t0 = time.perf_counter()
        write_chart_png(chart, Path(chart_png), chart_title)
        timings["png"] = time.perf_counter() - t0
    return timings
