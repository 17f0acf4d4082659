"""The labeling job over a pipe, and a corrupt model version refused in one sentence."""

from __future__ import annotations

import time
import tomllib
from pathlib import Path

import pytest

from extractor.jobs.label import labeling_setup
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from tests.jobs.study import latest_version, run


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


@pytest.mark.parametrize(
    "name",
    ["tagger.crfsuite", "meta.json", "linker/linker.json", "linker/context.skops"],
    ids=["crf-model", "meta", "linker", "linker-skops"],
)
def test_corrupt_model_file_is_reported_not_loaded(study: Path, name: str) -> None:
    run("-w", str(study), "run")
    version = latest_version(study).version
    (study / "models" / version / name).write_bytes(b"\x00 not a model file")
    code, out = run("-w", str(study), "label", "--annotator", "x")
    assert code == 1
    assert "Traceback" not in out and "train" in out  # every message says to (re)train


def test_labeling_setup_takes_what_is_not_given_from_traits_toml(study: Path) -> None:
    # the standard library's TOML reader is the reference for what the file says
    active = tomllib.loads((study / "traits.toml").read_text(encoding="utf-8"))["active"]
    with Workspace.open(study) as ws:
        cold = labeling_setup(ws, annotator="ana")
        chosen = labeling_setup(
            ws, annotator="ana", batch_size=3, strategy="random", evaluation=True
        )
        assert cold.quality() is None  # nothing measured yet (needs the open workspace)
    assert (cold.batch_size, cold.strategy) == (active["batch_size"], active["strategy"])
    assert (chosen.batch_size, chosen.strategy) == (3, "random")
    assert cold.predictor is None  # no version trained yet: a cold start
    assert not cold.settings.offer_evaluation and chosen.settings.offer_evaluation


def test_labels_newer_than_the_model_are_learned_before_labeling(
    study: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    run("-w", str(study), "run")
    first = latest_version(study).version
    with Workspace.open(study) as ws:
        assert labeling_setup(ws, annotator="ana").trained_from is None  # nothing new
        time.sleep(1.1)  # stored times have whole seconds (ISO 8601, store.now)
        held_out = set(store.sample_ids(ws.conn, "evaluation"))
        sid = next(s.id for s in store.sentences(ws.conn) if s.id not in held_out)
        store.add_label(ws.conn, sid, [], "ana")
        kept = labeling_setup(ws, annotator="ana", train_first=False)
        assert (kept.version, kept.newer_labels, kept.trained_from) == (first, 1, None)
        assert len(store.models(ws.conn)) == 1
    code, out = run(
        "-w", str(study), "label", "--annotator", "ana", stdin="q\n", monkeypatch=monkeypatch
    )
    assert code == 0, out
    second = latest_version(study).version
    assert second != first
    assert f"Trained model {second} first: 1 label was newer than model {first}." in out
    assert f"model {second}" in out
