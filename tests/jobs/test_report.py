from __future__ import annotations

from pathlib import Path

import pytest

from extractor.jobs.report import report
from extractor.report.caution import REVIEW_CAUTION
from tests.jobs.study import run
from tests.report.study import VERSION, build_workspace


@pytest.fixture(autouse=True)
def _tagged(monkeypatch: pytest.MonkeyPatch) -> None:
    """The hand-built workspace holds its version's predictions; no model files to tag with."""
    monkeypatch.setattr("extractor.jobs.report.ensure_tagged", lambda ws, version: VERSION)


def test_report_is_pseudonymised_by_default(tmp_path: Path) -> None:
    ws = build_workspace(tmp_path / "ws")
    try:
        result = report(ws, version=VERSION)
        text = result.path.read_text(encoding="utf-8")
    finally:
        ws.close()
    assert result.path == tmp_path / "ws" / "exports" / "report.html"
    assert result.mentions == 3  # as the workbook export of the same workspace
    assert REVIEW_CAUTION in text
    assert "KR-01" not in text and "Respondent IDs are pseudonyms" in text


def test_traits_report_command_writes_the_identified_report_when_asked(tmp_path: Path) -> None:
    build_workspace(tmp_path / "ws").close()
    code, out = run("-w", str(tmp_path / "ws"), "report", "--identified")
    assert code == 0 and "report_identified.html" in out
    text = (tmp_path / "ws" / "exports" / "report_identified.html").read_text(encoding="utf-8")
    assert "KR-01" in text
