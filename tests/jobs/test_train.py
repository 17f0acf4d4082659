"""Training a version: what it refuses, and when it skips cross-validation."""

from __future__ import annotations

import os
import re
import sqlite3
import time
from datetime import datetime
from pathlib import Path
from types import SimpleNamespace

import pytest

from extractor.jobs.run import train_and_tag
from extractor.jobs.train import new_version_name, reusable_clusters, stance_gaps
from extractor.models.cue_file import load_cues
from extractor.nlp.clusters import learn_clusters, save_clusters
from extractor.types import Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from tests.jobs.study import labeled, latest_version, run


def test_train_without_concepts_or_labels_says_what_to_do(tmp_path: Path) -> None:
    root = tmp_path / "empty"
    run("init", str(root))
    code, out = run("-w", str(root), "train")
    assert code == 1 and "concepts import" in out


def test_train_with_labels_from_one_respondent_skips_cross_validation(
    study: Path, tmp_path: Path
) -> None:
    lines = [labeled("KA-01", f"In Vesk {k} the yield is good.") for k in range(60)]
    labels = tmp_path / "one.jsonl"
    labels.write_text("\n".join(lines) + "\n", encoding="utf-8")
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    assert run("-w", str(study), "import-labels", str(labels))[0] == 0
    code, out = run("-w", str(study), "train")
    assert code == 0, out
    assert "one respondent" in out
    assert "cross_validation" not in latest_version(study).meta["metrics"]


def test_version_names_sort_in_training_order_and_carry_a_utc_stamp(study: Path) -> None:
    with Workspace.open(study) as ws:
        name = new_version_name(ws)
    number, stamp = name.split("-")
    assert number == "v001"
    # ISO 8601 basic format, read back by the standard library
    assert datetime.strptime(stamp, "%Y%m%dT%H%M%S").year >= 2024


def test_train_and_tag_report_what_the_store_holds(study: Path) -> None:
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    with Workspace.open(study) as ws:
        done = train_and_tag(ws, cross_validate=False)
        latest = store.latest_model(ws.conn)
        predicted = store.predictions(ws.conn, done.train.version)
        n_sentences = store.counts(ws.conn)["sentences"]
    assert latest is not None and latest.version == done.train.version
    assert done.train.metrics == {} and "cross_validation" not in latest.meta["metrics"]
    mentions = [m for p in predicted.values() for m in p.mentions]
    assert done.tag.sentences == len(predicted) == n_sentences
    assert done.tag.mentions == len(mentions)
    assert done.tag.unlinked == sum(1 for m in mentions if m["concept"] is None)


def _dump(root: Path) -> list[str]:
    """Every row of the store as SQL (sqlite3's own dump), to compare before and after."""
    conn = sqlite3.connect(root / "traits.sqlite")
    try:
        return list(conn.iterdump())
    finally:
        conn.close()


def _set_setting(root: Path, line: str) -> None:
    """Replace the template's line of the same key with ``line``."""
    path = root / "traits.toml"
    key = line.split("=")[0].strip()
    text = re.sub(rf"(?m)^#?\s*{key} = .*$", line, path.read_text(encoding="utf-8"), count=1)
    path.write_text(text, encoding="utf-8")


def test_train_without_a_concept_list_or_labels_writes_nothing(study: Path) -> None:
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    before = _dump(study)
    code, out = run("-w", str(study), "train")
    assert code == 1 and "concepts import" in out
    assert _dump(study) == before
    assert not any((study / "models").iterdir())


@pytest.mark.parametrize(
    ("line", "named"),
    [
        ('algorithm = "fastest"', "algorithm"),
        ('silver_filter = "none"', "silver_filter"),
        ("gold_weight = 0", "gold_weight"),
    ],
    ids=["algorithm", "silver-filter", "gold-weight"],
)
def test_train_with_a_bad_tagger_setting_writes_nothing(study: Path, line: str, named: str) -> None:
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    _set_setting(study, line)
    before = _dump(study)
    code, out = run("-w", str(study), "train")
    assert code == 1 and named in out and "traits.toml" in out, out
    assert _dump(study) == before
    assert not any((study / "models").iterdir())


def _trained(study: Path) -> None:
    assert run("-w", str(study), "concepts", "import", str(study / "concepts.csv"))[0] == 0
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0


def test_train_removes_model_folders_an_interrupted_training_left(study: Path) -> None:
    _trained(study)
    # What a kill during saving leaves: a version folder the store never recorded.
    orphan = study / "models" / "v001-20260101T000000"
    orphan.mkdir(parents=True)
    (orphan / "tagger.crfsuite").write_bytes(b"half")
    old = time.time() - 3600
    os.utime(orphan, (old, old))
    code, out = run("-w", str(study), "train")
    assert code == 0, out
    assert not orphan.exists()
    assert "v001-20260101T000000" in out
    recorded = {m.path for m in _models(study)}
    assert {p.relative_to(study).as_posix() for p in (study / "models").iterdir()} == recorded


def test_train_leaves_a_fresh_unrecorded_folder_and_other_folders_but_reports_them(
    study: Path,
) -> None:
    _trained(study)
    fresh = study / "models" / "v009-20260101T000000"  # maybe another training saving now
    mine = study / "models" / "my notes"  # not a version name: the user's own
    fresh.mkdir(parents=True)
    mine.mkdir()
    code, out = run("-w", str(study), "train")
    assert code == 0, out
    assert fresh.is_dir() and mine.is_dir()
    assert "v009-20260101T000000" in out and "my notes" in out


def _models(root: Path) -> list[store.ModelVersion]:
    with Workspace.open(root) as ws:
        return store.models(ws.conn)


# --- model files hold no screened identifiers -----------------------------------------

PLANTED = {
    "email": "wanjiku.moraa@mvuamail.org",
    "phone": "0798 765 432",
    "respondent": "KA-07",
    "name": "Wanjiku",
    "listed": "Tumaini",
}


def _plant_identifiers(study: Path) -> None:
    lines = ["respondent,respondent_name,language,question,answer"]
    answers = [
        "KA-07,Wanjiku Moraa,en-KE,Why?,Wanjiku says it cooks fast. Call 0798 765 432 for seed.",
        "KA-08,Zuri Atieno,en-KE,Why?,Write to wanjiku.moraa@mvuamail.org. KA-07 likes the taste.",
        "KA-09,Imani Odhiambo,en-KE,Why?,Tumaini sold us the seed. The yield is good.",
    ]
    (study / "interviews" / "more.csv").write_text(
        "\n".join(lines + answers) + "\n", encoding="utf-8"
    )
    (study / "names.txt").write_text("Tumaini\n", encoding="utf-8")
    _set_setting(study, 'names_file = "names.txt"')


def test_model_files_hold_no_identifier_the_screening_finds(study: Path) -> None:
    _plant_identifiers(study)
    _trained(study)
    assert run("-w", str(study), "add", str(study / "interviews" / "more.csv"))[0] == 0
    code, out = run("-w", str(study), "train")
    assert code == 0, out
    (folder,) = [p for p in (study / "models").iterdir() if p.is_dir()]
    files = [p for p in folder.rglob("*") if p.is_file()]
    assert files
    for path in files:
        data = path.read_bytes().lower()
        for kind, planted in PLANTED.items():
            for piece in planted.lower().replace("@", " ").replace(".", " ").split():
                if len(piece) >= 4:  # shorter byte strings turn up by chance in binaries
                    # A group of digits counts only as a whole number: "0798" inside a
                    # stored float such as 0.07983 is not the planted phone number.
                    pattern = rb"(?<![0-9.])" + re.escape(piece.encode()) + rb"(?![0-9])"
                    found = re.search(pattern, data) if piece.isdigit() else piece.encode() in data
                    assert not found, (kind, piece, path.name)


def test_stance_gaps_are_the_languages_with_neither_cues_nor_stance_labels() -> None:
    corpus = [
        Sentence(1, "Ina son masara.", "ha"),
        Sentence(2, "Oka ni dun.", "yo"),
        Sentence(3, "It is good.", "en"),
        Sentence(4, "Ni tamu.", "sw-KE"),
    ]
    gold = [(corpus[1], [Span(0, 3, None, "liked")])]
    # en and sw have packaged cue words; yo has a stance label; ha has neither.
    assert stance_gaps(corpus, gold, load_cues()) == ["ha"]


def test_clusters_learned_before_the_main_axes_are_learned_again(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    corpus = [Sentence(i, f"The taste of Velora is good {i} .", "en") for i in range(6)]
    clusters = learn_clusters([(s.text, s.lang) for s in corpus], space="none")
    latest = SimpleNamespace(meta={"clusters_fingerprint": clusters["fingerprint"]}, path="v1")
    monkeypatch.setattr(store, "latest_model", lambda conn: latest)
    ws = SimpleNamespace(conn=None, root=tmp_path)
    save_clusters(clusters, tmp_path / "v1")
    assert reusable_clusters(ws, corpus) is not None  # type: ignore[arg-type]
    del clusters["params"]["space_axes"]  # as a version of an earlier release wrote them
    save_clusters(clusters, tmp_path / "v1")
    assert reusable_clusters(ws, corpus) is None  # type: ignore[arg-type]
