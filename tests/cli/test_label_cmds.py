"""The ``traits label`` command over a pipe: what it prints around the labeling screen."""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.jobs.study import run


def test_label_says_saved_once_on_quit(study: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    code, out = run(
        "-w", str(study), "label", "--annotator", "tester", stdin="n\nq\n", monkeypatch=monkeypatch
    )
    assert code == 0, out
    assert out.count("Saved") == 1
    assert "Saved: 1 labels this session, 1 in total, 0 skipped." in out
