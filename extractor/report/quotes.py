"""Quotes per trait: every quote for each concept and stance, grouped by the chosen grouping.

What an analyst reads before writing up a trait: the sentences behind it, in the
respondents' words, side by side for women and men (or any grouping). The frames come
from :func:`extractor.report.inputs.prepare`, so a pseudonymised export quotes
pseudonymised respondents and screened sentences. A non-English quote gets an empty
English gloss column for a person to fill; nothing is machine translated.
"""

from __future__ import annotations

import pandas as pd

from extractor.report.inputs import concept_labels, trait_name
from extractor.report.summary import NOT_RECORDED
from extractor.report.tables import concept_order, respondent_type

STANCE_ORDER = ("liked", "disliked", "wanted", "neutral")
QUOTE_NOTES = (
    "Every quote behind each trait and stance, grouped by the first grouping column; the "
    "English gloss column is for a person to fill for quotes in other languages.",
)
GLOSS = "English gloss"


def quotes_by_trait(
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    concepts: pd.DataFrame,
    grouping: str | None = None,
) -> pd.DataFrame:
    """Return one row per linked mention: trait, stance, group, respondent and quote.

    Rows run by trait (most respondents first), then stance (liked, disliked,
    wanted, neutral), then group, respondent and sentence. A sentence that names
    the same trait twice with one stance is quoted once per respondent.

    Args:
        mentions: Prepared mention rows.
        respondents: Prepared respondent rows.
        concepts: The concept list, for trait labels.
        grouping: A respondent column to group the quotes by, or None.
    """
    labels = concept_labels(mentions, concepts)
    rank = {c: i for i, c in enumerate(concept_order(mentions))}
    m = mentions.loc[mentions["concept_id"].notna()].copy()
    m["concept_id"] = m["concept_id"].astype(str)
    m["stance"] = m["stance"].where(m["stance"].isin(STANCE_ORDER[:3]), "neutral")
    info = respondents.set_index("respondent")
    group_label = grouping or "Group"
    if grouping is not None:
        m[group_label] = (
            m["respondent"]
            .map(info[grouping])
            .map(lambda v: NOT_RECORDED if pd.isna(v) else str(v))
        )
    else:
        m[group_label] = "all"
    m["Type"] = m["respondent"].map(info["is_group"]).map(respondent_type)
    m = m.drop_duplicates(["concept_id", "stance", "respondent", "sentence_id"])
    out = pd.DataFrame(
        {
            "Trait": m["concept_id"].map(lambda c: trait_name(c, labels)),
            "Concept ID": m["concept_id"],
            "Stance": m["stance"],
            group_label: m[group_label],
            "Respondent": m["respondent"],
            "Type": m["Type"],
            "Quote": m["sentence"],
            "Words": m["span_text"],
            "Variety": m["variety"],
            "Language": m["lang"],
            GLOSS: None,
        }
    )
    keys = pd.DataFrame(
        {
            "t": out["Concept ID"].map(rank),
            "s": out["Stance"].map({s: i for i, s in enumerate(STANCE_ORDER)}),
            "g": out[group_label].map(lambda v: (v == NOT_RECORDED, v)),
        }
    )
    order = sorted(
        range(len(out)),
        key=lambda i: (
            keys["t"].iloc[i],
            keys["s"].iloc[i],
            keys["g"].iloc[i],
            str(out["Respondent"].iloc[i]),
        ),
    )
    return out.iloc[order].reset_index(drop=True)
