"""Progress bars for long steps, shown only when the command line switches them on.

Library functions wrap their long loops in :func:`track`; it is silent unless
the command line has called :func:`enable` with its console, so the library never prints
on its own and tests stay quiet.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator
from typing import TypeVar

from rich.console import Console
from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

T = TypeVar("T")

_console: Console | None = None


def enable(console: Console | None) -> None:
    """Show progress bars on ``console`` (None switches them off)."""
    global _console
    _console = console


def track(items: Iterable[T], description: str, total: int | None = None) -> Iterator[T]:
    """Yield ``items``, advancing a progress bar when bars are switched on."""
    if _console is None:
        yield from items
        return
    columns = (
        TextColumn("{task.description}"),
        BarColumn(),
        MofNCompleteColumn(),
        TimeElapsedColumn(),
    )
    with Progress(*columns, console=_console, transient=True) as progress:
        task = progress.add_task(description, total=total)
        for item in items:
            yield item
            progress.advance(task)
