"""kill -9 of `traits add`, `train` and `export` at several moments: nothing stored is lost.

Each command runs as its own process and is killed with SIGKILL (no clean-up code can
run) in its most fragile moment: while the export's file or the model version's folder is
being written (seen by polling the folder), or, for `traits add`, at a share of the time a
complete run took. Afterwards SQLite's own
``PRAGMA integrity_check`` must pass, the store must hold either everything the command
stores or none of it, the file an export replaces must be the old one or a complete new
one, and the same command must then succeed. (The labeling loop's kill test is in
``tests/cli/test_screen.py``.) Every wait is bounded.
"""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
import time
import zipfile
from collections.abc import Callable, Sequence
from pathlib import Path

import openpyxl
import pytest

from extractor.models.bundle import TraitModels
from extractor.workspace.files import TEMP_PREFIX
from tests.jobs.study import make_study, run

pytestmark = [
    pytest.mark.slow,
    pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs POSIX SIGKILL"),
]

ROOT = Path(__file__).resolve().parents[2]
KILL_AT = 0.7
"""Share of a complete `traits add` run's duration at which it is killed."""
LIMIT_S = 300
"""No command of these small workspaces may take longer, killed or not."""


def _traits(root: Path, *argv: str) -> subprocess.Popen[bytes]:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    return subprocess.Popen(
        [sys.executable, "-m", "extractor", "-w", str(root), *argv],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
        env=env,
    )


def _complete(root: Path, *argv: str) -> float:
    """Run a command to its end; return how long it took."""
    started = time.monotonic()
    child = _traits(root, *argv)
    assert child.wait(timeout=LIMIT_S) == 0, argv
    return time.monotonic() - started


def _killed(root: Path, argv: Sequence[str], after_s: float) -> None:
    child = _traits(root, *argv)
    try:
        child.wait(timeout=after_s)
    except subprocess.TimeoutExpired:
        os.kill(child.pid, signal.SIGKILL)
        child.wait(timeout=30)


def _killed_when(root: Path, argv: Sequence[str], writing: Callable[[], bool]) -> bool:
    """Run a command and kill it the moment ``writing()`` is true; return whether it was."""
    child = _traits(root, *argv)
    deadline = time.monotonic() + LIMIT_S
    try:
        while child.poll() is None and time.monotonic() < deadline:
            if writing():
                os.kill(child.pid, signal.SIGKILL)
                child.wait(timeout=30)
                return True
            time.sleep(0.002)
        return False
    finally:
        if child.poll() is None:
            os.kill(child.pid, signal.SIGKILL)
            child.wait(timeout=30)


def _table_counts(root: Path) -> dict[str, int]:
    conn = sqlite3.connect(root / "traits.sqlite")
    try:
        (check,) = conn.execute("PRAGMA integrity_check").fetchone()
        assert check == "ok"
        tables = [r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type='table'")]
        return {t: conn.execute(f'SELECT COUNT(*) FROM "{t}"').fetchone()[0] for t in tables}
    finally:
        conn.close()


@pytest.fixture(scope="module")
def trained(tmp_path_factory: pytest.TempPathFactory) -> Path:
    root = make_study(tmp_path_factory.mktemp("crash") / "study")
    assert run("-w", str(root), "concepts", "import", str(root / "concepts.csv"))[0] == 0
    assert run("-w", str(root), "add", str(root / "interviews" / "survey.csv"))[0] == 0
    assert run("-w", str(root), "train")[0] == 0
    return root


def _big_survey(path: Path, n: int = 300) -> None:
    lines = ["respondent,gender,role,language,question,answer"]
    for k in range(n):
        lines.append(
            f"KB-{k:04d},woman,farmer,en,Why?,"
            f'"Plot {k}: it cooks fast. The grains are small. Weevils eat it in store."'
        )
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def test_killed_add_stores_all_of_a_file_or_none(trained: Path, tmp_path: Path) -> None:
    source = tmp_path / "big.csv"
    _big_survey(source)
    before = _table_counts(trained)
    reference = tmp_path / "reference"
    subprocess.run(["cp", "-r", str(trained), str(reference)], check=True)
    full_s = _complete(reference, "add", str(source))
    after = _table_counts(reference)
    assert after["answers"] > before["answers"]
    _killed(trained, ["add", str(source)], full_s * KILL_AT)
    assert _table_counts(trained) in (before, after)
    assert _complete(trained, "add", str(source)) < LIMIT_S
    assert _table_counts(trained) == after


def _recorded(root: Path) -> list[str]:
    conn = sqlite3.connect(root / "traits.sqlite")
    try:
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        return [r[0] for r in conn.execute("SELECT path FROM models")]
    finally:
        conn.close()


def test_killed_train_leaves_every_recorded_version_whole(trained: Path) -> None:
    before = {p.name for p in (trained / "models").iterdir()}

    def saving() -> bool:
        return any(p.name not in before for p in (trained / "models").iterdir())

    kills = sum(_killed_when(trained, ["train", "--no-cv"], saving) for _ in range(3))
    assert kills >= 1  # at least one kill landed while a version was being saved
    for path in _recorded(trained):  # every version the store records loads
        TraitModels.load(trained / path)
    assert _complete(trained, "train", "--no-cv") < LIMIT_S
    for path in _recorded(trained):
        TraitModels.load(trained / path)


def _whole_workbook(path: Path) -> bool:
    with zipfile.ZipFile(path) as archive:
        if archive.testzip() is not None:
            return False
    openpyxl.load_workbook(path)
    return True


def test_killed_export_keeps_the_previous_workbook_or_writes_a_whole_one(trained: Path) -> None:
    exports = trained / "exports"
    target = exports / "preferred_traits.xlsx"
    assert _complete(trained, "export") < LIMIT_S

    def writing() -> bool:
        return any(exports.glob(TEMP_PREFIX + "preferred_traits.xlsx.*"))

    killed = False
    for _ in range(3):  # a run may finish between two polls; then it wrote a whole file
        before = target.read_bytes()
        killed = _killed_when(trained, ["export"], writing)
        if killed:
            assert target.read_bytes() == before  # killed mid-write: the old workbook stays
            break
        assert _whole_workbook(target)
    assert killed
    assert _complete(trained, "export") < LIMIT_S
    assert _whole_workbook(target)
