"""Reference figures for the report tests, computed apart from the report code.

Counts come straight from the mention rows with plain Python; intervals from
statsmodels' ``proportion_confint(method="wilson")`` (the outside reference for the
Wilson score interval).
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

import pandas as pd
from statsmodels.stats.proportion import proportion_confint

STANCE = {"like": "liked", "dislike": "disliked", "want": "wanted"}


def holders(mentions: pd.DataFrame, concept: str, outcome: str) -> set[str]:
    """Respondents with a mention of ``concept`` in the outcome's stance (any, for mention)."""
    found = set()
    for row in mentions.to_dict("records"):
        if row["concept_id"] != concept:
            continue
        if outcome == "mention" or row["stance"] == STANCE[outcome]:
            found.add(str(row["respondent"]))
    return found


def share(k: int, n: int) -> tuple[float, float, float]:
    """(share, low, high) with statsmodels' Wilson interval."""
    low, high = proportion_confint(k, n, alpha=0.05, method="wilson")
    return k / n, float(low), float(high)


def group_members(respondents: pd.DataFrame, column: str | None, value: str | None) -> set[str]:
    """Individuals (not focus groups) with ``column == value``; all of them for None."""
    out = set()
    for row in respondents.to_dict("records"):
        if row.get("is_group"):
            continue
        if column is None or row.get(column) == value:
            out.add(str(row["respondent"]))
    return out


def counts(
    mentions: pd.DataFrame, members: Iterable[str], concept: str, outcome: str
) -> tuple[int, int]:
    """(k, n): members holding the outcome for the concept, and the members."""
    members = set(members)
    return len(holders(mentions, concept, outcome) & members), len(members)


def assert_no_overlap(fig: Any) -> None:
    """Assert that no two texts of a matplotlib figure overlap, and close it.

    Every tick label, axis label, title and legend entry is measured with the
    figure's own renderer (matplotlib's ``get_window_extent``).
    """
    import matplotlib.pyplot as plt
    from matplotlib.text import Text

    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    texts = [
        t
        for t in fig.findobj(Text)
        if t.get_visible() and t.get_text().strip() and t.get_figure() is not None
    ]
    boxes = [(t.get_text(), t.get_window_extent(renderer)) for t in texts]
    try:
        for i, (a, box_a) in enumerate(boxes):
            for b, box_b in boxes[i + 1 :]:
                overlap = box_a.overlaps(box_b) and a != b
                assert not overlap, f"labels overlap: {a!r} and {b!r}"
            # every text lies inside the figure
            w, h = fig.canvas.get_width_height()
            assert box_a.x0 >= -1 and box_a.y0 >= -1 and box_a.x1 <= w + 1 and box_a.y1 <= h + 1, a
    finally:
        plt.close(fig)
