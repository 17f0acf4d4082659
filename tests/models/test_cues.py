"""Tests of extractor.models.cues: the cue lexicon and the cold-start rules over its features."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.models.cues import has_stance_cues, load_cues
from extractor.models.stance_features import stance_features
from extractor.models.stance_rules import rule_stance
from tests.models.toy import CUES
from tests.models.toy import features as _features
from tests.models.toy import mention as _mention

# ------------------------------------------------------------------ cue lexicon


def test_load_cues_has_three_languages_and_documents_its_shape() -> None:
    assert {"en", "fr", "es"} <= set(CUES)
    assert "negation_pre" in CUES["fr"] and "wanted" in CUES["es"]
    assert "_comment" in json.loads(
        Path("extractor/models/data/stance_cues.json").read_text("utf-8")
    )


def test_load_cues_merges_user_file_over_packaged(tmp_path: Path) -> None:
    user = tmp_path / "cues.json"
    user.write_text(json.dumps({"en": {"liked": ["zingy"]}, "ha": {"liked": ["dadi"]}}), "utf-8")
    cues = load_cues(user)
    assert "zingy" in cues["en"]["liked"] and "good" in cues["en"]["liked"]
    assert cues["ha"]["liked"] == ["dadi"]  # a language the packaged file lacks is added
    features = stance_features(*_mention("Its flavour is zingy.", "flavour"), cues)
    assert rule_stance(features)[0] == "liked"


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("{not json", "not readable JSON"),
        (json.dumps({"en": {"lovely_words": ["x"]}}), "category 'lovely_words'"),
        (json.dumps({"en": {"liked": "good"}}), "must be a list"),
        (json.dumps({"_settings": {"negative_concord": "fr"}}), "list of language codes"),
    ],
    ids=["broken-json", "unknown-category", "not-a-list", "concord-not-a-list"],
)
def test_load_cues_rejects_bad_user_file(tmp_path: Path, content: str, message: str) -> None:
    user = tmp_path / "cues.json"
    user.write_text(content, "utf-8")
    with pytest.raises(InputError, match=message):
        load_cues(user)


def test_load_cues_missing_file_raises(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="does not exist"):
        load_cues(tmp_path / "nope.json")


@pytest.mark.parametrize(
    ("text", "term", "lang", "expected"),
    [
        ("The sacks were full of weevils.", "sacks", "en", "disliked"),
        ("Asi no le entra el gorgojo.", "gorgojo", "es", "liked"),
        ("Les charançons mangent tout.", "mangent", "fr", "disliked"),
    ],
    ids=["en-weevil*", "es-negated-gorgojo*", "fr-charancon*"],
)
def test_wildcard_cue_matches_words_starting_with_its_prefix(
    text: str, term: str, lang: str, expected: str
) -> None:
    # The lexicon's "weevil*", "gorgojo*", "charançon*" end in a wildcard that the
    # tokenizer splits off; they must still match "weevils", "gorgojo", "charançons".
    features = stance_features(*_mention(text, term, lang), CUES)
    assert rule_stance(features)[0] == expected


# ------------------------------------------------------------------ cold-start rules


@pytest.mark.parametrize(
    ("text", "term", "lang", "question", "expected"),
    [
        ("It does not rot in the store.", "rot", "en", None, "liked"),
        ("The seeds are too small.", "small", "en", None, "disliked"),
        ("Les grains sont trop petits.", "petits", "fr", None, "disliked"),
        ("Los granos son demasiado pequeños.", "pequeños", "es", None, "disliked"),
        ("I wish the pods were longer.", "pods", "en", None, "wanted"),
        ("J'aimerais une cuisson plus rapide.", "cuisson", "fr", None, "wanted"),
        ("Il faudrait des grains plus gros.", "grains", "fr", None, "wanted"),
        ("Ojalá el grano fuera más grande.", "grano", "es", None, "wanted"),
        ("Quisiera un sabor más dulce.", "sabor", "es", None, "wanted"),
        ("The taste is good but the pods split.", "taste", "en", None, "liked"),
        ("The taste is good but the pods split.", "pods", "en", None, "disliked"),
        ("Le goût est bon mais la cuisson est lente.", "cuisson", "fr", None, "disliked"),
        (
            "El sabor es bueno pero tarda en cocinarse.",
            "tarda en cocinarse",
            "es",
            None,
            "disliked",
        ),
        ("Its taste is not good.", "taste", "en", None, "disliked"),
        ("Its seeds are bigger than those of Kivuli.", "seeds", "en", None, "liked"),
        ("Small seeds.", "seeds", "en", "What do you dislike about Ruvaro?", "disliked"),
        ("Small seeds.", "seeds", "en", "What would you change in Ruvaro?", "wanted"),
        ("Small seeds.", "seeds", "en", "Why do you grow Ruvaro?", "liked"),
        ("Small seeds.", "seeds", "en", None, "neutral"),
        ("Des grains rouges.", "grains", "fr", "Qu'est-ce que vous n'aimez pas ?", "disliked"),
        ("Whatever is cheap.", "cheap", "en", "Which new variety would you try?", "wanted"),
        ("Whatever is cheap.", "cheap", "en", "Why do you buy Ruvaro?", "liked"),
        ("One that does not rot.", "rot", "en", "Which new variety would you try?", "wanted"),
        ("The grains are too small.", "small", "en", "What would you change?", "disliked"),
    ],
    ids=[
        "negated-fault",
        "excess-en",
        "excess-fr",
        "excess-es",
        "wish-en",
        "wish-fr",
        "il-faudrait",
        "ojala",
        "quisiera",
        "contrast-first-side",
        "contrast-second-side",
        "contrast-fr",
        "contrast-es",
        "negated-cue",
        "comparison",
        "question-dislike",
        "question-change",
        "question-why-grow",
        "no-cue",
        "question-fr-negated-like",
        "praise-in-reply-to-wish",
        "praise-in-reply-to-why",
        "negated-fault-in-reply-to-wish",
        "excess-in-reply-to-wish",
    ],
)
def test_rule_stance_reads_cues(
    text: str, term: str, lang: str, question: str | None, expected: str
) -> None:
    stance, confidence = rule_stance(_features(text, term, lang, question))
    assert stance == expected
    assert 0.0 < confidence < 1.0


def test_rule_stance_is_more_confident_with_a_cue_than_from_the_question_alone() -> None:
    cue = rule_stance(_features("The seeds are too small.", "seeds"))[1]
    question = rule_stance(_features("Small seeds.", "seeds", question="What do you dislike?"))[1]
    assert cue > question


def test_readme_cue_file_example_loads_and_adds_its_language(tmp_path: Path) -> None:
    # The README's example of a user cue file must be a valid one.
    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text(encoding="utf-8")
    section = readme.split("### Stance cues for your language", 1)[1]
    example = section.split("```json", 1)[1].split("```", 1)[0]
    user = tmp_path / "my_cues.json"
    user.write_text(example, encoding="utf-8")
    cues = load_cues(user)
    assert has_stance_cues(cues, "ha") and not has_stance_cues(load_cues(), "ha")
