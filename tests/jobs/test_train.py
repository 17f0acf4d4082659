"""Training a version: what it refuses, and when it skips cross-validation."""

from __future__ import annotations

from pathlib import Path

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
