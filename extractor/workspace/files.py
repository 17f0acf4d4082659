"""Writing output files atomically: a reader sees the old file or the new one, never half.

Every export (workbook, chart, CSV, JSON Lines, JSON-LD, CoNLL, indicator files,
reports) is written to a temporary file in the target's own folder and moved over the
target with :func:`os.replace` only once it is complete. A kill, a crash or a full
disk during the write leaves the previous file exactly as it was (``os.replace`` is
atomic on POSIX and Windows when both names are on one file system, which the same
folder guarantees), and the half-written temporary file is removed when Python can
still run.

* :func:`atomic_path` yields a temporary path, for libraries that write to a path
  themselves (openpyxl's ``Workbook.save``, matplotlib's ``savefig``);
* :func:`atomic_open` yields a UTF-8 text handle, for writers that write text.
"""

from __future__ import annotations

import contextlib
import glob
import os
import tempfile
import time
from collections.abc import Iterator
from pathlib import Path
from typing import TextIO

from extractor.errors import InputError

TEMP_PREFIX = ".partial-"
"""Name prefix of a file being written; a leftover one can be deleted safely."""
STALE_S = 600
"""A temporary file untouched this long was left by a killed writer; the next write of the
same target removes it."""


def _problem(path: Path, exc: OSError) -> InputError:
    reason = exc.strerror or str(exc)
    return InputError(
        f"Cannot write {str(path)!r}: {reason}; the previous file, if any, is unchanged. "
        "Free disk space or choose a writable folder, then run the command again."
    )


def _remove_stale(path: Path) -> None:
    """Remove temporary files a killed writer of ``path`` left (a kill -9 cannot clean up)."""
    for old in path.parent.glob(TEMP_PREFIX + glob.escape(path.name) + ".*"):
        with contextlib.suppress(OSError):
            if time.time() - old.stat().st_mtime > STALE_S:
                old.unlink()


@contextlib.contextmanager
def atomic_path(path: Path | str) -> Iterator[Path]:
    """Yield a temporary path beside ``path``; move it over ``path`` when the block ends.

    If the block raises, the temporary file is removed and ``path`` is left as it was.

    Raises:
        InputError: If the folder does not exist or a write fails (disk full, read-only),
            naming the file.
    """
    path = Path(path)
    if not path.parent.is_dir():
        raise InputError(
            f"The folder {str(path.parent)!r} for {path.name!r} does not exist; create it first."
        )
    _remove_stale(path)
    try:
        handle, name = tempfile.mkstemp(prefix=TEMP_PREFIX + path.name + ".", dir=path.parent)
    except OSError as exc:
        raise _problem(path, exc) from exc
    os.close(handle)
    temp = Path(name)
    try:
        yield temp
        os.replace(temp, path)
    except OSError as exc:
        raise _problem(path, exc) from exc
    finally:
        with contextlib.suppress(OSError):
            temp.unlink(missing_ok=True)


@contextlib.contextmanager
def atomic_open(path: Path | str, *, newline: str | None = None) -> Iterator[TextIO]:
    """Yield a UTF-8 text handle whose content replaces ``path`` when the block ends.

    The data is flushed to disk (``fsync``) before the rename, so a power cut cannot
    leave an empty file under the target's name.

    Raises:
        InputError: As :func:`atomic_path`.
    """
    with atomic_path(path) as temp:
        try:
            with temp.open("w", encoding="utf-8", newline=newline) as fh:
                yield fh
                fh.flush()
                os.fsync(fh.fileno())
        except OSError as exc:
            raise _problem(Path(path), exc) from exc
