"""Charts of liked, disliked and wanted traits by each grouping, with Wilson error bars.

For every outcome (liked, disliked, wanted) and every grouping the export compares
(all individuals, then gender, role, district, age group and any configured column):
horizontal bars of the share of respondents, the 95% Wilson interval as error bars,
and each group's n in its label. Drawn with matplotlib as PNG and SVG, and as native
bar charts with custom error bars on a sheet of the workbook. Focus groups are never
mixed with individuals: they have no bars here (see the pivot's own column).

The figures are read from the summary table (:func:`extractor.report.summary.trait_summary`),
so chart, pivot and summary always agree.
"""

from __future__ import annotations

import re
import textwrap
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pandas as pd
from openpyxl.chart import BarChart, Reference
from openpyxl.chart.data_source import NumDataSource, NumRef
from openpyxl.chart.error_bar import ErrorBars
from openpyxl.worksheet.worksheet import Worksheet

from extractor.report.cells import HEADER_FONT, NOTE_FONT, append_row
from extractor.report.drawing import Call
from extractor.report.pivot import wide_groupings
from extractor.report.summary import ALL_INDIVIDUALS, NOT_RECORDED
from extractor.workspace.files import atomic_path

if TYPE_CHECKING:  # matplotlib is slow to import; only the drawing functions load it
    from matplotlib.figure import Figure

CHART_OUTCOMES = {
    "like": "praising a variety on",
    "dislike": "faulting a variety on",
    "want": "wanting a variety better on",
}
"""Summary outcome -> the words of its chart title. A stance judges the variety on the
trait, so a trait named by a fault reads right: "praising a variety on bitterness" is
what "bitterness, liked" means (not bitter), where "liking bitterness" read the other way."""
TOP = 10
"""Traits per chart: the most frequent for the outcome among all individuals."""
WRAP = 32
"""Trait names longer than this wrap onto further lines of the axis label."""
DPI = 150
"""Resolution of the PNG charts (dots per inch)."""
PNG_OPTIONS: dict[str, Any] = {"pil_kwargs": {"compress_level": 1}}
"""PNG compression: level 1 (of 9) encodes the same pixels in about two thirds of the
time of Pillow's default 6, for files about an eighth larger (measured on the demo's charts)."""


@dataclass(frozen=True)
class GroupChart:
    """One chart's figures: one row per trait and group, in drawing order.

    ``data`` columns: ``Trait``, ``Concept ID``, ``Group`` (with its n),
    ``Respondents``, ``Respondents in group``, ``Share``, ``95% CI low``, ``95% CI high``.
    """

    outcome: str
    grouping: str | None
    title: str
    data: pd.DataFrame

    @property
    def name(self) -> str:
        """A file name stem: ``liked_by_gender``, ``wanted_all``."""
        stance = {"like": "liked", "dislike": "disliked", "want": "wanted"}[self.outcome]
        if self.grouping is None:
            return f"{stance}_all"
        return f"{stance}_by_{re.sub(r'[^A-Za-z0-9]+', '_', self.grouping).strip('_').lower()}"


def _title(outcome: str, grouping: str | None, shown: int = 0, named: int = 0) -> str:
    """Return a chart's title; one that shows ``shown`` of ``named`` traits says so."""
    verb = CHART_OUTCOMES[outcome]
    base = f"Share of individual respondents {verb} each trait"
    if named > shown:
        done = {"like": "praised", "dislike": "faulted", "want": "wanted better"}[outcome]
        base += f" (the {shown} most often {done}, of {named})"
    return f"{base}, by {grouping}" if grouping else base


def chart_figures(
    summary: pd.DataFrame, outcome: str, grouping: str | None, top: int = TOP
) -> GroupChart:
    """Return the figures of one chart from the summary table.

    Traits are the ``top`` with the largest share among all individuals for
    ``outcome`` (ties by concept ID); groups are the grouping's recorded values.
    """
    part = summary.loc[summary["Outcome"] == outcome]
    overall = part.loc[(part["Grouping"] == ALL_INDIVIDUALS) & (part["Respondents"] > 0)]
    named = len(overall)
    overall = overall.sort_values(["Share", "Concept ID"], ascending=[False, True]).head(top)
    if grouping is None:
        rows = overall.assign(
            Group=[f"all individuals (n={n})" for n in overall["Respondents in group"]]
        )
    else:
        rows = part.loc[
            (part["Grouping"] == grouping)
            & (part["Group"] != NOT_RECORDED)
            & part["Concept ID"].isin(overall["Concept ID"])
        ]
        rows = rows.assign(
            Group=[
                f"{g} (n={n})"
                for g, n in zip(rows["Group"], rows["Respondents in group"], strict=True)
            ]
        )
        rank = {c: i for i, c in enumerate(overall["Concept ID"])}
        rows = rows.sort_values("Concept ID", key=lambda s: s.map(rank), kind="stable")
    columns = [
        "Trait",
        "Concept ID",
        "Group",
        "Respondents",
        "Respondents in group",
        "Share",
        "95% CI low",
        "95% CI high",
    ]
    data = rows[columns].reset_index(drop=True)
    data["Trait"] = [
        f"{t} ({c})" if isinstance(t, str) else c
        for t, c in zip(data["Trait"], data["Concept ID"], strict=True)
    ]
    return GroupChart(outcome, grouping, _title(outcome, grouping, len(overall), named), data)


def all_charts(summary: pd.DataFrame, groupings: list[str]) -> list[GroupChart]:
    """Return every chart: per outcome, all individuals then each grouping (not too wide)."""
    if summary.empty:
        return []
    wide = set(wide_groupings(summary))
    keep = [g for g in groupings if g not in wide]
    return [
        chart_figures(summary, outcome, grouping)
        for outcome in CHART_OUTCOMES
        for grouping in (None, *keep)
    ]


def headline_chart(charts: list[GroupChart], groupings: list[str]) -> GroupChart:
    """Return the chart kept beside the workbook: liked traits by the first charted grouping.

    It is one of ``charts`` (the same bars, Wilson intervals and n per group); a grouping
    left out for its many values is passed over, and with none left it is all individuals.
    """
    liked = {chart.grouping: chart for chart in charts if chart.outcome == "like"}
    for grouping in (*groupings, None):
        if grouping in liked:
            return liked[grouping]
    return GroupChart("like", None, _title("like", None), pd.DataFrame())


def _wide(data: pd.DataFrame) -> tuple[list[str], list[str], pd.DataFrame, pd.DataFrame]:
    """Return traits, groups and trait x group tables of shares and of error half-widths."""
    traits = list(dict.fromkeys(data["Trait"]))
    groups = list(dict.fromkeys(data["Group"]))
    share = data.pivot(index="Trait", columns="Group", values="Share").reindex(
        index=traits, columns=groups
    )
    low = data.pivot(index="Trait", columns="Group", values="95% CI low").reindex(
        index=traits, columns=groups
    )
    high = data.pivot(index="Trait", columns="Group", values="95% CI high").reindex(
        index=traits, columns=groups
    )
    return traits, groups, share, pd.concat({"minus": share - low, "plus": high - share}, axis=1)


def chart_figure(chart: GroupChart) -> Figure:
    """Return one chart as a matplotlib figure: horizontal bars with Wilson error bars.

    The caller closes it (``matplotlib.pyplot.close``).
    """
    # matplotlib is slow to import and only needed here
    import matplotlib

    matplotlib.use("Agg")  # no display on servers; set before pyplot is imported
    import matplotlib.pyplot as plt

    data = chart.data
    if data.empty:
        fig, ax = plt.subplots(figsize=(7, 1.6), layout="constrained")
        ax.axis("off")
        ax.text(0.5, 0.5, "No respondent said this of a linked trait.", ha="center", va="center")
        ax.set_title(textwrap.fill(chart.title, 70), fontsize=10)
    else:
        traits, groups, share, err = _wide(data)
        labels = [textwrap.fill(t, WRAP) for t in traits]
        lines = max(label.count("\n") + 1 for label in labels)
        per_trait = max(0.2 * len(groups), 0.15 * lines) + 0.2
        rows_of_legend = -(-len(groups) // 3)
        fig, ax = plt.subplots(
            figsize=(8.5, 1.3 + per_trait * len(traits) + 0.2 * rows_of_legend),
            layout="constrained",
        )
        height = 0.8 / len(groups)
        for j, group in enumerate(groups):
            ys = [i + (j - (len(groups) - 1) / 2) * height for i in range(len(traits))]
            xerr = [err["minus"][group].to_numpy() * 100, err["plus"][group].to_numpy() * 100]
            ax.barh(
                ys,
                share[group].to_numpy() * 100,
                height=height * 0.9,
                xerr=xerr,
                capsize=2,
                error_kw={"elinewidth": 0.8, "ecolor": "0.25"},
                label=group,
            )
        ax.set_yticks(range(len(traits)), labels=labels, fontsize=8)
        ax.invert_yaxis()  # the most frequent trait at the top
        top = float((share + err["plus"]).max().max()) * 100
        ax.set_xlim(0, min(100.0, 10 * (int(top // 10) + 1)))
        ax.set_xlabel("% of respondents in the group (bars: 95% Wilson interval)", fontsize=8)
        ax.set_title(textwrap.fill(chart.title, 70), fontsize=10)
        ax.grid(axis="x", linewidth=0.4, alpha=0.5)
        fig.legend(fontsize=7, loc="outside lower center", ncol=min(3, len(groups)), frameon=False)
    return fig


def draw_chart(chart: GroupChart, png: Path, svg: Path | None = None) -> None:
    """Draw one chart as horizontal bars with Wilson error bars; write PNG (and SVG)."""
    import matplotlib.pyplot as plt

    fig = chart_figure(chart)
    # Lay the figure out once, at the PNG's resolution, then freeze it: savefig would
    # otherwise run the constrained layout again (a whole extra draw) for each format.
    fig.set_dpi(DPI)
    fig.draw_without_rendering()
    fig.set_layout_engine("none")
    for target in (png, svg):
        if target is None:
            continue
        fmt = target.suffix.lstrip(".")
        with atomic_path(target) as temp:
            fig.savefig(temp, dpi=DPI, format=fmt, **(PNG_OPTIONS if fmt == "png" else {}))
    plt.close(fig)


def chart_file_calls(charts: list[GroupChart], folder: Path) -> list[Call]:
    """Return the calls that draw each chart as ``NAME.png`` and ``NAME.svg`` into ``folder``.

    The folder is made here; :class:`extractor.report.drawing.Drawing` runs the calls.
    """
    folder.mkdir(parents=True, exist_ok=True)
    return [
        (draw_chart, (chart, folder / f"{chart.name}.png", folder / f"{chart.name}.svg"))
        for chart in charts
    ]


def _native_chart(
    ws: Worksheet, chart: GroupChart, top_row: int, n_groups: int, n_traits: int
) -> BarChart:
    """Return a native bar chart over the block at ``top_row`` with custom error bars."""
    bar = BarChart()
    bar.type = "bar"
    bar.grouping = "clustered"
    bar.title = chart.title
    bar.y_axis.title = "Share of respondents (95% Wilson interval)"
    bar.y_axis.number_format = "0%"
    bar.y_axis.scaling.min = 0
    bar.y_axis.scaling.max = 1
    bar.x_axis.scaling.orientation = "maxMin"  # the most frequent trait at the top
    bar.height = 4 + 0.5 * n_traits * max(1, n_groups) ** 0.5
    bar.width = 22
    first, last = top_row + 1, top_row + n_traits
    values = Reference(ws, min_col=2, max_col=1 + n_groups, min_row=top_row, max_row=last)
    bar.add_data(values, titles_from_data=True)
    bar.set_categories(Reference(ws, min_col=1, min_row=first, max_row=last))
    sheet = ws.title.replace("'", "''")
    for j, series in enumerate(bar.series):
        minus_col = 2 + n_groups + j
        plus_col = 2 + 2 * n_groups + j

        def ref(col: int) -> NumDataSource:
            letter = ws.cell(row=1, column=col).column_letter
            return NumDataSource(numRef=NumRef(f=f"'{sheet}'!${letter}${first}:${letter}${last}"))

        series.errBars = ErrorBars(
            errBarType="both", errValType="cust", minus=ref(minus_col), plus=ref(plus_col)
        )
    return bar


def write_charts_sheet(ws: Worksheet, charts: list[GroupChart]) -> None:
    """Write each chart's figures as a block (shares, minus and plus half-widths), and the chart."""
    append_row(
        ws,
        [
            "Charts: shares of individual respondents with 95% Wilson intervals; the "
            "blocks hold the figures each chart draws. Focus groups are not charted."
        ],
    )
    ws.cell(row=1, column=1).font = NOTE_FONT
    row = 3
    for chart in charts:
        if chart.data.empty:
            continue
        traits, groups, share, err = _wide(chart.data)
        ws.cell(row=row - 1, column=1, value=chart.title).font = HEADER_FONT
        header = [
            "Trait",
            *groups,
            *(f"{g}: minus" for g in groups),
            *(f"{g}: plus" for g in groups),
        ]
        for j, h in enumerate(header, start=1):
            ws.cell(row=row, column=j, value=h).font = HEADER_FONT
        for i, trait in enumerate(traits, start=1):
            values = [
                *share.loc[trait].fillna(0.0),
                *err["minus"].loc[trait].fillna(0.0),
                *err["plus"].loc[trait].fillna(0.0),
            ]
            ws.cell(row=row + i, column=1, value=trait)
            for j, v in enumerate(values, start=2):
                cell = ws.cell(row=row + i, column=j, value=float(v))
                cell.number_format = "0.0%"
        bar = _native_chart(ws, chart, row, len(groups), len(traits))
        ws.add_chart(bar, ws.cell(row=row, column=len(header) + 2).coordinate)
        row += max(len(traits) + 4, int(bar.height * 2) + 3)
    ws.column_dimensions["A"].width = 40
