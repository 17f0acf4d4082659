"""Tests of extractor.models.terms: frequent unlinked texts offered as new aliases."""

from __future__ import annotations

import numpy as np
import pytest

from extractor.models.linking import ConceptLinker
from extractor.models.terms import suggest_terms
from tests.models.toy import ALIASES
from tests.models.toy import mention as _mention


@pytest.fixture(scope="module")
def cold() -> ConceptLinker:
    return ConceptLinker().fit([], ALIASES)


def test_suggest_terms_ranks_frequent_unlinked_texts(cold: ConceptLinker) -> None:
    unlinked = [
        _mention("It takes forever to cook.", "takes forever", sid=1),
        _mention("Ours take forever on the fire.", "take forever", sid=2),
        _mention("It takes forever, really.", "takes forever", sid=3),
        _mention("It takes forever in the pot.", "takes forever", sid=4),
        _mention("The pods twist open.", "pods twist", sid=5),
        _mention("Sometimes pods twist.", "pods twist", sid=6),
        _mention("Purple flowers.", "Purple flowers", sid=7),
    ]
    words = ["forever", "take", "cooking", "time", "seed", "size", "drought", "tolerance"]
    # Fake word vectors: "forever"/"take" point the way of "cooking"/"time".
    vectors = np.array(
        [
            [1, 0, 0],
            [0.9, 0.1, 0],
            [1, 0, 0],
            [0.95, 0.05, 0],
            [0, 1, 0],
            [0, 1, 0],
            [0, 0, 1],
            [0, 0, 1],
        ],
        dtype=float,
    )
    model = {"words": words, "vectors": (vectors / np.linalg.norm(vectors, axis=1)[:, None])}
    out = suggest_terms(unlinked, cold, model, min_count=2)
    assert [s.count for s in out] == [4, 2]
    first = out[0]
    assert first.term == "takes forever" and len(first.examples) == 3
    assert first.nearest and len(first.nearest) <= 3
    assert first.nearest_by_vectors[0][0] == "TX:01"
    assert suggest_terms(unlinked, cold)[0].nearest_by_vectors == ()
