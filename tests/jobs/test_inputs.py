"""What the jobs read from a workspace: the labeling session's settings come from traits.toml."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

from extractor.jobs.inputs import alias_tuples, gold_examples, session_settings, stance_params
from extractor.workspace.folder import Workspace
from tests.jobs.study import run


def _set(text: str, key: str, value: str) -> str:
    """Replace one ``key = value`` line of traits.toml, keeping its comment."""
    changed, n = re.subn(rf"(?m)^{key} = [^#\n]*?(\s*#|$)", rf"{key} = {value}\1", text)
    assert n == 1, key
    return changed


def test_session_settings_are_the_active_section_of_traits_toml(study: Path) -> None:
    settings = study / "traits.toml"
    text = settings.read_text(encoding="utf-8")
    for key, value in (
        ("retrain_every", "7"),
        ("evaluation_share", "0.25"),
        ("evaluation_min", "4"),
        ("stop_set_size", "120"),
        ("stop_kappa", "0.95"),
        ("stop_rounds", "2"),
        ("subpool", "0"),
    ):
        text = _set(text, key, value)
    settings.write_text(text, encoding="utf-8")
    # the standard library's TOML reader is the reference for what the file says
    active = tomllib.loads(text)["active"]
    with Workspace.open(study) as ws:
        found = session_settings(ws)
    assert found.retrain_every == active["retrain_every"] == 7
    assert found.evaluation_fraction == active["evaluation_share"] == 0.25
    assert found.evaluation_min == active["evaluation_min"]
    assert found.stop_set_size == active["stop_set_size"]
    assert found.kappa_threshold == active["stop_kappa"]
    assert found.kappa_rounds == active["stop_rounds"]
    assert active["subpool"] == 0 and found.subpool is None  # 0 means the whole pool


def test_aliases_and_gold_examples_come_from_the_store(study: Path, tmp_path: Path) -> None:
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    labels = tmp_path / "labels.jsonl"
    labels.write_text(
        '{"respondent": "KA-02", "lang": "en", "sentence": "The grains are too small.", '
        '"mentions": [{"start": 4, "end": 10, "concept": "BTX:0004", "stance": "disliked"}]}\n',
        encoding="utf-8",
    )
    assert run("-w", str(study), "import-labels", str(labels))[0] == 0
    with Workspace.open(study) as ws:
        aliases = alias_tuples(ws)
        gold = gold_examples(ws)
    # the concept list's synonyms column, read by hand: "cooks fast|cook fast|quick to cook"
    assert {text for cid, text, _ in aliases if cid == "BTX:0001"} >= {
        "cooks fast",
        "cook fast",
        "quick to cook",
    }
    assert [(s.text, [(sp.start, sp.end, sp.concept) for sp in spans]) for s, spans in gold] == [
        ("The grains are too small.", [(4, 10, "BTX:0004")])
    ]


def test_stance_params_read_the_cue_file_and_codebook_the_settings_name(study: Path) -> None:
    with Workspace.open(study) as ws:
        unset = stance_params(ws)
    assert unset["cues_path"] is None
    (study / "cues").mkdir()
    (study / "cues" / "mine.json").write_text('{"en": {"wanted": ["we pray for"]}}', "utf-8")
    (study / "codes.csv").write_text("question,direction\nq_bad,dislikes\n", encoding="utf-8")
    settings = study / "traits.toml"
    text = _set(settings.read_text(encoding="utf-8"), "stance_cues", '"cues/mine.json"')
    settings.write_text(_set(text, "questions", '"codes.csv"'), encoding="utf-8")
    # the standard library's TOML reader is the reference for what the file says
    named = tomllib.loads(settings.read_text(encoding="utf-8"))["workspace"]
    with Workspace.open(study) as ws:
        found = stance_params(ws)
    assert found["cues_path"] == str(study / named["stance_cues"])
    assert found["questions"] == {"q_bad": {"direction": "dislikes"}}
