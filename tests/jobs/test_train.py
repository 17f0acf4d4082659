"""Training a version: what it refuses, and when it skips cross-validation."""

from __future__ import annotations

from datetime import datetime
from pathlib import Path

from extractor.jobs.run import train_and_tag
from extractor.jobs.train import new_version_name
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
