"""An invented study for the report tests: mention rows built by hand, respondents, concepts.

All people, places, varieties and trait IDs are invented.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pandas as pd

from extractor.types import AliasEntry, AnswerRow, ConceptEntry, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace

Study = tuple[pd.DataFrame, pd.DataFrame]
"""Mentions and respondents, as the report functions take them."""

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


def study_frames() -> Study:
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


# --- a workspace built by hand ------------------------------------------------------

STORE_ANSWERS = [
    # (respondent, metadata, is_group, answer, sentence offsets)
    ("KR-01", {"gender": "woman"}, False, "We grow Kivu Red. It cooks fast but weevils eat it.",
     [(0, 17), (18, 51)]),
    ("KR-02", {"gender": "man"}, False, "The grain is large.", [(0, 19)]),
    ("FG-01", {}, True, "Nobody said much.", [(0, 17)]),
]  # fmt: skip
STORE_CONCEPTS = [
    ConceptEntry("BTX:0001", None, "Soft after a short time on the fire."),
    ConceptEntry("BTX:0002", None, "Stored grain escapes weevils."),
    ConceptEntry("BTX:0003", "BTX:0001", "Size of the dry grain."),
]
STORE_ALIASES = [
    ("BTX:0001", "fast cooking", "en"),
    ("BTX:0001", "cuisson rapide", "fr"),
    ("BTX:0002", "résistance aux charançons", "fr"),  # no English label: falls back
    ("BTX:0003", "large grain", "en"),
]
VERSION = "v001-20260101T000000"


def predicted(
    start: int, end: int, concept: str | None, stance: str, **extra: Any
) -> dict[str, Any]:
    """Return one stored predicted mention, shaped as tagging stores it."""
    return {
        "start": start,
        "end": end,
        "concept": concept,
        "stance": stance,
        "confidence": 0.9,
        "link_prob": 0.8,
        "stance_prob": 0.7,
        "source": "predicted",
        "variety": None,
        "ref_variety": None,
    } | extra


def build_workspace(root: Path, *, with_model: bool = True) -> Workspace:
    """Return an open workspace in ``root`` built through the store's own functions.

    Three respondents (one a focus group), four sentences, trait and variety lists, one
    person label on sentence 3 and, ``with_model``, a recorded model version (no model
    files) with predictions for sentences 1 to 3.
    """
    init_workspace(root)
    ws = Workspace.open(root)
    store.add_source(
        ws.conn,
        path="interviews.csv",
        sha256="0",
        kind="csv",
        options={},
        rows=[
            AnswerRow(
                respondent=resp,
                question="Why do you grow it?",
                answer=text,
                lang="en",
                lang_origin="column",
                metadata=meta,
                is_group=group,
            )
            for resp, meta, group, text, _ in STORE_ANSWERS
        ],
        sentence_offsets=[offsets for *_, offsets in STORE_ANSWERS],
    )
    store.replace_concept_list(
        ws.conn,
        kind="trait",
        path="traits.csv",
        sha256="1",
        concepts=STORE_CONCEPTS,
        aliases=[AliasEntry(c, t, lang, "preferred") for c, t, lang in STORE_ALIASES],
    )
    store.replace_concept_list(
        ws.conn,
        kind="variety",
        path="varieties.csv",
        sha256="2",
        concepts=[ConceptEntry("VAR:01")],
        aliases=[AliasEntry("VAR:01", "Kivu Red", "en", "preferred")],
    )
    if with_model:
        store.add_model(ws.conn, VERSION, "models/v001", {"metrics": {"span": {"f1": 0.5}}})
        # Sentence IDs follow answer order: 1 "We grow Kivu Red.", 2 "It cooks fast...",
        # 3 "The grain is large.", 4 "Nobody said much."
        store.store_predictions(
            ws.conn,
            VERSION,
            [
                {"sentence_id": 1, "mentions": []},
                {
                    "sentence_id": 2,
                    "mentions": [
                        predicted(3, 13, "BTX:0001", "liked", variety="VAR:01"),
                        predicted(18, 32, "BTX:0002", "disliked", ref_variety="VAR:99"),
                    ],
                },
                {"sentence_id": 3, "mentions": [predicted(4, 18, None, "liked")]},
            ],
        )
    # A person relabels sentence 3: only "grain" is a trait, linked to large grain.
    store.add_label(ws.conn, 3, [Span(4, 9, "BTX:0003", "liked")], "coder-a")
    return ws
