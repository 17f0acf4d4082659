from __future__ import annotations

import sys
from pathlib import Path

import pytest

from tests.killed_parent import workers_left_after_kill

pytestmark = pytest.mark.skipif(
    not sys.platform.startswith("linux"), reason="PR_SET_PDEATHSIG is Linux's (prctl(2))"
)

_POOL = """
import os, sys, time
from concurrent.futures import ProcessPoolExecutor
from multiprocessing import get_context
from pathlib import Path
from extractor.child_processes import end_with_parent

def note_and_sleep(folder):
    Path(folder, str(os.getpid())).touch()
    time.sleep(120)

if __name__ == "__main__":
    guard = {guard}
    pool = ProcessPoolExecutor(
        2,
        mp_context=get_context("{method}"),
        initializer=end_with_parent if guard else None,
        initargs=(os.getpid(),) if guard else (),
    )
    for _ in range(2):
        pool.submit(note_and_sleep, sys.argv[1])
    time.sleep(120)
"""


@pytest.mark.parametrize("method", ["fork", "spawn"])
def test_workers_end_with_their_killed_parent(method: str, tmp_path: Path) -> None:
    script = _POOL.format(guard=True, method=method)
    assert workers_left_after_kill(script, tmp_path) == []


def test_without_the_guard_the_workers_outlive_their_parent(tmp_path: Path) -> None:
    """The control: what the guard prevents does happen without it."""
    script = _POOL.format(guard=False, method="fork")
    assert len(workers_left_after_kill(script, tmp_path)) == 2
