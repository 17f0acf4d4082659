"""The ``traits label`` command over a pipe: what it prints around the labeling screen."""

from __future__ import annotations

import json
import sqlite3
from pathlib import Path

import pytest

from extractor.report.results import respondent_frame
from extractor.workspace.folder import Workspace
from tests.jobs.study import label_line, run


def test_label_says_saved_once_on_quit(study: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    code, out = run(
        "-w", str(study), "label", "--annotator", "tester", stdin="n\nq\n", monkeypatch=monkeypatch
    )
    assert code == 0, out
    assert out.count("Saved") == 1
    assert "Saved: 1 labels this session, 1 in total, 0 skipped." in out


def _dump(root: Path) -> list[tuple[object, ...]]:
    with sqlite3.connect(root / "traits.sqlite") as conn:
        return [
            tuple(row)
            for table in ("sources", "answers", "sentences", "labels")
            for row in conn.execute(f"SELECT * FROM {table} ORDER BY rowid")  # noqa: S608
        ]


REFUSED = {
    "unknown-concept": (
        {"implicit": [{"concept": "NOPE:9999", "stance": "liked"}]},
        "labels.jsonl, line 2: concept 'NOPE:9999' is not in the workspace's concept list",
    ),
    "bad-language": (
        {"lang": "klingon!!"},
        "labels.jsonl, line 2: language 'klingon!!' is not a BCP 47 tag",
    ),
    "old-format": (
        {"text": "x", "spans": []},
        "labels.jsonl, line 2: this line is in the label format of earlier versions",
    ),
}


@pytest.mark.parametrize(("extra", "message"), REFUSED.values(), ids=REFUSED.keys())
def test_import_labels_refuses_a_bad_line_in_one_sentence(
    study: Path, extra: dict[str, object], message: str
) -> None:
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    good = label_line("KA-01", "It cooks fast.", [])
    bad = json.loads(label_line("KA-09", "The broth is thick.", []))
    if "text" in extra:
        bad = {"respondent": "KA-09"}
    path = study / "labels.jsonl"
    path.write_text(good + "\n" + json.dumps(bad | extra) + "\n", encoding="utf-8")
    before = _dump(study)
    code, out = run("-w", str(study), "import-labels", str(path))
    assert code == 1 and message in " ".join(out.split())
    assert "Traceback" not in out and len(out.strip().splitlines()) <= 3
    assert _dump(study) == before


def test_convert_labels_writes_a_file_that_imports(study: Path) -> None:
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    old = study / "old.jsonl"
    span = {"start": 3, "end": 13, "concept": "BTX:0001", "stance": "liked"}
    old.write_text(
        json.dumps({"respondent": "KA-01", "text": "It cooks fast.", "spans": [span]}) + "\n",
        encoding="utf-8",
    )
    new = study / "new.jsonl"
    code, out = run("convert-labels", str(old), str(new))
    assert code == 0 and "Wrote 1 labeled sentences" in out
    assert json.loads(new.read_text(encoding="utf-8"))["mentions"] == [span]
    code, out = run("convert-labels", str(old), str(new))
    assert code == 1 and "exists already" in out
    code, out = run("-w", str(study), "import-labels", str(new))
    assert code == 0 and "1 labels (1 spans, 0 implicit traits)" in out


def test_label_screen_describes_a_respondent_as_the_workbook_does(
    study: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # One invented respondent whose file names the columns sex/occupation, codes F.
    market = study / "interviews" / "market.csv"
    market.write_text(
        "respondent,sex,occupation,language,question,answer\n"
        'OMB-901,F,trader,en,Why do you buy it?,"I sell it because it cooks fast."\n',
        encoding="utf-8",
    )
    assert run("-w", str(study), "add", str(market))[0] == 0
    code, out = run(
        "-w", str(study), "label", "--annotator", "Test", stdin="q\n", monkeypatch=monkeypatch
    )
    assert code == 0, out
    who = next(line for line in out.splitlines() if line.startswith("who"))
    # The demo's [metadata] settings read sex as gender and occupation as role, and F as
    # female (F/M gender codes: common practice in survey codebooks).
    assert "gender female" in who and "role trader" in who, who
    assert "sex" not in who and "occupation" not in who, who
    with Workspace.open(study) as ws:
        row = respondent_frame(ws).set_index("respondent").loc["OMB-901"]
    assert (row["gender"], row["role"]) == ("female", "trader")
    assert f"gender {row['gender']}" in who and f"role {row['role']}" in who


def test_label_screen_shows_the_codebook_wording_of_a_field_name(
    study: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # A survey export names its question by a field name; the codebook gives its wording.
    survey = study / "interviews" / "survey.csv"
    survey.write_text(
        survey.read_text(encoding="utf-8").replace("Why do you grow it?", "why_grow"), "utf-8"
    )
    (study / "questions.csv").write_text(
        "question,text,direction\nwhy_grow,Why do you grow this variety?,likes\n", "utf-8"
    )
    assert run("-w", str(study), "add", str(survey))[0] == 0
    code, out = run(
        "-w", str(study), "label", "--annotator", "Test", stdin="q\n", monkeypatch=monkeypatch
    )
    assert code == 0, out
    asked = next(line for line in out.splitlines() if line.startswith("asked"))
    assert "Why do you grow this variety? (why_grow)" in asked, asked
