"""The ``traits init``, ``add`` and ``status`` commands as a user sees them."""

from __future__ import annotations

import io
from pathlib import Path

from rich.console import Console

from extractor.cli.main import main


def run(*argv: str, width: int = 200) -> tuple[int, str]:
    """Run the command with a captured console of ``width`` columns; return (code, output)."""
    buffer = io.StringIO()
    code = main(list(argv), console=Console(file=buffer, width=width, force_terminal=False))
    return code, buffer.getvalue()


def _answers(path: Path) -> Path:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(
        "respondent,question,answer\nKA-01,Why do you grow it?,It cooks fast and tastes sweet.\n",
        encoding="utf-8",
    )
    return path


def test_add_table_shows_a_long_path_in_full_on_a_narrow_terminal(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    deep = tmp_path / "campaign_2025_northern_highlands" / "household_round_two" / "cassava"
    path = _answers(deep / "farmer_interviews_with_long_descriptive_name_final_v3.csv")
    code, out = run("-w", str(ws), "add", str(path), width=80)
    assert code == 0
    assert "…" not in out
    # The file column is the first cell of each body row (between the first two bars);
    # joined line by line it must give back the whole path.
    body = [line.split("│")[1].strip() for line in out.splitlines() if line.count("│") >= 2]
    assert "".join(body) == path.resolve().as_posix()
