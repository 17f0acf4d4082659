"""Kill a process that started workers, and list the workers still running after it."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def alive(pid: int) -> bool:
    """Whether ``pid`` runs (a zombie left for a reaper that never comes counts as ended)."""
    try:
        status = Path(f"/proc/{pid}/status").read_text()
    except FileNotFoundError:
        return False
    return "\nState:\tZ" not in status


def workers_left_after_kill(script: str, folder: Path, workers: int = 2) -> list[int]:
    """Run ``script``, SIGKILL it once ``workers`` workers run, return those alive 10 s on.

    The script gets a folder as its one argument; each worker marks itself there with an
    empty file named by its PID, then sleeps. Workers left alive are killed before
    returning, so a failing check leaves nothing behind.
    """
    path = folder / "parent.py"
    path.write_text(script)
    pids = folder / "pids"
    pids.mkdir()
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    parent = subprocess.Popen([sys.executable, str(path), str(pids)], env=env)
    try:
        deadline = time.monotonic() + 60
        while len(list(pids.iterdir())) < workers and time.monotonic() < deadline:
            time.sleep(0.1)
        started = [int(p.name) for p in pids.iterdir()]
        if len(started) < workers or not all(alive(pid) for pid in started):
            raise AssertionError(f"expected {workers} running workers, found {started}")
    finally:
        parent.kill()
        parent.wait()
    deadline = time.monotonic() + 10
    while any(alive(pid) for pid in started) and time.monotonic() < deadline:
        time.sleep(0.1)
    left = [pid for pid in started if alive(pid)]
    for pid in left:
        os.kill(pid, signal.SIGKILL)
    return left
