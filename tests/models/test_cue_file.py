"""Tests of extractor.models.cue_file: the packaged cue lexicon and users' cue files."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.models.cue_file import has_stance_cues, load_cues
from extractor.models.stance_features import stance_features
from extractor.models.stance_rules import rule_stance
from tests.models.toy import CUES
from tests.models.toy import mention as _mention


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


def test_readme_cue_file_example_loads_and_adds_its_language(tmp_path: Path) -> None:
    # The README's example of a user cue file must be a valid one.
    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text(encoding="utf-8")
    section = readme.split("### Stance cues for your language", 1)[1]
    example = section.split("```json", 1)[1].split("```", 1)[0]
    user = tmp_path / "my_cues.json"
    user.write_text(example, encoding="utf-8")
    cues = load_cues(user)
    assert has_stance_cues(cues, "ha") and not has_stance_cues(load_cues(), "ha")
