"""What the command modules share: opening the workspace named by ``-w``, headline figures."""

from __future__ import annotations

import argparse
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

from rich.console import Console

from extractor.workspace.folder import Workspace

Subcommands = argparse._SubParsersAction  # argparse has no public name for it
"""The ``traits`` parser's subcommands, where each command module adds its own."""


def open_workspace(args: argparse.Namespace) -> Workspace:
    """Open the workspace the ``-w/--workspace`` option names (the current folder by default)."""
    return Workspace.open(Path(args.workspace))


def metric_summary(metrics: Mapping[str, Any]) -> str:
    """Return the headline figures of a version's metrics, e.g. ``span F1 0.71 (cv)``."""
    parts = []
    for key, tag in (("cross_validation", "cv"), ("evaluation_sample", "eval")):
        found = metrics.get(key) or {}
        span = found.get("span_f1") if isinstance(found, dict) else None
        if isinstance(span, dict):
            span = span.get("mean")
        if isinstance(span, (int, float)):
            parts.append(f"span F1 {span:.2f} ({tag})")
    return "; ".join(parts) or "not measured"


def print_warnings(console: Console, warnings: Iterable[str]) -> None:
    """Print each warning on its own line."""
    for warning in warnings:
        console.print(f"[yellow]warning:[/] {warning}")


def print_notes(console: Console, notes: Iterable[str]) -> None:
    """Print each note on its own line."""
    for note in notes:
        console.print(f"[yellow]note:[/] {note}")
