"""The whole job (`traits run`) on the invented study: workbook, version, re-run, labels win."""

from __future__ import annotations

import json
from collections.abc import Callable
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

from extractor.jobs import run as run_job
from extractor.jobs.add import add_interviews
from extractor.types import Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace
from tests.jobs.study import make_study, run
from tests.skos_demo import write_demo_skos


def test_run_writes_workbook_and_model_version(study: Path) -> None:
    code, out = run("-w", str(study), "run")
    assert code == 0, out
    assert "review" in out  # the caution is shown with the results
    book = openpyxl.load_workbook(study / "exports" / "preferred_traits.xlsx")
    assert len(book.sheetnames) >= 5
    with Workspace.open(study) as ws:
        latest = store.latest_model(ws.conn)
        assert latest is not None
        version = latest.version
        assert (study / "models" / version / "meta.json").is_file()
        predicted = store.predictions(ws.conn, version)
        n_sentences = store.counts(ws.conn)["sentences"]
    mentions = [m for p in predicted.values() for m in p.mentions]
    assert mentions
    assert {m["stance"] for m in mentions} <= {"liked", "disliked", "wanted", "neutral"}
    # Every sentence is tagged by the version, and the workbook names that version.
    assert len(predicted) == n_sentences
    evidence = pd.read_excel(study / "exports" / "preferred_traits.xlsx", sheet_name="Mentions")
    assert set(evidence["Model version"].dropna()) == {version}


def test_run_again_reports_nothing_new_and_keeps_labels(study: Path, tmp_path: Path) -> None:
    run("-w", str(study), "run")
    labels = tmp_path / "labels.jsonl"
    labels.write_text(
        json.dumps(
            {
                "respondent": "KA-01",
                "lang": "en",
                "sentence": "It cooks fast and the broth is thick.",
                "mentions": [{"start": 3, "end": 13, "concept": "BTX:0001", "stance": "liked"}],
            }
        )
        + "\n",
        encoding="utf-8",
    )
    assert run("-w", str(study), "import-labels", str(labels))[0] == 0
    code, out = run("-w", str(study), "run")
    assert code == 0 and "No new interviews" in out
    with Workspace.open(study) as ws:
        assert len(store.current_labels(ws.conn)) == 1
        versions = store.models(ws.conn)
        assert len(versions) == 2
    # The run says what the new version learned from, beside what the previous had; the
    # one label is either learned or kept out as part of the evaluation sample.
    first, second = sorted(v.version for v in versions)
    said = " ".join(out.split())
    learned = f"Model version {second} learned from 1 labeled sentence (0 for {first})."
    kept_out = (
        f"Model version {second} learned from 0 labeled sentences (0 for {first})." in said
        and "1 labeled sentence of the evaluation sample is kept out of training" in said
    )
    assert learned in said or kept_out, said


def test_person_labels_override_predictions_in_the_workbook(study: Path, tmp_path: Path) -> None:
    labels = tmp_path / "labels.jsonl"
    labels.write_text(
        json.dumps(
            {
                "respondent": "KA-05",
                "lang": "en",
                "sentence": "We planted after the rains.",
                "mentions": [],
            }
        )
        + "\n"
        + json.dumps(
            {
                "respondent": "KA-02",
                "lang": "en",
                "sentence": "The grains are too small.",
                "mentions": [{"start": 4, "end": 10, "concept": "BTX:0004", "stance": "disliked"}],
            }
        )
        + "\n",
        encoding="utf-8",
    )
    run("-w", str(study), "run")
    run("-w", str(study), "import-labels", str(labels))
    run("-w", str(study), "train", "--no-cv")
    run("-w", str(study), "export")
    frame = pd.read_excel(study / "exports" / "preferred_traits.xlsx", sheet_name="Mentions")
    small = frame[frame["Sentence"] == "The grains are too small."]
    assert list(small["Source"]) == ["person"]
    assert list(small["Concept ID"]) == ["BTX:0004"]
    assert list(small["Stance"]) == ["disliked"]
    assert frame[frame["Sentence"] == "We planted after the rains."].empty


def test_hostile_answer_stays_text_and_pseudonymised_export_hides_ids(
    study: Path, tmp_path: Path
) -> None:
    hostile = tmp_path / "hostile.csv"
    hostile.write_text(
        "respondent,gender,question,answer\n"
        'KA-99,woman,Why?,"=HYPERLINK(""http://example.invalid"",""x"") It cooks fast."\n'
        'KA-98,man,Why?,"Call me on +254 712 345 678, the yield is good."\n',
        encoding="utf-8",
    )
    assert run("-w", str(study), "add", str(hostile))[0] == 0
    assert run("-w", str(study), "run")[0] == 0
    assert run("-w", str(study), "export", "--pseudonymise")[0] == 0
    # The formula must read back as the plain string it was (openpyxl: a formula cell
    # holds a value starting with "=" and data_type "f"; text cells have data_type "s").
    book = openpyxl.load_workbook(study / "exports" / "preferred_traits.xlsx")
    cells = [
        c
        for ws in book
        for row in ws.iter_rows()
        for c in row
        if isinstance(c.value, str) and c.value.startswith("=HYPERLINK")
    ]
    assert cells and all(c.data_type == "s" for c in cells)
    private = openpyxl.load_workbook(study / "exports" / "preferred_traits_pseudonymised.xlsx")
    text = " ".join(str(c.value) for ws in private for row in ws.iter_rows() for c in row)
    for secret in ("KA-98", "KA-99", "KA-01", "712 345 678", "+254"):
        assert secret not in text
    assert "[phone]" in text


def test_first_run_after_add_does_not_say_nothing_is_new(study: Path) -> None:
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    code, out = run("-w", str(study), "run")
    assert code == 0, out
    assert "No new interviews" not in out
    assert "First run: 6 respondents" in out


def test_run_with_nothing_changed_reuses_the_latest_version(study: Path) -> None:
    assert run("-w", str(study), "run")[0] == 0
    workbook = study / "exports" / "preferred_traits.xlsx"
    workbook.unlink()
    code, out = run("-w", str(study), "run")
    assert code == 0, out
    assert "Nothing changed" in out and "--retrain" in out
    with Workspace.open(study) as ws:
        assert len(store.models(ws.conn)) == 1
        version = store.models(ws.conn)[0].version
    assert version in out
    # Still exported, from the version reused.
    frame = pd.read_excel(workbook, sheet_name="Mentions")
    assert set(frame["Model version"].dropna()) == {version}


def test_run_retrain_trains_a_new_version_though_nothing_changed(study: Path) -> None:
    assert run("-w", str(study), "run")[0] == 0
    code, out = run("-w", str(study), "run", "--retrain")
    assert code == 0, out
    assert "Nothing changed" not in out
    with Workspace.open(study) as ws:
        assert len(store.models(ws.conn)) == 2


def _new_interview(study: Path) -> None:
    (study / "interviews" / "more.csv").write_text(
        "respondent,question,answer\nKA-07,Why?,The broth is thick and it cooks fast.\n",
        encoding="utf-8",
    )


def _changed_concept_list(study: Path) -> None:
    path = study / "concepts.csv"
    path.write_text(
        path.read_text(encoding="utf-8") + "BTX:0009,colour,en,seed colour\n", encoding="utf-8"
    )


def _accepted_alias(study: Path) -> None:
    assert run("-w", str(study), "concepts", "accept", "boils quickly", "BTX:0001")[0] == 0


@pytest.mark.parametrize(
    "change",
    [_new_interview, _changed_concept_list, _accepted_alias],
    ids=["new-interview", "changed-concept-list", "accepted-alias"],
)
def test_run_trains_a_new_version_when_an_input_changed(
    study: Path, change: Callable[[Path], None]
) -> None:
    assert run("-w", str(study), "run")[0] == 0
    change(study)
    code, out = run("-w", str(study), "run")
    assert code == 0, out
    assert "Nothing changed" not in out
    with Workspace.open(study) as ws:
        assert len(store.models(ws.conn)) == 2


def test_run_with_a_skos_list_finds_the_mentions_the_csv_list_finds(tmp_path: Path) -> None:
    # The study's list written as SKOS Turtle by rdflib (tests/skos_demo.py); the same
    # run over both must store the same mentions (the demo run was compared the same way).
    csv_root = make_study(tmp_path / "csv")
    skos_root = make_study(tmp_path / "skos")
    write_demo_skos(skos_root / "concepts.csv", skos_root / "concepts.ttl")
    settings = skos_root / "traits.toml"
    text = settings.read_text(encoding="utf-8")
    settings.write_text(text.replace('"concepts.csv"', '"concepts.ttl"', 1), encoding="utf-8")
    found = []
    for root, listed_file in ((csv_root, "concepts.csv"), (skos_root, "concepts.ttl")):
        assert run("-w", str(root), "run")[0] == 0
        with Workspace.open(root) as ws:
            version = store.latest_model(ws.conn)
            assert version is not None
            listed = store.current_concept_version(ws.conn)
            assert listed is not None and listed.path == listed_file
            found.append(
                {sid: p.mentions for sid, p in store.predictions(ws.conn, version.version).items()}
            )
    assert found[0] == found[1]
    assert sum(len(m) for m in found[0].values()) > 0


def test_silent_languages_are_those_where_neither_model_nor_person_found_a_trait(
    tmp_path: Path,
) -> None:
    root = tmp_path / "ws"
    init_workspace(root)
    # Invented answers: 12 Swahili, 10 English and 5 Portuguese (ISO 639-1 sw, en, pt).
    rows = ["respondent,question,answer,language"]
    rows += [f"S{i},Why?,Inaoza haraka baada ya kuvuna {i}.,sw" for i in range(12)]
    rows += [f"E{i},Why?,It cooks fast {i}.,en" for i in range(10)]
    rows += [f"P{i},Why?,Apodrece logo {i}.,pt" for i in range(5)]
    (tmp_path / "answers.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    with Workspace.open(root) as ws:
        add_interviews(ws, [tmp_path / "answers.csv"])
        sentences = store.sentences(ws.conn)
        store.add_model(ws.conn, "v1", "models/v1", {})
        mention = {"start": 3, "end": 13, "concept": "CSV:01", "stance": "liked"}
        unlinked = mention | {"concept": None}
        store.store_predictions(
            ws.conn,
            "v1",
            [
                {"sentence_id": s.id, "mentions": [mention if s.lang == "en" else unlinked]}
                for s in sentences
            ],
        )
        # pt has too few sentences to say anything of; en has the model's linked mentions,
        # sw unlinked ones only, which fill no cell of the workbook
        assert run_job.silent_languages(ws, "v1") == (("sw", 12),)
        first_sw = next(s for s in sentences if s.lang == "sw")
        store.add_label(ws.conn, first_sw.id, [Span(0, 6, "CSV:01", "disliked")], "ana")
        assert run_job.silent_languages(ws, "v1") == ()


def test_run_reads_a_wide_column_the_codebook_names_as_a_question(tmp_path: Path) -> None:
    # `traits run` reads new interview files as `traits add` does: with the codebook.
    ws_root = tmp_path / "ws"
    assert run("init", str(ws_root))[0] == 0
    (ws_root / "questions.csv").write_text(
        "question,text,direction\ndislike_q,What do you dislike about it?,dislikes\n",
        encoding="utf-8",
    )
    (ws_root / "concepts.csv").write_text(
        "id,label,lang,synonyms,parent,definition\nZQX:01,grain size,en,grain|small grain,,\n",
        encoding="utf-8",
    )
    (ws_root / "interviews" / "short.csv").write_text(
        "respondent_id,gender,why_grow,dislike_q\n"
        'VK-01,female,"It grows fast, and we like the small grain.",The grain is small.\n'
        'VK-02,male,"The small grain sells well at the Tessaly market.",Low price.\n',
        encoding="utf-8",
    )
    code, out = run("-w", str(ws_root), "run")
    assert code == 0, out
    with Workspace.open(ws_root) as ws:
        assert store.counts(ws.conn)["answers"] == 4
        assert {key for person in store.respondents(ws.conn) for key in person} == {
            "respondent", "is_group", "gender",
        }  # fmt: skip
