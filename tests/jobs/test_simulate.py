"""`traits simulate` as a job: the summary it returns is the one its results file supports."""

from __future__ import annotations

import json
import statistics
from pathlib import Path

from extractor.jobs.simulate import simulate_files

# The PNG signature, from the PNG specification (RFC 2083, section 3.1).
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def _gold(path: Path, lines: list[str]) -> Path:
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _records() -> list[str]:
    """Invented sentences, each with one trait span (village and variety names are made up)."""
    traits = ["soft grain", "short cooking", "sweet taste", "big seeds"]
    lines = []
    for i in range(36):
        trait = traits[i % 4]
        text = f"In Vesk village {i} we like the {trait} of Zanobi."
        start = text.index(trait)
        span = {"start": start, "end": start + len(trait)}
        lines.append(json.dumps({"respondent": f"R{i % 6}", "sentence": text, "mentions": [span]}))
    return lines


def test_simulation_summary_matches_its_results_file(tmp_path: Path) -> None:
    lines = _records()
    out = tmp_path / "results.json"
    report = simulate_files(
        _gold(tmp_path / "pool.jsonl", lines[:28]),
        _gold(tmp_path / "test.jsonl", lines[28:]),
        out=out,
        strategies=["default", "random"],
        budgets=[10],
        repeats=2,
        model="tagger",
        plot_to=tmp_path / "curves.png",
    )
    runs = json.loads(out.read_text(encoding="utf-8"))["runs"]
    assert report.out == out and len(runs) == 2 * 2  # strategies x repeats
    for row in report.curve:
        mine = [r["span_f1"] for r in runs if r["strategy"] == row.strategy]
        # the standard library's statistics module is the reference for mean and sd
        assert row.mean == statistics.fmean(mine) and row.sd == statistics.stdev(mine)
    (gain,) = report.gains
    by_repeat = {(r["strategy"], r["repeat"]): r["span_f1"] for r in runs}
    diffs = [by_repeat["default", k] - by_repeat["random", k] for k in (0, 1)]
    assert gain.strategy == "default" and gain.gain == statistics.fmean(diffs)
    assert report.plot is not None
    assert report.plot.read_bytes().startswith(PNG_SIGNATURE)
