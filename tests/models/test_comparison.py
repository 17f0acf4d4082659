"""Tests of extractor.models.comparison: comparison markers and the variety compared with.

Which mention a comparison goes to is tested through
:func:`extractor.models.variety.attribute_corpus` in ``test_variety.py``.
"""

from __future__ import annotations

import pytest

from extractor.models.comparison import comparison_references, find_comparisons
from extractor.types import Sentence


@pytest.mark.parametrize(
    ("text", "lang", "markers"),
    [
        ("It is bigger than Kivuli.", "en", ["than"]),
        ("Orvane cuit plus vite que Kivuli.", "fr", ["que"]),
        ("Il faut que Kivuli soit sucré.", "fr", []),
        ("Orvane es más grande que el Kivuli.", "es", ["que"]),
    ],
    ids=["en-than", "fr-plus-que", "fr-que-conjunction", "es-mas-que"],
)
def test_find_comparisons_takes_que_only_after_a_comparative(
    text: str, lang: str, markers: list[str]
) -> None:
    # French and Spanish grammar (from memory): "que" introduces the second term of a
    # comparison only after "plus"/"más"; in "il faut que" it is a conjunction.
    assert [text[s:e] for s, e in find_comparisons(text, lang)] == markers


def test_comparison_references_need_a_variety_within_reach() -> None:
    # The second term of a comparison follows its marker ("bigger than Kivuli"); a
    # variety named far after it is not what is compared with (English grammar, from
    # memory; REFERENCE_REACH is 4 tokens).
    text = "It is bigger than the one my uncle grows next to Kivuli."
    sentence = Sentence(id=1, text=text, lang="en", answer_id=1)
    far = (text.index("Kivuli"), len(text) - 1, "VAR:K")
    assert comparison_references(sentence, [far]) == []
    near = "It is bigger than Kivuli."
    refs = comparison_references(
        Sentence(id=2, text=near, lang="en", answer_id=1), [(18, 24, "VAR:K")]
    )
    assert [(near[c.start : c.end], c.reference[2]) for c in refs] == [("than", "VAR:K")]
