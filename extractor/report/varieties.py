"""Variety tables: each variety's respondents and their traits, and head-to-head comparisons.

A mention is about a variety when the tagging attributed it to one (the variety named
near it, the answer's variety column...; :mod:`extractor.models.variety`). A variety's
respondents are the individuals with at least one mention about it; the share of them
who like, dislike or want a trait is a share of people, with its Wilson interval, as
everywhere else. Focus groups are left out of the shares.

A comparison ("bigger than Kibanda") is a mention with a reference variety: the
head-to-head table lists each, with the direction its stance gives.
"""

from __future__ import annotations

from typing import Any

import pandas as pd

from extractor.report.inputs import concept_labels, metadata_columns, trait_name
from extractor.report.stats import wilson_interval
from extractor.report.summary import small_sample_caution

VARIETY_OUTCOMES = {"liked": "like", "disliked": "dislike", "wanted": "want"}
"""Stance -> outcome name, as on the summary sheet."""
DIRECTIONS = {
    "liked": "better than",
    "disliked": "worse than",
    "wanted": "wanted as in",
}
"""Stance of a compared mention -> how the variety stands against the one compared with."""
VARIETY_COLUMNS = [
    "Variety",
    "Respondents of variety",
    "Trait",
    "Concept ID",
    "Outcome",
    "Respondents",
    "Share",
    "95% CI low",
    "95% CI high",
    "Caution",
]
HEAD_TO_HEAD_COLUMNS = [
    "Variety",
    "Direction",
    "Compared with",
    "Trait",
    "Concept ID",
    "Respondent",
    "Quote",
]
VARIETY_NOTES = (
    "A variety's respondents: individuals with at least one trait mention about it. Share: "
    "of them, those who like, dislike or want the trait (people, not mentions), with its "
    "95% Wilson interval. Focus groups are left out.",
)
HEAD_TO_HEAD_NOTES = (
    "Comparisons between varieties found in the answers: the variety spoken of, how it "
    "stands (from the stance of the mention), the variety it is compared with, the trait "
    "and the sentence. Review them against the quote.",
)


def _individual_mentions(mentions: pd.DataFrame, respondents: pd.DataFrame) -> pd.DataFrame:
    groups = set(respondents.loc[respondents["is_group"], "respondent"])
    return mentions.loc[~mentions["respondent"].isin(groups)]


def variety_table(
    mentions: pd.DataFrame, respondents: pd.DataFrame, concepts: pd.DataFrame
) -> pd.DataFrame:
    """Return per variety, trait and outcome the share of the variety's respondents.

    Rows only for traits at least one of the variety's respondents has for the outcome;
    varieties by most respondents, then traits by most respondents.
    """
    m = _individual_mentions(mentions, respondents)
    m = m.loc[m["variety"].notna()]
    labels = concept_labels(mentions, concepts)
    sizes = m.groupby("variety")["respondent"].nunique()
    linked = m.loc[m["concept_id"].notna() & m["stance"].isin(list(VARIETY_OUTCOMES))]
    holders = linked.groupby(["variety", "concept_id", "stance"])["respondent"].nunique()
    rows: list[dict[str, Any]] = []
    for (variety, cid, stance), k in holders.items():
        n = int(sizes[variety])
        low, high = wilson_interval(int(k), n)
        rows.append(
            {
                "Variety": variety,
                "Respondents of variety": n,
                "Trait": trait_name(str(cid), labels),
                "Concept ID": cid,
                "Outcome": VARIETY_OUTCOMES[str(stance)],
                "Respondents": int(k),
                "Share": int(k) / n,
                "95% CI low": low,
                "95% CI high": high,
                "Caution": small_sample_caution(int(k), n),
            }
        )
    out = pd.DataFrame(rows, columns=VARIETY_COLUMNS)
    if out.empty:
        return out
    order = {o: i for i, o in enumerate(VARIETY_OUTCOMES.values())}
    out = out.assign(_o=out["Outcome"].map(order))
    out = out.sort_values(
        ["Respondents of variety", "Variety", "_o", "Respondents", "Concept ID"],
        ascending=[False, True, True, False, True],
        kind="stable",
    )
    return out.drop(columns="_o").reset_index(drop=True)


def head_to_head(
    mentions: pd.DataFrame, respondents: pd.DataFrame, concepts: pd.DataFrame
) -> pd.DataFrame:
    """Return every comparison between varieties: variety, direction, compared with, quote.

    Focus groups are kept (a quote is a quote); the respondents' metadata columns follow
    the respondent. Rows are sorted by variety, compared-with variety and trait.
    """
    labels = concept_labels(mentions, concepts)
    m = mentions.loc[mentions["variety"].notna() & mentions["ref_variety"].notna()]
    rows = [
        {
            "Variety": rec["variety"],
            "Direction": DIRECTIONS.get(str(rec["stance"]), "compared with"),
            "Compared with": rec["ref_variety"],
            "Trait": trait_name(str(rec["concept_id"]), labels)
            if isinstance(rec["concept_id"], str)
            else rec["span_text"],
            "Concept ID": rec["concept_id"],
            "Respondent": rec["respondent"],
            "Quote": rec["sentence"],
        }
        for rec in m.to_dict("records")
    ]
    out = pd.DataFrame(rows, columns=HEAD_TO_HEAD_COLUMNS)
    meta = metadata_columns(respondents)
    if meta and len(out):
        info = respondents.set_index("respondent")[meta]
        for i, col in enumerate(meta):
            out.insert(6 + i, col, out["Respondent"].map(info[col]).to_numpy())
    return out.sort_values(
        ["Variety", "Compared with", "Trait", "Respondent"], kind="stable", ignore_index=True
    )
