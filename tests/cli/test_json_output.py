"""``--json`` for scripts: one JSON object (RFC 8259) from the job's typed result.

Each output is parsed with Python's json module, the reference reader here.
"""

from __future__ import annotations

import json
from pathlib import Path

from extractor.workspace import store
from tests.jobs.study import run
from tests.report.study import VERSION, build_workspace


def _tagged_by_hand(root: Path) -> Path:
    """The hand-built workspace with its recorded version tagged on every sentence."""
    ws = build_workspace(root)
    ids = [s.id for s in store.sentences(ws.conn)]
    rows = [{"sentence_id": i, "path_prob": 0.9, "mentions": []} for i in ids]
    store.store_predictions(ws.conn, VERSION, rows)
    ws.close()
    return root


def test_models_json_lists_each_version(tmp_path: Path) -> None:
    root = _tagged_by_hand(tmp_path / "ws")
    code, out = run("-w", str(root), "models", "--json")
    assert code == 0, out
    found = json.loads(out)
    assert [m["version"] for m in found["versions"]] == [VERSION]


def test_models_json_with_no_version_is_an_empty_list(tmp_path: Path) -> None:
    build_workspace(tmp_path / "ws", with_model=False).close()
    code, out = run("-w", str(tmp_path / "ws"), "models", "--json")
    assert code == 0 and json.loads(out) == {"versions": []}


def test_export_json_names_the_file_and_its_mentions(tmp_path: Path) -> None:
    root = _tagged_by_hand(tmp_path / "ws")
    code, out = run("-w", str(root), "export", "--format", "jsonl", "--json")
    assert code == 0, out
    found = json.loads(out)
    assert Path(found["path"]) == root / "exports" / "mentions.jsonl"
    # One line per mention in the file written (JSON Lines: one JSON value per line).
    lines = Path(found["path"]).read_text(encoding="utf-8").splitlines()
    assert found["mentions"] == len(lines)


def test_evaluate_json_says_why_a_part_has_no_figures(study: Path) -> None:
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    code, out = run("-w", str(study), "evaluate", "--json")
    assert code == 0, out
    found = json.loads(out)
    assert found["version"] is None
    assert found["cross_validation"] is None and found["evaluation_sample"] is None
    assert set(found["notes"]) == {"cross-validation", "evaluation sample"}


def test_run_json_reports_the_version_and_the_workbook(study: Path) -> None:
    code, out = run("-w", str(study), "run", "--json")
    assert code == 0, out
    found = json.loads(out)
    assert found["retrained"] is True and found["first_run"] is True
    assert found["train"]["version"].startswith("v001-")
    assert Path(found["export"]["path"]).is_file()
    assert found["counts"]["respondents"] == 6
    assert found["tag"]["mentions"] > 0
