"""Settings: typed defaults, the generated template, and validation on load.

The outside reader is Python's standard-library ``tomllib`` (a TOML 1.0.0 parser,
https://toml.io/en/v1.0.0): the template must parse with it to exactly the defaults,
and the value types the loader accepts are TOML's (integer, float, string, boolean,
array of strings, table).
"""

from __future__ import annotations

import dataclasses
import re
import tomllib
from pathlib import Path
from typing import Any

import pytest

from extractor.errors import WorkspaceError
from extractor.loop import strategies
from extractor.models import tagger, tagger_training
from extractor.types import QuestionCode
from extractor.workspace import settings
from extractor.workspace.settings import (
    SECTION_ORDER,
    SECTIONS,
    ActiveSettings,
    MetadataSettings,
    Settings,
    TaggerSettings,
    WorkspaceSettings,
    load_settings,
    render_template,
)


def _as_toml_data(settings: Settings) -> dict[str, Any]:
    """Return the settings as tomllib would read them: tuples are arrays (lists)."""

    def plain(value: Any) -> Any:
        if isinstance(value, tuple):
            return [plain(v) for v in value]
        if isinstance(value, dict):
            return {k: plain(v) for k, v in value.items()}
        return value

    return plain(dataclasses.asdict(settings))


def _write(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "traits.toml"
    path.write_text(text, encoding="utf-8")
    return path


# --------------------------------------------------------------------------- the template


def test_template_parses_with_tomllib_to_exactly_the_defaults() -> None:
    parsed = tomllib.loads(render_template())
    assert parsed == _as_toml_data(Settings())


def test_template_loads_back_to_the_defaults(tmp_path: Path) -> None:
    assert load_settings(_write(tmp_path, render_template())) == Settings()


def test_template_round_trips_changed_settings(tmp_path: Path) -> None:
    changed = Settings(
        workspace=WorkspaceSettings(languages=("sw", "en"), interviews='say "hi"\\there'),
        columns={"respondent": "Code", "questions": ["Why?", "Which?"]},
        tagger=TaggerSettings(algorithm="lbfgs", c1=0.5, max_iterations=100),
        active=ActiveSettings(subpool=0, stop_kappa=1.0),
    )
    text = render_template(changed)
    assert tomllib.loads(text) == _as_toml_data(changed)
    assert load_settings(_write(tmp_path, text)) == changed


def test_template_comments_every_setting() -> None:
    text = render_template()
    for name, kind in SECTIONS.items():
        assert f"[{name}]" in text
        for spec in dataclasses.fields(kind):
            line = next(x for x in text.splitlines() if x.startswith(f"{spec.name} = "))
            assert re.search(r"\s# \S", line), line


def test_template_lists_the_sections_in_file_order() -> None:
    headers = re.findall(r"^\[(\w+)\]$", render_template(), flags=re.MULTILINE)
    assert tuple(headers) == SECTION_ORDER


# --------------------------------------------------------------------------- loading


def test_missing_settings_take_the_defaults(tmp_path: Path) -> None:
    found = load_settings(_write(tmp_path, "[linking]\nthreshold = 0.5\n"))
    assert found == dataclasses.replace(
        Settings(), linking=dataclasses.replace(Settings().linking, threshold=0.5)
    )


def test_whole_numbers_are_accepted_for_decimals_and_become_floats(tmp_path: Path) -> None:
    found = load_settings(_write(tmp_path, "[tagger]\nc2 = 1\n[active]\nsubpool = 0\n"))
    assert found.tagger.c2 == 1.0 and isinstance(found.tagger.c2, float)
    assert found.active.subpool == 0


def test_lists_become_tuples(tmp_path: Path) -> None:
    found = load_settings(_write(tmp_path, '[export]\ngroup_by = ["district"]\n'))
    assert found.export.group_by == ("district",)


def test_columns_are_a_free_mapping(tmp_path: Path) -> None:
    found = load_settings(_write(tmp_path, '[columns]\nanswer = "Verbatim"\n'))
    assert dict(found.columns) == {"answer": "Verbatim"}


def test_bad_toml_is_reported_with_the_file(tmp_path: Path) -> None:
    path = _write(tmp_path, "[tagger\nc1 = ")
    with pytest.raises(WorkspaceError, match="not valid TOML") as caught:
        load_settings(path)
    assert str(path) in str(caught.value)


@pytest.mark.parametrize(
    ("text", "section", "key", "allowed"),
    [
        ("[tagger]\nc1 = 0.1\n[taggr]\nc2 = 1.0\n", "[taggr]", None, "[tagger]"),
        ("columns = 3\n", "[columns]", None, "section"),
        ("[tagger]\nmax_iteration = 50\n", "[tagger]", "max_iteration", "max_iterations"),
        ('[active]\nsubpool = "many"\n', "[active]", "subpool", "whole number"),
        ("[active]\nbatch_size = true\n", "[active]", "batch_size", "whole number"),
        ("[active]\nbatch_size = -5\n", "[active]", "batch_size", "0 or more"),
        ("[tagger]\nc2 = true\n", "[tagger]", "c2", "number"),
        ("[linking]\nthreshold = 1.5\n", "[linking]", "threshold", "between 0 and 1"),
        ("[export]\nmin_confidence = -0.1\n", "[export]", "min_confidence", "0 or more"),
        ("[workspace]\ndefault_language = 1\n", "[workspace]", "default_language", "text"),
        ('[export]\ngroup_by = "gender"\n', "[export]", "group_by", "list of texts"),
        ("[workspace]\nlanguages = [1, 2]\n", "[workspace]", "languages", "list of texts"),
        ('[active]\nstrategy = "fastest"\n', "[active]", "strategy", "one of combined"),
        ('[tagger]\nalgorithm = "adam"\n', "[tagger]", "algorithm", "one of lbfgs"),
        ('[tagger]\nsilver_filter = "some"\n', "[tagger]", "silver_filter", "one of all"),
    ],
    ids=[
        "unknown-section",
        "value-for-section",
        "unknown-key",
        "text-for-whole-number",
        "bool-for-whole-number",
        "negative",
        "bool-for-decimal",
        "share-above-one",
        "share-below-zero",
        "number-for-text",
        "text-for-list",
        "numbers-in-list",
        "unknown-strategy",
        "unknown-algorithm",
        "unknown-silver-filter",
    ],
)
def test_bad_setting_is_one_sentence_naming_file_section_and_key(
    tmp_path: Path, text: str, section: str, key: str | None, allowed: str
) -> None:
    path = _write(tmp_path, text)
    with pytest.raises(WorkspaceError) as caught:
        load_settings(path)
    message = str(caught.value)
    assert message.startswith(f"{path}: ")
    assert section in message and allowed in message
    if key is not None:
        assert re.search(rf"\b{key}\b", message)
    # one sentence: a single line, one full stop at the end and none before a new one
    assert "\n" not in message and message.endswith(".")
    assert not re.search(r"\.\s+[A-Z]", message)


def test_bad_value_names_the_default(tmp_path: Path) -> None:
    with pytest.raises(WorkspaceError, match=r'default \["gender", "sex"'):
        load_settings(_write(tmp_path, "[export]\ngroup_by = 3\n"))


def test_metadata_tables_round_trip_through_the_template(tmp_path: Path) -> None:
    changed = Settings(
        metadata=MetadataSettings(
            columns={"sex": "gender", "Job title": "role"},
            values={"role": {"agricultrice": "farmer", 'say "x"': "y"}},
            merge_spellings=False,
        )
    )
    text = render_template(changed)
    assert tomllib.loads(text) == _as_toml_data(changed)
    assert load_settings(_write(tmp_path, text)) == changed


@pytest.mark.parametrize(
    ("text", "allowed"),
    [
        ('[metadata]\ncolumns = { sex = { F = "female" } }\n', "table of texts"),
        ("[metadata]\nvalues = { gender = 3 }\n", "table of tables of texts"),
        ('[metadata]\ncolumns = ["sex"]\n', "table of texts"),
    ],
    ids=["nested-columns", "flat-values", "list-for-table"],
)
def test_bad_metadata_table_is_one_sentence(tmp_path: Path, text: str, allowed: str) -> None:
    with pytest.raises(WorkspaceError, match=allowed):
        load_settings(_write(tmp_path, text))


def test_choices_are_the_ones_the_models_and_the_loop_accept() -> None:
    assert settings.ALGORITHMS == tagger.ALGORITHMS
    assert settings.SILVER_FILTERS == tagger_training.SILVER_FILTERS
    assert settings.STRATEGIES == tuple(sorted(strategies.STRATEGIES))


@pytest.mark.parametrize(
    "data",
    ["[workspace]\n# Ségou\n".encode("cp1252"), bytes(range(256)), "[tagger]\n".encode("utf-16")],
    ids=["cp1252", "random-bytes", "utf-16"],
)
def test_settings_not_utf8_name_the_file_and_line(tmp_path: Path, data: bytes) -> None:
    path = tmp_path / "traits.toml"
    path.write_bytes(data)
    with pytest.raises(WorkspaceError, match=r"traits.toml, line \d+: the file is not UTF-8"):
        load_settings(path)


def test_codebook_entries_are_checked_and_typed(tmp_path: Path) -> None:
    text = (
        '[codebook]\nq5_dislike = "dislikes"\n'
        'reason_preferred = { text = "Why did you prefer it?", direction = "likes" }\n'
    )
    found = load_settings(_write(tmp_path, text))
    assert found.codebook["q5_dislike"] == QuestionCode("q5_dislike", None, "dislikes")
    assert found.codebook["reason_preferred"].text == "Why did you prefer it?"


@pytest.mark.parametrize(
    "line",
    ['q5 = "hates"', 'q5 = { direction = "likes", note = "x" }', "q5 = 3"],
    ids=["unknown-direction", "unknown-key", "not-text"],
)
def test_codebook_bad_entries_name_the_key_and_the_directions(tmp_path: Path, line: str) -> None:
    with pytest.raises(WorkspaceError, match=r"\[codebook\] q5 must be one of likes, dislikes"):
        load_settings(_write(tmp_path, f"[codebook]\n{line}\n"))
