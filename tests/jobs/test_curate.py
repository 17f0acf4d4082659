"""Concept curation: accepted aliases exported apart, unlinked terms suggested."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import pandas as pd

from extractor.ingest.concepts import load_concept_list
from tests.jobs.study import run


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
                    "text": t,
                    "spans": [
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
