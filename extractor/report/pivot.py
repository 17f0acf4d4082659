"""The pivot sheet: traits x groups, each cell a share of respondents with its interval.

The long "Summary by group" table holds every figure for filtering; this sheet puts
the same figures side by side for reading: one row per trait and outcome, one column
per group, ``42% (31–54%)`` in each cell, and beside each grouping the adjusted
p-value of its test of difference. Cells resting on one or two respondents are
shaded; groupings whose difference is significant after adjustment are bold.
"""

from __future__ import annotations

from typing import NamedTuple

import pandas as pd
from openpyxl.styles import Font, PatternFill
from openpyxl.worksheet.worksheet import Worksheet

from extractor.report.cells import write_table
from extractor.report.stats import format_p, format_share
from extractor.report.summary import ALL_INDIVIDUALS, FOCUS_GROUPS, NOT_RECORDED

PIVOT_OUTCOMES = {"like": "liked", "dislike": "disliked", "want": "wanted", "mention": "mentioned"}
"""Summary outcome -> how the pivot names it, in sheet order."""
MAX_GROUPS = 12
"""A grouping with more recorded values than this is left out of the pivot and charts:
one column per value would be unreadable. Map its spellings with ``[metadata] values``."""
SIGNIFICANT = 0.05
"""Adjusted p below which a grouping's cells are bold (common practice)."""
SMALL_FILL = PatternFill("solid", fgColor="FCE8B2")
BOLD = Font(bold=True)
PIVOT_NOTES = (
    "Each cell: share of the group's respondents (k of n people, not mentions) and its "
    "95% Wilson interval. Focus groups are counted as groups, in their own column.",
    "Shaded cells rest on one or two respondents: read them as single voices. Bold rows "
    f"of a grouping: its groups differ (Benjamini-Hochberg adjusted p < {SIGNIFICANT}); "
    "the test is named on the Summary by group sheet.",
)


class Flags(NamedTuple):
    """Cells to mark, as (row index, column name) of the pivot frame."""

    small: list[tuple[int, str]]
    significant: list[tuple[int, str]]


def group_sizes(summary: pd.DataFrame) -> pd.DataFrame:
    """Return one row per grouping and group: ``Grouping``, ``Group``, ``Respondents in group``."""
    first = summary.loc[summary["Concept ID"] == summary["Concept ID"].iloc[0]]
    first = first.loc[first["Outcome"] == first["Outcome"].iloc[0]]
    return first[["Grouping", "Group", "Respondents in group"]].reset_index(drop=True)


def wide_groupings(summary: pd.DataFrame) -> list[str]:
    """Return the groupings with more than :data:`MAX_GROUPS` recorded values."""
    if summary.empty:
        return []
    sizes = group_sizes(summary)
    sizes = sizes.loc[sizes["Group"] != NOT_RECORDED]
    counts = sizes.groupby("Grouping", sort=False).size()
    return [str(g) for g, n in counts.items() if n > MAX_GROUPS]


def _group_columns(summary: pd.DataFrame) -> list[tuple[str, str, str]]:
    """Return (grouping, group, column header) for every column of the pivot, in order."""
    sizes = group_sizes(summary)
    wide = set(wide_groupings(summary))
    out = []
    for grouping, group, n in zip(
        sizes["Grouping"], sizes["Group"], sizes["Respondents in group"], strict=True
    ):
        if group == NOT_RECORDED or grouping in wide:
            continue
        if grouping == ALL_INDIVIDUALS:
            header = f"all individuals (n={n})"
        elif grouping == FOCUS_GROUPS:
            header = f"focus groups (n={n})"
        else:
            header = f"{grouping}: {group} (n={n})"
        out.append((grouping, group, header))
    return out


def pivot_table(summary: pd.DataFrame) -> tuple[pd.DataFrame, Flags]:
    """Return the pivot of a :func:`~extractor.report.summary.trait_summary` frame.

    Rows: each trait and outcome that at least one respondent (or focus group) has;
    columns: Trait, Outcome, then each group's share text, and after each grouping's
    groups its adjusted p-value. Also returns the cells to shade and to make bold.
    """
    flags = Flags([], [])
    if summary.empty:
        return pd.DataFrame(columns=["Trait", "Outcome"]), flags
    columns = _group_columns(summary)
    groupings = list(dict.fromkeys(g for g, _, _ in columns))
    rows: list[dict[str, str]] = []
    keyed = summary.set_index(["Concept ID", "Outcome", "Grouping", "Group"])
    for (cid, outcome), part in summary.groupby(["Concept ID", "Outcome"], sort=False):
        if outcome not in PIVOT_OUTCOMES or part["Respondents"].sum() == 0:
            continue
        trait = part["Trait"].iloc[0]
        row = {"Trait": f"{trait} ({cid})" if isinstance(trait, str) else cid}
        row["Outcome"] = PIVOT_OUTCOMES[str(outcome)]
        i = len(rows)
        for grouping in groupings:
            for g, group, header in columns:
                if g != grouping:
                    continue
                rec = keyed.loc[(cid, outcome, grouping, group)]
                row[header] = format_share(
                    int(rec["Respondents"]), int(rec["Respondents in group"])
                )
                if isinstance(rec["Caution"], str):
                    flags.small.append((i, header))
            if grouping in (ALL_INDIVIDUALS, FOCUS_GROUPS):
                continue
            p = part.loc[part["Grouping"] == grouping, "p (BH-adjusted)"].iloc[0]
            row[f"{grouping}: p (adjusted)"] = format_p(float(p))
            if float(p) < SIGNIFICANT:
                flags.significant.extend((i, h) for g, _, h in columns if g == grouping)
        rows.append(row)
    order = {name: j for j, name in enumerate(PIVOT_OUTCOMES.values())}
    frame = pd.DataFrame(rows)
    # Traits stay in the summary's order (most respondents first); outcomes within a trait.
    frame["_trait"] = frame["Trait"].map(
        {t: j for j, t in enumerate(dict.fromkeys(frame["Trait"]))}
    )
    frame["_outcome"] = frame["Outcome"].map(order)
    frame = frame.sort_values(["_outcome", "_trait"], kind="stable")
    moved = {old: new for new, old in enumerate(frame.index)}
    flags = Flags(
        [(moved[i], c) for i, c in flags.small], [(moved[i], c) for i, c in flags.significant]
    )
    return frame.drop(columns=["_trait", "_outcome"]).reset_index(drop=True), flags


def too_many_groups_note(wide: list[str]) -> str:
    """Return the note naming the groupings left out for having too many values."""
    return (
        f"Left out for having more than {MAX_GROUPS} values: {', '.join(wide)}; read their "
        "spellings as fewer values with [metadata] values in traits.toml, or see the "
        "Summary by group sheet."
    )


def write_pivot_sheet(ws: Worksheet, summary: pd.DataFrame) -> None:
    """Write the pivot with its notes, shading small cells and bolding significant ones."""
    frame, flags = pivot_table(summary)
    wide = wide_groupings(summary)
    notes = (*PIVOT_NOTES, too_many_groups_note(wide)) if wide else PIVOT_NOTES
    write_table(ws, frame, notes=notes, freeze_columns=2)
    header_row = len(notes) + 2
    where = {name: j for j, name in enumerate(frame.columns, start=1)}
    for i, col in flags.small:
        ws.cell(row=header_row + 1 + i, column=where[col]).fill = SMALL_FILL
    for i, col in flags.significant:
        ws.cell(row=header_row + 1 + i, column=where[col]).font = BOLD
