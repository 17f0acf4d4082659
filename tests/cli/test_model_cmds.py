"""`traits export` from the command line: one sentence on bad input, the settings floor."""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

from extractor.jobs import run as run_job
from extractor.workspace import store
from tests.jobs.study import label_line, labeled, run
from tests.report.study import VERSION, build_workspace


def test_names_file_not_in_utf8_is_one_sentence(study: Path) -> None:
    assert run("-w", str(study), "run")[0] == 0
    (study / "names.txt").write_bytes("Zélie Ombara\n".encode("cp1252"))
    code, out = run("-w", str(study), "export", "--pseudonymise", "--names-file", "names.txt")
    assert code == 1 and "not UTF-8" in out and "Traceback" not in out


def test_other_formats_apply_the_settings_confidence_floor(study: Path, tmp_path: Path) -> None:
    assert run("-w", str(study), "run")[0] == 0
    settings = study / "traits.toml"
    settings.write_text(
        settings.read_text(encoding="utf-8").replace(
            "min_confidence = 0.0", "min_confidence = 1.0"
        ),
        encoding="utf-8",
    )
    out_file = tmp_path / "m.csv"
    code, out = run("-w", str(study), "export", "--format", "csv", "--out", str(out_file))
    assert code == 0, out
    assert len(pd.read_csv(out_file)) == 0  # no prediction is fully certain


def test_models_table_says_matched_by_concept_list_not_silver(study: Path) -> None:
    assert run("-w", str(study), "run")[0] == 0
    code, out = run("-w", str(study), "models")
    text = " ".join(out.split())
    assert code == 0, out
    assert "silver" not in text
    assert "matched by concept list" in text
    assert (
        "Model versions (in models/) hold words from the interviews" in text
        and "personal data" in text
    )


def _tagged_by_hand(root: Path) -> Path:
    """The hand-built workspace with its recorded version tagged on every sentence."""
    ws = build_workspace(root)
    ids = [s.id for s in store.sentences(ws.conn)]
    rows = [{"sentence_id": i, "path_prob": 0.9, "mentions": []} for i in ids]
    store.store_predictions(ws.conn, VERSION, rows)
    ws.close()
    return root


def test_export_takes_the_model_version_by_its_own_option(tmp_path: Path) -> None:
    root = _tagged_by_hand(tmp_path / "ws")
    out_file = tmp_path / "m.jsonl"
    code, out = run(
        "-w", str(root), "export", "--format", "jsonl", "--model-version", VERSION,
        "--out", str(out_file),
    )  # fmt: skip
    assert code == 0, out
    assert out_file.is_file()
    code, out = run("-w", str(root), "export", "--model-version", "v999-unknown")
    assert code == 1 and "v999-unknown" in out and "traits models" in out


def test_export_has_no_version_option_of_its_own(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # --version belongs to the program (it prints the program's version), not to export.
    root = _tagged_by_hand(tmp_path / "ws")
    with pytest.raises(SystemExit) as stopped:
        run("-w", str(root), "export", "--version", VERSION)
    assert stopped.value.code == 2
    assert "unrecognized arguments: --version" in capsys.readouterr().err


@pytest.mark.parametrize("fmt", ["xlsx", "csv", "jsonl", "jsonld"])
def test_export_before_any_model_says_to_run_first(ws_without_model: Path, fmt: str) -> None:
    code, out = run("-w", str(ws_without_model), "export", "--format", fmt)
    assert code == 1
    assert "no model" in out.lower() and "traits run" in out
    assert "lacks the column" not in out and "Traceback" not in out


@pytest.fixture
def ws_without_model(study: Path) -> Path:
    """The study with its answers and concept list added, before any model or label."""
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    return study


def test_run_says_what_add_says_of_the_new_files_it_reads(study: Path) -> None:
    # A survey export names its question by a field name: `traits run` reading it from
    # interviews/ says so, as `traits add` does, once (not again when nothing is new).
    (study / "interviews" / "round2.csv").write_text(
        "respondent,question,answer\nKA-07,q5_dislike,The grains are too small.\n",
        encoding="utf-8",
    )
    code, out = run("-w", str(study), "run")
    flat = " ".join(out.split())
    assert code == 0, out
    assert "note: 1 question tells stance nothing: q5_dislike (1 answer)" in flat
    assert "Languages of the stored sentences: en 13" in flat
    code, out = run("-w", str(study), "run")
    assert code == 0 and "stance nothing" not in out


def test_run_leaves_imported_lists_in_the_interviews_folder_out_of_the_interviews(
    study: Path, tmp_path: Path
) -> None:
    # A new user keeps every file of the study together: the trait list imported from
    # interviews/, and a copy of the variety list there too (same content, another path).
    (study / "concepts.csv").rename(study / "interviews" / "trait_list.csv")
    varieties = tmp_path / "varieties.csv"
    varieties.write_text("id,label,lang,synonyms\nVAR:01,Kibanda,en,\n", encoding="utf-8")
    (study / "interviews" / "my_varieties.csv").write_bytes(varieties.read_bytes())
    listed = str(study / "interviews" / "trait_list.csv")
    assert run("-w", str(study), "concepts", "import", listed)[0] == 0
    assert run("-w", str(study), "concepts", "import", str(varieties), "--varieties")[0] == 0
    code, out = run("-w", str(study), "run")
    flat = " ".join(out.split())
    assert code == 0, out
    assert "First run: 6 respondents" in flat
    assert "interviews/trait_list.csv is the workspace's concept list" in flat
    assert "interviews/my_varieties.csv is the workspace's variety list" in flat
    # Neither is the list traits.toml names, so a run would not import an edit of them.
    assert (
        "import changes to this one with `traits concepts import interviews/trait_list.csv`" in flat
    )
    assert "`traits concepts import interviews/my_varieties.csv --varieties`" in flat


def test_export_names_the_respondent_columns_it_does_not_compare(study: Path) -> None:
    # A survey export with a region column (not among the default group_by) and a name
    # column (identifying, so never offered for comparison). Places and names invented.
    survey = study / "interviews" / "survey.csv"
    lines = survey.read_text(encoding="utf-8").splitlines()
    rows = [lines[0] + ",region,respondent_name"]
    rows += [
        f"{line},{'Lokindo' if i % 2 else 'Mbelo'},Person {i}" for i, line in enumerate(lines[1:])
    ]
    survey.write_text("\n".join(rows) + "\n", encoding="utf-8")
    code, out = run("-w", str(study), "run")
    flat = " ".join(out.split())
    assert code == 0, out
    assert "note: region (2 values) is not compared between groups" in flat
    assert 'add "region" to group_by under [export]' in flat
    assert "respondent_name" not in flat
    code, out = run("-w", str(study), "export", "--group-by", "gender,region")
    flat = " ".join(out.split())
    assert code == 0 and "region (2 values)" not in flat
    # role is left out of this export's comparisons, so it is named now
    assert "role (4 values) is not compared" in flat


def test_run_names_a_language_where_no_trait_was_found(
    study: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(run_job, "silent_languages", lambda ws, version: (("sw", 30),))
    code, out = run("-w", str(study), "run")
    flat = " ".join(out.split())
    assert code == 0, out
    assert "note: No trait was linked to a concept in any of the 30 sw sentences" in flat
    assert "Label some of them (`traits label`), or add sw synonyms" in flat


def test_run_imports_a_list_traits_toml_names_in_interviews_and_reads_no_answers_from_it(
    study: Path,
) -> None:
    (study / "concepts.csv").rename(study / "interviews" / "trait_list.csv")
    settings = study / "traits.toml"
    settings.write_text(
        settings.read_text(encoding="utf-8").replace(
            'concepts = "concepts.csv"', 'concepts = "interviews/trait_list.csv"'
        ),
        encoding="utf-8",
    )
    code, out = run("-w", str(study), "run")
    flat = " ".join(out.split())
    assert code == 0, out
    assert "First run: 6 respondents" in flat
    code, status = run("-w", str(study), "status", "--json")
    assert json.loads(status)["concepts"] == 8  # the list was imported by the run
    assert "interviews/trait_list.csv is the workspace's concept list" in flat
    assert "imports changes only" not in flat  # the run imports this one itself


def test_first_run_says_once_that_a_language_has_no_stance_cues(tmp_path: Path) -> None:
    # A fresh workspace whose answers are in Hausa (ISO 639-1 'ha'), a language the
    # packaged stance cues do not cover: the run reads the files as `traits add` would
    # and then trains; the lack of cues is one note, not one from each step.
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    (ws / "interviews" / "round1.csv").write_text(
        "respondent,question,answer,language\n"
        "DK-01,Me yasa?,Ina son wannan iri saboda yana girma da sauri.,ha\n"
        "DK-02,Me yasa?,Bana son shi saboda yana da daci sosai.,ha\n"
        "DK-03,Me yasa?,Yana girma da sauri kuma yana da dadi.,ha\n",
        encoding="utf-8",
    )
    (ws / "concepts.csv").write_text(
        "id,label,lang,synonyms,parent,definition\n"
        "ZQX:01,early maturity,en,grows fast,,\n"
        "ZQX:01,girma da sauri,ha,yana girma da sauri,,\n"
        "ZQX:02,bitterness,en,bitter,,\n"
        "ZQX:02,daci,ha,yana da daci,,\n",
        encoding="utf-8",
    )
    code, out = run("-w", str(ws), "run")
    flat = " ".join(out.split())
    assert code == 0, out
    assert "Languages of the stored sentences: ha 3" in flat
    assert "note: ha has no spaCy pipeline" in flat  # what else it lacks is still said
    assert "Answers in ha have neither stance cue words nor stance labels" in flat
    assert flat.count("stance cue") == 1, out


def test_train_says_labels_replace_its_mentions_in_the_workbook_only_once_there_are_labels(
    study: Path,
) -> None:
    # A new user saw "0 not linked to a concept" from train and "Mentions not linked: 1"
    # in the workbook: their own label without a concept counts there, not in train's
    # count of the model's mentions.
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    code, out = run("-w", str(study), "train", "--no-cv")
    assert code == 0, out
    assert "instead of the model's mentions" not in " ".join(out.split())
    labels = study / "labels.jsonl"
    labels.write_text(labeled("KA-01", "It cooks fast.") + "\n", encoding="utf-8")
    assert run("-w", str(study), "import-labels", str(labels))[0] == 0
    code, out = run("-w", str(study), "train", "--no-cv")
    assert code == 0, out
    assert "the workbook shows your labels instead of the model's mentions" in " ".join(out.split())


def _about(path: Path) -> dict[str, str]:
    sheet = openpyxl.load_workbook(path, read_only=True)["About"]
    return {str(row[0]): str(row[1]) for row in sheet.iter_rows(values_only=True) if row[0]}


def test_pseudonymised_export_says_once_when_no_phone_region_is_known(tmp_path: Path) -> None:
    # The hand-built workspace's answers are tagged "en" and traits.toml names no
    # phone_regions: no country's national phone plan can be screened.
    root = _tagged_by_hand(tmp_path / "ws")
    for argv in (["export", "--pseudonymise"], ["report"]):
        code, out = run("-w", str(root), *argv)
        flat = " ".join(out.split())
        assert code == 0, out
        assert flat.count("No phone region is known") == 1, argv
        assert 'under [export] in traits.toml, e.g. phone_regions = ["KE"]' in flat
    about = _about(root / "exports" / "preferred_traits_pseudonymised.xlsx")
    assert "8 to 15 digits written in groups" in about["Phone formats screened"]
    assert "no national numbering plan" in about["Phone formats screened"]
    code, out = run("-w", str(root), "export")
    assert code == 0 and "phone region" not in out


def test_pseudonymised_export_names_the_phone_regions_it_screened(tmp_path: Path) -> None:
    root = _tagged_by_hand(tmp_path / "ws")
    settings = root / "traits.toml"
    text = settings.read_text(encoding="utf-8")
    settings.write_text(
        text.replace("phone_regions = []", 'phone_regions = ["MZ"]'), encoding="utf-8"
    )
    code, out = run("-w", str(root), "export", "--pseudonymise")
    assert code == 0 and "phone region" not in out
    about = _about(root / "exports" / "preferred_traits_pseudonymised.xlsx")
    assert "national numbering plans of MZ" in about["Phone formats screened"]


def test_run_with_no_trait_anywhere_writes_an_empty_workbook(tmp_path: Path) -> None:
    # Every sentence labelled "no trait here", and the model finds none: the run used to
    # stop at "The mentions table lacks the column(s) respondent, ...; it has none."
    root = tmp_path / "ws"
    assert run("init", str(root))[0] == 0
    answers = root / "interviews" / "a.csv"
    answers.write_text(
        "respondent,gender,question,answer\n"
        "R-01,female,Why?,We plant it near the river.\n"
        "R-02,male,Why?,My uncle gave it to me.\n",
        encoding="utf-8",
    )
    (root / "list.csv").write_text("id,label\nXQ:1,striga resistance\n", encoding="utf-8")
    labels = root / "labels.jsonl"
    labels.write_text(
        "".join(
            label_line(r, text, []) + "\n"
            for r, text in (
                ("R-01", "We plant it near the river."),
                ("R-02", "My uncle gave it to me."),
            )
        ),
        encoding="utf-8",
    )
    assert run("-w", str(root), "concepts", "import", str(root / "list.csv"))[0] == 0
    assert run("-w", str(root), "import-labels", str(labels))[0] == 0
    code, out = run("-w", str(root), "run")
    assert code == 0, out
    sheet = pd.read_excel(root / "exports" / "preferred_traits.xlsx", sheet_name="Mentions")
    assert len(sheet) == 0 and "Respondent" in sheet.columns
