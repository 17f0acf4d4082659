"""The chart of liked traits by the first grouping: its data and a PNG drawn with matplotlib.

The workbook's native charts, and the charts of every outcome and grouping, are in
:mod:`extractor.report.group_charts`; this PNG is kept beside the workbook as before.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from extractor.report.group_charts import PNG_OPTIONS
from extractor.report.summary import ALL_INDIVIDUALS, NOT_RECORDED
from extractor.workspace.files import atomic_path


def chart_data(
    summary: pd.DataFrame, grouping: str | None, outcome: str = "like", top: int = 10
) -> pd.DataFrame:
    """Return shares for the ``top`` concepts by overall share, one column per group.

    Concepts are ranked by their share among all individuals for ``outcome``;
    with ``grouping`` None the only column is all individuals.
    """
    part = summary.loc[summary["Outcome"] == outcome]
    overall = part.loc[part["Grouping"] == ALL_INDIVIDUALS]
    overall = overall.loc[overall["Respondents"] > 0]
    overall = overall.sort_values(["Share", "Concept ID"], ascending=[False, True]).head(top)
    names = [
        f"{t} ({c})" if isinstance(t, str) else c
        for t, c in zip(overall["Trait"], overall["Concept ID"], strict=True)
    ]
    out = pd.DataFrame({"Trait": names})
    if grouping is None:
        out["all individuals"] = overall["Share"].to_numpy()
        return out
    by = part.loc[(part["Grouping"] == grouping) & (part["Group"] != NOT_RECORDED)]
    for value in sorted(by["Group"].unique()):
        shares = by.loc[by["Group"] == value].set_index("Concept ID")["Share"]
        out[value] = overall["Concept ID"].map(shares).fillna(0.0).to_numpy()
    return out


def chart_title(grouping: str | None) -> str:
    """Return the chart's title, naming the grouping that splits the bars."""
    if grouping:
        return f"Share of individual respondents liking each trait, by {grouping}"
    return "Share of individual respondents liking each trait"


def _save_png(fig: Any, path: Path) -> None:
    """Save atomically: a kill or a full disk leaves the previous PNG in place."""
    with atomic_path(path) as temp:
        fig.savefig(temp, dpi=150, format="png", **PNG_OPTIONS)


def write_chart_png(data: pd.DataFrame, path: Path, title: str) -> None:
    """Draw ``data`` from :func:`chart_data` as a horizontal grouped bar chart PNG."""
    # matplotlib is slow to import and only needed here
    import matplotlib

    matplotlib.use("Agg")  # no display on servers; set before pyplot is imported
    import matplotlib.pyplot as plt

    series = [c for c in data.columns if c != "Trait"]
    if data.empty or not series:
        fig, ax = plt.subplots(figsize=(6, 2))
        ax.axis("off")
        ax.text(0.5, 0.5, "No linked traits to chart.", ha="center", va="center")
        _save_png(fig, path)
        plt.close(fig)
        return
    fig, ax = plt.subplots(figsize=(8, 0.5 + 0.45 * max(1, len(data)) * max(1, len(series)) / 1.5))
    height = 0.8 / max(1, len(series))
    ypos = np.arange(len(data))
    for i, name in enumerate(series):
        ax.barh(ypos + i * height, data[name].to_numpy() * 100, height=height, label=str(name))
    ax.set_yticks(ypos + height * (len(series) - 1) / 2, labels=data["Trait"].tolist())
    ax.invert_yaxis()  # top trait at the top, as in the workbook table
    ax.set_xlabel("% of respondents")
    top = float(np.nanmax(data[series].to_numpy(dtype=float))) * 100 if len(data) else 0.0
    ax.set_xlim(0, min(100.0, max(10.0, math.ceil(top * 1.15 / 10) * 10)))
    ax.set_title(title)
    if len(series) > 1:
        ax.legend()
    fig.tight_layout()
    _save_png(fig, path)
    plt.close(fig)
