"""An invented study for the report tests: mention rows built by hand, respondents, concepts.

All people, places, varieties and trait IDs are invented.
"""

from __future__ import annotations

import pandas as pd

SECRET = b"fictional-test-secret-0123456789"
CONCEPTS = pd.DataFrame(
    {
        "concept_id": ["BTX:0001", "BTX:0002", "BTX:0003"],
        "label": ["fast cooking", "pest tolerance", "large seed"],
        "parent": [None, None, None],
    }
)

S1 = "Nyota cooks fast and cooks fast every time."
S2 = "I want pest tolerance, but the seed is small."
S3 = "Cooks fast, but weevils eat it."


def mention(
    respondent: str,
    sentence_id: int,
    sentence: str,
    span: str,
    concept: str | None,
    stance: str | None,
    *,
    source: str = "predicted",
    confidence: float | None = 0.9,
    variety: str | None = None,
) -> dict[str, object]:
    """Build one mention row; offsets are found in the sentence so they are always right."""
    start = sentence.index(span)
    return {
        "respondent": respondent,
        "sentence_id": sentence_id,
        "answer_id": sentence_id,
        "sentence": sentence,
        "question": "What do you like about it?",
        "lang": "en",
        "start": start,
        "end": start + len(span),
        "answer_start": start,
        "answer_end": start + len(span),
        "span_text": span,
        "concept_id": concept,
        "concept_label": None,
        "link_prob": 0.8 if concept else None,
        "stance": stance,
        "stance_prob": 0.7,
        "variety": variety,
        "ref_variety": None,
        "confidence": confidence,
        "source": source,
        "model_version": "m-3",
        "annotator": "coder-a" if source == "person" else None,
    }


def study_frames() -> tuple[pd.DataFrame, pd.DataFrame]:
    """Six individuals (3 women, 2 men, 1 unrecorded) and one focus group."""
    rows = [
        # W1 mentions fast cooking twice (liked): still one respondent.
        mention("W1", 1, S1, "cooks fast", "BTX:0001", "liked", variety="Nyota"),
        mention("W1", 1, S1, "cooks fast every", "BTX:0001", "liked", variety="Nyota"),
        mention("W1", 2, S2, "pest tolerance", "BTX:0002", "wanted"),
        mention("W2", 3, S3, "Cooks fast", "BTX:0001", "liked"),
        mention("W2", 3, S3, "weevils eat it", "BTX:0002", "disliked"),
        mention("W3", 4, S3, "Cooks fast", "BTX:0001", "disliked"),
        mention("M1", 5, S2, "pest tolerance", "BTX:0002", "wanted"),
        mention("M1", 5, S2, "seed is small", None, "disliked"),
        mention("M2", 6, S2, "seed is small", None, "disliked"),
        mention("U1", 7, S1, "cooks fast", "BTX:0001", "liked"),
        mention("FG1", 8, S1, "cooks fast", "BTX:0001", "liked"),
    ]
    respondents = pd.DataFrame(
        {
            "respondent": ["W1", "W2", "W3", "W4", "M1", "M2", "U1", "FG1"],
            "is_group": [False, False, False, False, False, False, False, True],
            "gender": ["woman", "woman", "woman", "woman", "man", "man", None, None],
            "district": ["Lumoro"] * 4 + ["Kasiri"] * 4,
        }
    )
    return pd.DataFrame(rows), respondents
