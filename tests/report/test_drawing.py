from __future__ import annotations

from pathlib import Path

import pytest

from extractor.report import drawing
from extractor.report.drawing import Drawing
from extractor.report.group_charts import all_charts, chart_file_calls, draw_chart
from extractor.report.inputs import prepare
from extractor.report.summary import trait_summary
from tests.killed_parent import workers_left_after_kill
from tests.report.study import CONCEPTS, Study


def _fail(message: str) -> None:
    raise ValueError(message)


def test_charts_drawn_by_workers_are_the_charts_drawn_in_turn(study: Study, tmp_path: Path) -> None:
    m, r = prepare(*study)
    charts = all_charts(trait_summary(m, r, CONCEPTS, ["gender"]), ["gender"])
    calls = chart_file_calls(charts, tmp_path / "workers")
    if drawing._workers(len(calls)) < 2:
        pytest.skip("drawing in worker processes needs fork (Linux) and two cores")
    with Drawing(calls) as pending:
        pending.wait()
    for chart in charts:
        png = tmp_path / f"{chart.name}.png"
        draw_chart(chart, png)
        assert (tmp_path / "workers" / f"{chart.name}.png").read_bytes() == png.read_bytes()
        assert (tmp_path / "workers" / f"{chart.name}.svg").stat().st_size > 0


def test_an_error_in_a_worker_is_raised_by_wait() -> None:
    with Drawing([(_fail, ("no chart",)), (_fail, ("no chart",))]) as pending:
        with pytest.raises(ValueError, match="no chart"):
            pending.wait()


def test_without_fork_the_calls_run_in_turn(
    study: Study, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(drawing, "_workers", lambda n: 0)
    m, r = prepare(*study)
    charts = all_charts(trait_summary(m, r, CONCEPTS, []), [])
    with Drawing(chart_file_calls(charts, tmp_path)) as pending:
        pending.wait()
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(
        f"{c.name}.{ext}" for c in charts for ext in ("png", "svg")
    )


_KILLED_EXPORT = """
import os, sys, time
from pathlib import Path
from extractor.report.drawing import Drawing

def note_and_sleep(folder):
    Path(folder, str(os.getpid())).touch()
    time.sleep(120)

if __name__ == "__main__":
    pending = Drawing([(note_and_sleep, (sys.argv[1],)), (note_and_sleep, (sys.argv[1],))])
    time.sleep(120)
"""


def test_workers_end_when_the_export_is_killed(tmp_path: Path) -> None:
    """SIGKILL of the drawing process leaves no worker behind (as `traits export` killed)."""
    if drawing._workers(2) < 2:
        pytest.skip("drawing in worker processes needs fork (Linux) and two cores")
    assert workers_left_after_kill(_KILLED_EXPORT, tmp_path) == []
