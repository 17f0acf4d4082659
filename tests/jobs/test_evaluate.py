"""`traits evaluate`: the tables, the stale-version note, the figures stored."""

from __future__ import annotations

from pathlib import Path

from tests.jobs.study import ANSWERS, labeled, latest_version, run


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
    latest = latest_version(study)
    assert "cross_validation" in latest.metrics and "evaluation_sample" in latest.metrics
    assert latest.version in out
