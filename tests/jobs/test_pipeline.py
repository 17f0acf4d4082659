"""The whole job on a small invented workspace: run, labels win, re-run, label over a pipe."""

from __future__ import annotations

import io
import json
from pathlib import Path

import openpyxl
import pandas as pd
import pytest
from rich.console import Console

from extractor.cli.main import main
from extractor.workspace import store
from extractor.workspace.folder import Workspace

ANSWERS = [
    ("KA-01", "woman", "farmer", "It cooks fast and the broth is thick. I like the taste."),
    ("KA-02", "man", "trader", "The grains are too small. Buyers want big grains."),
    ("KA-03", "woman", "consumer", "It does not cook fast. The taste is bitter."),
    ("KA-04", "man", "farmer", "I wish it matured earlier. The yield is good."),
    ("KA-05", "woman", "processor", "Weevils eat it in the store. We planted after the rains."),
    ("KA-06", "man", "farmer", "Good yield even in drought. It cooks fast."),
]
CONCEPTS = (
    "id,label,lang,synonyms\n"
    "BTX:0001,cooking time,en,cooks fast|cook fast|quick to cook\n"
    "BTX:0002,broth thickness,en,broth|thick broth\n"
    "BTX:0003,taste,en,flavour|tasty\n"
    "BTX:0004,grain size,en,small grains|big grains|grain size\n"
    "BTX:0005,yield,en,harvest\n"
    "BTX:0006,earliness,en,matures early|matured earlier\n"
    "BTX:0007,storability,en,weevils|stores well\n"
    "BTX:0008,drought tolerance,en,drought\n"
)


def run(
    *argv: str, stdin: str | None = None, monkeypatch: pytest.MonkeyPatch | None = None
) -> tuple[int, str]:
    if stdin is not None and monkeypatch is not None:
        monkeypatch.setattr("sys.stdin", io.StringIO(stdin))
    buffer = io.StringIO()
    code = main(list(argv), console=Console(file=buffer, width=160, force_terminal=False))
    return code, buffer.getvalue()


@pytest.fixture
def study(tmp_path: Path) -> Path:
    root = tmp_path / "study"
    (root / "interviews").mkdir(parents=True)
    lines = ["respondent,gender,role,language,question,answer"]
    lines += [f'{r},{g},{role},en,Why do you grow it?,"{a}"' for r, g, role, a in ANSWERS]
    (root / "interviews" / "survey.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    (root / "concepts.csv").write_text(CONCEPTS, encoding="utf-8")
    assert run("init", str(root))[0] == 0
    return root


def test_run_writes_workbook_and_model_version(study: Path) -> None:
    code, out = run("-w", str(study), "run")
    assert code == 0, out
    assert "review" in out  # the caution is shown with the results
    book = openpyxl.load_workbook(study / "exports" / "preferred_traits.xlsx")
    assert len(book.sheetnames) >= 5
    with Workspace.open(study) as ws:
        version = store.latest_model(ws.conn).version
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
                "text": "It cooks fast and the broth is thick.",
                "spans": [{"start": 3, "end": 13, "concept": "BTX:0001", "stance": "liked"}],
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
        assert len(store.models(ws.conn)) == 2


def test_person_labels_override_predictions_in_the_workbook(study: Path, tmp_path: Path) -> None:
    labels = tmp_path / "labels.jsonl"
    labels.write_text(
        json.dumps(
            {
                "respondent": "KA-05",
                "lang": "en",
                "text": "We planted after the rains.",
                "spans": [],
            }
        )
        + "\n"
        + json.dumps(
            {
                "respondent": "KA-02",
                "lang": "en",
                "text": "The grains are too small.",
                "spans": [{"start": 4, "end": 10, "concept": "BTX:0004", "stance": "disliked"}],
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


def test_label_over_a_pipe_stores_one_label_per_enter(
    study: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    run("-w", str(study), "run")
    code, out = run(
        "-w",
        str(study),
        "label",
        "--annotator",
        "tester",
        stdin="\n" * 3 + "q\n",
        monkeypatch=monkeypatch,
    )
    assert code == 0, out
    with Workspace.open(study) as ws:
        labels = store.current_labels(ws.conn)
    assert len(labels) == 3 and {v.annotator for v in labels.values()} == {"tester"}


def test_train_without_concepts_or_labels_says_what_to_do(tmp_path: Path) -> None:
    root = tmp_path / "empty"
    run("init", str(root))
    code, out = run("-w", str(root), "train")
    assert code == 1 and "concepts import" in out


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


def test_accepted_alias_is_exported_apart_and_list_reimports(study: Path) -> None:
    from extractor.ingest.concepts import load_concept_list

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
    assert {(a["concept_id"], a["text"]) for a in again.aliases} == {
        (a["concept_id"], a["text"]) for a in original.aliases
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


@pytest.mark.parametrize(
    "name",
    ["tagger.crfsuite", "meta.json", "linker/linker.json", "linker/context.skops"],
    ids=["crf-model", "meta", "linker", "linker-skops"],
)
def test_corrupt_model_file_is_reported_not_loaded(study: Path, name: str) -> None:
    run("-w", str(study), "run")
    with Workspace.open(study) as ws:
        version = store.latest_model(ws.conn).version
    (study / "models" / version / name).write_bytes(b"\x00 not a model file")
    code, out = run("-w", str(study), "label", "--annotator", "x")
    assert code == 1
    assert "Traceback" not in out and "train" in out  # every message says to (re)train


PHRASES = {
    "cooks fast": "BTX:0001",
    "broth": "BTX:0002",
    "taste": "BTX:0003",
    "grains": "BTX:0004",
    "yield": "BTX:0005",
    "matured earlier": "BTX:0006",
    "Weevils": "BTX:0007",
    "drought": "BTX:0008",
}


def labeled(respondent: str, text: str) -> str:
    """A gold JSON line marking every phrase of PHRASES found in the text."""
    spans = [
        {"start": text.index(p), "end": text.index(p) + len(p), "concept": c, "stance": "liked"}
        for p, c in PHRASES.items()
        if p in text
    ]
    return json.dumps({"respondent": respondent, "lang": "en", "text": text, "spans": spans})


def test_evaluate_prints_tables_and_says_when_the_version_is_stale(
    study: Path, tmp_path: Path
) -> None:
    assert run("-w", str(study), "run")[0] == 0  # version 1, trained before any label
    lines = []
    for respondent, _, _, answer in ANSWERS:
        for sentence in answer.split(". "):
            lines.append(
                labeled(respondent, sentence if sentence.endswith(".") else sentence + ".")
            )
    extra = ["the yield is good", "the grains are big", "the taste is sweet", "it cooks fast"]
    lines += [labeled(f"KB-{k:02d}", f"In Vesk {k} {extra[k % 4]}.") for k in range(14)]
    labels = tmp_path / "labels.jsonl"
    labels.write_text("\n".join(lines) + "\n", encoding="utf-8")
    code, out = run("-w", str(study), "import-labels", str(labels))
    assert code == 0, out
    code, out = run("-w", str(study), "evaluate", "--folds", "3")
    assert code == 0, out
    assert "3-fold cross-validation" in out and "span (strict)" in out
    assert "gold \\ predicted" in out  # the stance confusion table
    assert "learned from 0 labeled sentences" in out and "traits train" in out
    assert run("-w", str(study), "train")[0] == 0
    code, out = run("-w", str(study), "evaluate", "--folds", "3")
    assert code == 0 and "learned from" not in out
    with Workspace.open(study) as ws:
        latest = store.latest_model(ws.conn)
    assert "cross_validation" in latest.metrics and "evaluation_sample" in latest.metrics
    assert latest.version in out


def test_train_with_labels_from_one_respondent_skips_cross_validation(
    study: Path, tmp_path: Path
) -> None:
    lines = [labeled("KA-01", f"In Vesk {k} the yield is good.") for k in range(60)]
    labels = tmp_path / "one.jsonl"
    labels.write_text("\n".join(lines) + "\n", encoding="utf-8")
    assert run("-w", str(study), "import-labels", str(labels))[0] == 0
    code, out = run("-w", str(study), "train")
    assert code == 0, out
    assert "one respondent" in out
    with Workspace.open(study) as ws:
        assert "cross_validation" not in store.latest_model(ws.conn).meta["metrics"]


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
