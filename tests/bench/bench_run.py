"""Benchmark of `traits run` on a fresh demo, against a baseline revision in the same run.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/bench_run.py [--baseline main] [--repeats 3]

Each run starts from a new temporary folder holding only a copy of ``sample_interviews/``
(what the README's quick start runs on: no store, no model, no export yet) and runs
``python -m extractor run -q`` there, as a separate process. The code of this working
tree and the code of the baseline revision (``git archive`` of it into a temporary
folder) take turns, baseline then this tree, ``--repeats`` times, so that both see the
same load on a shared machine; the figures are the median, minimum and maximum of each,
and the ratio this tree / baseline pair by pair (below 1: this tree is faster). Goal:
`traits run` on a fresh demo within 30 s (wall clock). Wall and CPU seconds and peak
memory are those of the run's process, as the operating system accounts them.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]


def baseline_tree(revision: str, into: Path) -> Path:
    """Write the files of ``revision`` into ``into`` and return it."""
    archive = subprocess.run(
        ["git", "-C", str(ROOT), "archive", revision], check=True, capture_output=True
    ).stdout
    into.mkdir(parents=True)
    subprocess.run(["tar", "-x", "-C", str(into)], input=archive, check=True)
    return into


def one_run(code: Path, scratch: Path) -> dict[str, float]:
    """Run `traits run` with the code in ``code`` on a fresh copy of the demo; return figures."""
    folder = Path(tempfile.mkdtemp(dir=scratch))
    shutil.copytree(code / "sample_interviews", folder / "sample_interviews")
    env = dict(os.environ, PYTHONPATH=str(code))
    start = time.perf_counter()
    proc = subprocess.Popen(
        [sys.executable, "-m", "extractor", "run", "-q"],
        cwd=folder,
        env=env,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - start
    proc.returncode = os.waitstatus_to_exitcode(status)
    errors = proc.stderr.read().decode("utf-8", "replace") if proc.stderr else ""
    if proc.returncode != 0:
        raise SystemExit(f"traits run failed in {folder} with code {code}:\n{errors}")
    workbook = folder / "exports" / "preferred_traits.xlsx"
    if not workbook.is_file():
        raise SystemExit(f"traits run wrote no workbook in {folder}")
    shutil.rmtree(folder)
    return {
        "wall_s": wall,
        "cpu_s": usage.ru_utime + usage.ru_stime,
        "peak_mb": usage.ru_maxrss / 1024,  # Linux reports KiB
    }


def spread(values: list[float]) -> dict[str, float]:
    """Return median, minimum and maximum."""
    return {"median": statistics.median(values), "min": min(values), "max": max(values)}


def main() -> None:
    """Run both trees in turn and print their figures and ratios as a table and JSON."""
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--baseline", default="main", help="git revision to compare with")
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory(prefix="bench_run_") as tmp:
        scratch = Path(tmp)
        base = baseline_tree(args.baseline, scratch / "baseline")
        runs: dict[str, list[dict[str, float]]] = {"baseline": [], "this tree": []}
        one_run(ROOT, scratch)  # warm-up: files read once into the page cache
        for i in range(args.repeats):
            for name, code in (("baseline", base), ("this tree", ROOT)):
                runs[name].append(one_run(code, scratch))
                found = runs[name][-1]
                print(
                    f"repeat {i + 1}, {name}: {found['wall_s']:.1f} s wall, "
                    f"{found['cpu_s']:.1f} s CPU, peak {found['peak_mb']:.0f} MB",
                    flush=True,
                )
    figures: dict[str, Any] = {"baseline": args.baseline, "repeats": args.repeats}
    for name, measured in runs.items():
        for key in ("wall_s", "cpu_s", "peak_mb"):
            figures[f"{name} {key}"] = spread([r[key] for r in measured])
    for key in ("wall_s", "cpu_s"):
        pairs = zip(runs["baseline"], runs["this tree"], strict=True)
        ratios = [new[key] / old[key] for old, new in pairs]
        figures[f"ratio {key}"] = spread(ratios)
    for key, value in figures.items():
        if isinstance(value, dict):
            print(
                f"{key:>22}: median {value['median']:.2f} "
                f"(min {value['min']:.2f}, max {value['max']:.2f})"
            )
    print(json.dumps(figures, indent=1))


if __name__ == "__main__":
    main()
