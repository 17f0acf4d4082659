"""Concept curation: accepted aliases exported apart, unlinked terms suggested."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import pandas as pd
import pytest

from extractor.ingest.concepts import load_concept_list
from extractor.jobs.curate import default_min_count, list_concepts
from tests.jobs.study import run
from tests.report.study import VERSION, build_workspace


def test_accepted_alias_is_exported_apart_and_list_reimports(study: Path) -> None:
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    assert (
        run(
            "-w",
            str(study),
            "concepts",
            "accept",
            "boils quickly",
            "BTX:0001",
            "--annotator",
            "ana",
        )[0]
        == 0
    )
    assert run("-w", str(study), "concepts", "export")[0] == 0
    path = study / "exports" / "concepts_with_accepted_aliases.csv"
    frame = pd.read_csv(path, dtype=str, keep_default_na=False)
    row = frame[frame["id"] == "BTX:0001"].iloc[0]
    assert row["accepted_aliases"] == "boils quickly (by ana)"
    assert "boils quickly" not in row["synonyms"]
    original = load_concept_list(study / "concepts.csv")
    again = load_concept_list(path)
    assert {(a.concept_id, a.text) for a in again.aliases} == {
        (a.concept_id, a.text) for a in original.aliases
    }


def test_concepts_suggest_lists_frequent_unlinked_terms(study: Path, tmp_path: Path) -> None:
    extra = tmp_path / "more.csv"
    extra.write_text(
        "respondent,question,answer\n"
        "KA-10,Why?,The colour of the seed coat is nice.\n"
        "KA-11,Why?,I like the colour of the seed coat.\n"
        "KA-12,Why?,Buyers look at the colour first.\n",
        encoding="utf-8",
    )
    labels = tmp_path / "labels.jsonl"
    labels.write_text(
        "\n".join(
            json.dumps(
                {
                    "respondent": r,
                    "lang": "en",
                    "sentence": t,
                    "mentions": [
                        {
                            "start": t.index("colour"),
                            "end": t.index("colour") + 6,
                            "stance": "liked",
                        }
                    ],
                }
            )
            for r, t in (
                ("KA-10", "The colour of the seed coat is nice."),
                ("KA-11", "I like the colour of the seed coat."),
            )
        )
        + "\n",
        encoding="utf-8",
    )
    run("-w", str(study), "add", str(extra))
    run("-w", str(study), "run")
    run("-w", str(study), "import-labels", str(labels))
    run("-w", str(study), "train", "--no-cv")
    code, out = run("-w", str(study), "concepts", "suggest", "--min-count", "1")
    assert code == 0 and "colour" in out


def test_concepts_export_neutralises_formula_cells_and_reimports_them(
    study: Path, tmp_path: Path
) -> None:
    concepts = tmp_path / "risky.csv"
    concepts.write_text(
        "id,label,lang,synonyms,definition\n"
        'BTX:0001,cooking time,en,+fast|cooks fast,"=HYPERLINK(""http://example.invalid"")"\n'
        "BTX:0002,taste,en,-bitter|@sweet,Taste of the porridge.\n",
        encoding="utf-8",
    )
    assert run("-w", str(study), "concepts", "import", str(concepts))[0] == 0
    assert run("-w", str(study), "concepts", "accept", "=1+1", "BTX:0002")[0] == 0
    assert run("-w", str(study), "concepts", "export")[0] == 0
    path = study / "exports" / "concepts_with_accepted_aliases.csv"
    with path.open(newline="", encoding="utf-8") as fh:  # the csv module is the reference
        rows = {r["id"]: r for r in csv.DictReader(fh)}
    # OWASP, "CSV Injection": cells starting with =, +, -, @, tab or CR get a leading quote.
    assert rows["BTX:0001"]["definition"] == '\'=HYPERLINK("http://example.invalid")'
    assert rows["BTX:0001"]["synonyms"] == "'+fast|cooks fast"
    assert rows["BTX:0002"]["synonyms"] == "'-bitter|@sweet"
    assert rows["BTX:0002"]["accepted_aliases"].startswith("'=1+1 (by ")
    again = load_concept_list(path)
    original = load_concept_list(concepts)
    assert {(a.concept_id, a.text, a.kind) for a in again.aliases} == {
        (a.concept_id, a.text, a.kind) for a in original.aliases
    }


def _study_with_one_unlinked_term(study: Path, tmp_path: Path) -> None:
    """Eight respondents; one sentence labels "husk", a trait no concept lists."""
    extra = tmp_path / "husk.csv"
    extra.write_text(
        "respondent,question,answer\n"
        "KA-10,Why?,The husk is hard to remove.\n"
        "KA-11,Why?,I like the husk of this one.\n",
        encoding="utf-8",
    )
    text = "The husk is hard to remove."
    span = {"start": 4, "end": 8, "stance": "disliked"}
    labels = tmp_path / "husk.jsonl"
    labels.write_text(
        json.dumps({"respondent": "KA-10", "lang": "en", "sentence": text, "mentions": [span]})
        + "\n",
        encoding="utf-8",
    )
    assert run("-w", str(study), "add", str(extra))[0] == 0
    assert run("-w", str(study), "import-labels", str(labels))[0] == 0
    assert run("-w", str(study), "run")[0] == 0


def test_concepts_suggest_default_scales_with_a_small_study(study: Path, tmp_path: Path) -> None:
    _study_with_one_unlinked_term(study, tmp_path)
    code, out = run("-w", str(study), "concepts", "suggest")
    assert code == 0, out
    assert "husk" in out and "nothing to suggest" not in out


def test_concepts_suggest_help_states_the_default_rule(
    capsys: pytest.CaptureFixture[str],
) -> None:
    with pytest.raises(SystemExit):
        run("concepts", "suggest", "--help")
    usage = " ".join(capsys.readouterr().out.split())
    assert "2% of the respondents" in usage


def test_concepts_suggest_shows_one_similarity_scale(study: Path, tmp_path: Path) -> None:
    _study_with_one_unlinked_term(study, tmp_path)
    code, out = run("-w", str(study), "concepts", "suggest", "--min-count", "1")
    assert code == 0, out
    assert "by word use" not in out
    header = next(line for line in out.splitlines() if "term" in line and "count" in line)
    assert header.count("probability") == 1


@pytest.mark.parametrize(
    ("respondents", "expected"),
    [(0, 1), (8, 1), (50, 1), (51, 2), (100, 2), (500, 10)],
    ids=["empty", "eight", "fifty", "fifty-one", "hundred", "five-hundred"],
)
def test_default_min_count_is_two_percent_of_respondents(respondents: int, expected: int) -> None:
    assert default_min_count(respondents) == expected


def test_list_concepts_counts_mentions_and_respondents_once_a_model_ran(tmp_path: Path) -> None:
    # The hand-built workspace (tests/report/study.py): KR-01's sentence 2 has predicted
    # BTX:0001 and BTX:0002; KR-02's person label links "grain" to BTX:0003.
    with build_workspace(tmp_path / "ws") as ws:
        listing = list_concepts(ws)
    assert listing.model_version == VERSION
    assert listing.mentions == {"BTX:0001": 1, "BTX:0002": 1, "BTX:0003": 1}
    assert listing.respondents == {"BTX:0001": 1, "BTX:0002": 1, "BTX:0003": 1}
    assert next(c for c in listing.concepts if c.id == "BTX:0003").parents == ("BTX:0001",)


def test_list_concepts_has_no_counts_before_a_model(tmp_path: Path) -> None:
    with build_workspace(tmp_path / "ws", with_model=False) as ws:
        assert list_concepts(ws).mentions is None
