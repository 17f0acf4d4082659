"""Per-respondent tables: traits per respondent, the respondent x trait matrix, evidence.

Every function takes frames completed by :func:`extractor.report.inputs.prepare` and
returns a new DataFrame; nothing here writes a file.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

import pandas as pd

from extractor.nlp.fold import fold_words
from extractor.report.inputs import concept_labels, metadata_columns, trait_name

OUTCOMES = {"mention": None, "like": "liked", "dislike": "disliked", "want": "wanted"}
"""Outcome name on the summary sheet -> stance it counts (None = any mention)."""

MIXED = "mixed"
NO_QUOTE_SPAN = "no quote span"
"""What the evidence sheet shows as span text of an implicit trait (its evidence: the sentence)."""
SAID = ("liked", "disliked", "wanted")
"""The stances a respondent can state about a trait (neutral is mentioning without one)."""

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
"""Mention column -> header on the evidence sheet, in sheet order."""


def respondent_concepts(mentions: pd.DataFrame) -> pd.DataFrame:
    """Return one row per (respondent, concept) with flags mention/like/dislike/want."""
    linked = mentions.loc[mentions["concept_id"].notna(), ["respondent", "concept_id", "stance"]]
    if linked.empty:
        return pd.DataFrame(columns=["respondent", "concept_id", *OUTCOMES])
    linked = linked.assign(concept_id=linked["concept_id"].astype(str))
    for outcome, stance in OUTCOMES.items():
        linked[outcome] = True if stance is None else (linked["stance"] == stance)
    return linked.groupby(["respondent", "concept_id"], as_index=False)[list(OUTCOMES)].any()


def respondent_type(is_group: bool) -> str:
    """Return how a respondent is counted: ``focus group`` or ``individual``."""
    return "focus group" if is_group else "individual"


def _trait_lists(keyed: pd.DataFrame, labels: dict[str, str]) -> dict[tuple[str, str, str], str]:
    """Return (respondent, variety, stance) -> "label (ID); ...", most mentioned first."""
    # A mention without a stance is a neutral one: the trait was named, no judgement given.
    keyed = keyed.assign(stance=keyed["stance"].where(keyed["stance"].isin(SAID), "neutral"))
    said = keyed.loc[keyed["concept_id"].notna()]
    lists: dict[tuple[str, str, str], str] = {}
    if said.empty:
        return lists
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
    return lists


def preferred_traits(
    mentions: pd.DataFrame, respondents: pd.DataFrame, concepts: pd.DataFrame
) -> pd.DataFrame:
    """Return one row per respondent and variety with liked, disliked, wanted, neutral traits.

    Neutral lists traits named without a stance. Each list reads "label (ID); ...",
    most-mentioned first, then by label. Respondents without any mention still get one
    row, so the table lists everyone interviewed. Variety is blank where the statement names none.
    """
    meta = metadata_columns(respondents)
    variety = mentions["variety"].where(mentions["variety"].notna(), "").astype(str)
    keyed = mentions.assign(_variety=variety)
    lists = _trait_lists(keyed, concept_labels(mentions, concepts))
    by_resp: dict[str, list[tuple[str, int]]] = {}
    for (resp, var), n in keyed.groupby(["respondent", "_variety"]).size().items():
        by_resp.setdefault(resp, []).append((var, int(n)))
    rows = []
    for rec in respondents.to_dict("records"):
        resp = rec["respondent"]
        base = {"Respondent": resp, "Type": respondent_type(rec["is_group"])}
        base.update({m: rec[m] for m in meta})
        for var, n in sorted(by_resp.get(resp, [("", 0)])):
            said = {s: lists.get((resp, var, s), "") for s in (*SAID, "neutral")}
            rows.append(
                {
                    **base,
                    "Variety": var or None,
                    "Liked": said["liked"],
                    "Disliked": said["disliked"],
                    "Wanted": said["wanted"],
                    "Neutral": said["neutral"],
                    "Mentions": n,
                }
            )
    columns = [
        "Respondent",
        "Type",
        *meta,
        "Variety",
        "Liked",
        "Disliked",
        "Wanted",
        "Neutral",
        "Mentions",
    ]
    return pd.DataFrame(rows, columns=columns)


def _cell_stance(stances: Iterable[Any]) -> str:
    said = {s for s in stances if s in SAID}
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
            "Type": respondents["is_group"].map(respondent_type).to_numpy(),
        }
    )
    for m in meta:
        out[m] = respondents[m].to_numpy()
    for cid in order:
        col = cells[cid] if cid in cells.columns else pd.Series(dtype=object)
        out[trait_name(cid, labels)] = out["Respondent"].map(col).to_numpy()
    return out


def mention_evidence(
    mentions: pd.DataFrame, respondents: pd.DataFrame, concepts: pd.DataFrame
) -> pd.DataFrame:
    """Return every mention with its sentence, offsets, concept, stance and provenance."""
    labels = concept_labels(mentions, concepts)
    out = mentions.assign(
        trait=mentions["concept_id"].map(lambda c: labels.get(str(c)) if pd.notna(c) else None)
    )
    # An implicit trait has no quote span: its evidence is the whole sentence.
    implicit = mentions["implicit"].fillna(False).astype(bool) if "implicit" in mentions else None
    if implicit is not None and implicit.any():
        out = out.assign(span_text=out["span_text"].where(~implicit, NO_QUOTE_SPAN))
    out = out[list(EVIDENCE_COLUMNS)].rename(columns=EVIDENCE_COLUMNS)
    meta = metadata_columns(respondents)
    if meta:
        info = respondents.set_index("respondent")[meta]
        for i, m in enumerate(meta):
            out.insert(1 + i, m, out["Respondent"].map(info[m]).to_numpy())
    return out.sort_values(["Respondent", "Sentence ID", "Start"], kind="stable", ignore_index=True)


def unlinked_terms(mentions: pd.DataFrame, examples: int = 3) -> pd.DataFrame:
    """Return spans without a concept, grouped by folded text, for curators.

    Spellings that differ only in case, accents or spacing are one term
    (:func:`extractor.nlp.fold.fold_words`).

    Columns: Term (the commonest spelling), Mentions, Respondents, Examples (up to
    ``examples`` distinct sentences, one per line).
    """
    free = mentions.loc[mentions["concept_id"].isna() & mentions["span_text"].notna()]
    columns = ["Term", "Mentions", "Respondents", "Examples"]
    if free.empty:
        return pd.DataFrame(columns=columns)
    key = free["span_text"].astype(str).map(fold_words)
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
