"""Atomic output files: a failed write leaves the previous file exactly as it was."""

from __future__ import annotations

import errno
import os
import time
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.workspace.files import TEMP_PREFIX, atomic_open, atomic_path


def test_atomic_open_replaces_the_file_when_the_block_ends(tmp_path: Path) -> None:
    out = tmp_path / "m.csv"
    out.write_text("old\n", encoding="utf-8")
    with atomic_open(out) as fh:
        fh.write("new\n")
        assert out.read_text(encoding="utf-8") == "old\n"  # not visible before the end
    assert out.read_text(encoding="utf-8") == "new\n"
    assert [p.name for p in tmp_path.iterdir()] == ["m.csv"]


def test_atomic_open_keeps_the_old_file_when_the_write_fails(tmp_path: Path) -> None:
    out = tmp_path / "m.csv"
    out.write_text("old\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"m\.csv.*No space left.*unchanged"):
        with atomic_open(out) as fh:
            fh.write("half")
            raise OSError(errno.ENOSPC, "No space left on device")
    assert out.read_text(encoding="utf-8") == "old\n"
    assert not list(tmp_path.glob(TEMP_PREFIX + "*"))


def test_atomic_path_keeps_the_old_file_when_the_writer_raises(tmp_path: Path) -> None:
    out = tmp_path / "w.xlsx"
    out.write_bytes(b"old")
    with pytest.raises(KeyboardInterrupt):
        with atomic_path(out) as temp:
            temp.write_bytes(b"ha")
            raise KeyboardInterrupt
    assert out.read_bytes() == b"old"
    assert not list(tmp_path.glob(TEMP_PREFIX + "*"))


def test_atomic_path_names_a_missing_folder(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="does not exist"):
        with atomic_path(tmp_path / "nope" / "w.xlsx"):
            pass


def test_atomic_path_removes_what_a_killed_writer_left_long_ago(tmp_path: Path) -> None:
    out = tmp_path / "w.xlsx"
    stale = tmp_path / (TEMP_PREFIX + "w.xlsx.abc123")
    fresh = tmp_path / (TEMP_PREFIX + "w.xlsx.def456")  # maybe another writer, right now
    for leftover in (stale, fresh):
        leftover.write_bytes(b"half")
    old = time.time() - 3600
    os.utime(stale, (old, old))
    with atomic_path(out) as temp:
        temp.write_bytes(b"new")
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(["w.xlsx", fresh.name])
