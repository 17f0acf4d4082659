"""Options every command takes, before or after the command's name: ``-w``, ``-q``, ``-v``."""

from __future__ import annotations

import argparse
import io
from pathlib import Path

import pytest
from rich.console import Console

from extractor.cli.main import build_parser, main
from extractor.workspace import store
from tests.report.study import VERSION, build_workspace

# Every command with the arguments it cannot run without. -w must work on each of them,
# before the command and after it (the README promises "every command takes -w").
COMMANDS: dict[str, list[str]] = {
    "add": ["add", "answers.csv"],
    "status": ["status"],
    "concepts import": ["concepts", "import", "list.csv"],
    "concepts list": ["concepts", "list"],
    "concepts suggest": ["concepts", "suggest"],
    "concepts accept": ["concepts", "accept", "boils quickly", "BTX:0001"],
    "concepts export": ["concepts", "export"],
    "train": ["train"],
    "models": ["models"],
    "run": ["run"],
    "export": ["export"],
    "report": ["report"],
    "label": ["label", "--annotator", "ana"],
    "import-labels": ["import-labels", "labels.jsonl"],
    "evaluate": ["evaluate"],
    "language set": ["language", "set", "pt", "--all"],
    "language detect": ["language", "detect", "--all"],
    "review export": ["review", "export"],
    "review import": ["review", "import", "review.xlsx", "--reviewer", "ana"],
    "agreement": ["agreement"],
}


def run(*argv: str) -> tuple[int, str]:
    buffer = io.StringIO()
    code = main(list(argv), console=Console(file=buffer, width=300, force_terminal=False))
    return code, buffer.getvalue()


def _command_names(parser: argparse.ArgumentParser, prefix: str = "") -> set[str]:
    """Every command and action of the parser (``concepts suggest``), read from its help."""
    names: set[str] = set()
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, child in action.choices.items():
                full = f"{prefix}{name}"
                nested = _command_names(child, f"{full} ")
                names |= nested or {full}
    return names


def test_the_table_names_every_command() -> None:
    # init, simulate and convert-labels do not open a workspace; the first two are tested
    # on their own below, convert-labels in tests/cli/test_label_cmds.py.
    assert _command_names(build_parser()) - {"init", "simulate", "convert-labels"} == set(COMMANDS)


@pytest.mark.parametrize("position", ["before", "after"])
@pytest.mark.parametrize("argv", list(COMMANDS.values()), ids=list(COMMANDS))
def test_workspace_option_is_taken_before_and_after_the_command(
    tmp_path: Path, argv: list[str], position: str
) -> None:
    # An empty folder that is not a workspace: the command must open it (and say so),
    # not the current folder, and must not stop at argparse (exit code 2).
    elsewhere = tmp_path / "elsewhere-folder"
    elsewhere.mkdir()
    option = ["-w", str(elsewhere)]
    code, out = run(*(option + argv if position == "before" else argv + option))
    assert code == 1, out
    assert "elsewhere-folder" in out and "traits init" in out


@pytest.mark.parametrize("position", ["before", "after"])
def test_init_makes_the_workspace_named_by_the_option(tmp_path: Path, position: str) -> None:
    target = tmp_path / "study"
    option = ["-w", str(target)]
    code, out = run(*(option + ["init"] if position == "before" else ["init", *option]))
    assert code == 0, out
    assert (target / "traits.toml").is_file()


@pytest.mark.parametrize("position", ["before", "after"])
def test_simulate_accepts_the_workspace_option(tmp_path: Path, position: str) -> None:
    argv = ["simulate", "--pool", str(tmp_path / "none.jsonl"), "--test", "t.jsonl"]
    option = ["-w", str(tmp_path)]
    code, out = run(*(option + argv if position == "before" else argv + option))
    assert code == 1 and "none.jsonl" in out  # the missing pool, not a usage error


def _tagged_by_hand(root: Path) -> Path:
    """The hand-built workspace with its recorded version tagged on every sentence."""
    ws = build_workspace(root)
    ids = [s.id for s in store.sentences(ws.conn)]
    rows = [{"sentence_id": i, "path_prob": 0.9, "mentions": []} for i in ids]
    store.store_predictions(ws.conn, VERSION, rows)
    ws.close()
    return root


@pytest.mark.parametrize("position", ["before", "after"])
def test_quiet_export_prints_only_the_file_written(tmp_path: Path, position: str) -> None:
    root = _tagged_by_hand(tmp_path / "ws")
    argv = ["export", "--format", "jsonl"]
    code, out = run("-w", str(root), *(["-q", *argv] if position == "before" else [*argv, "-q"]))
    assert code == 0
    assert out.splitlines() == [str(root / "exports" / "mentions.jsonl")]


def test_quiet_still_prints_errors(tmp_path: Path) -> None:
    code, out = run("-q", "-w", str(tmp_path), "status")
    assert code == 1 and "error:" in out and "traits init" in out


def test_quiet_and_verbose_run(study: Path) -> None:
    code, out = run("-w", str(study), "-q", "run")
    assert code == 0
    assert out.splitlines() == [str(study / "exports" / "preferred_traits.xlsx")]
    code, out = run("-w", str(study), "run", "-v")
    assert code == 0
    assert "survey.csv: unchanged" in out and "learned from 0 labeled sentences" in out


def test_verbose_models_shows_each_version_folder(tmp_path: Path) -> None:
    root = _tagged_by_hand(tmp_path / "ws")
    _, plain = run("-w", str(root), "models")
    code, detailed = run("-w", str(root), "models", "-v")
    assert code == 0
    # The "folder" column is shown with -v only (the privacy note below the table names
    # model folders either way, so count the column header, not the word).
    header = [line for line in detailed.splitlines() if "version" in line.lower()]
    assert any("folder" in line for line in header)
    assert not any("folder" in line for line in plain.splitlines() if "version" in line.lower())


def test_quiet_and_verbose_together_is_a_usage_error(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as stopped:
        run("-q", "status", "-v")
    assert stopped.value.code == 2
    assert "not allowed with" in capsys.readouterr().err


def test_quiet_init_prints_only_the_new_workspace(tmp_path: Path) -> None:
    code, out = run("-q", "init", str(tmp_path / "study"))
    assert code == 0
    assert out.splitlines() == [str(tmp_path / "study")]
