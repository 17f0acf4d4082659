"""The Excel workbook that analysts open: one sheet per table, a chart and an About sheet.

The tables come from :mod:`extractor.report.tables` and :mod:`extractor.report.summary`
over frames described in :mod:`extractor.report.inputs`; cells are written by
:mod:`extractor.report.cells`, so user text is never read as a formula.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import datetime
from pathlib import Path
from typing import Any

import pandas as pd
from openpyxl import Workbook

from extractor.errors import InputError
from extractor.nlp.identifiers import phone_formats
from extractor.report.about import RunFacts, about_table, export_counts
from extractor.report.cells import HEADER_FONT, write_table
from extractor.report.drawing import Call, Drawing
from extractor.report.group_charts import (
    GroupChart,
    all_charts,
    chart_file_calls,
    draw_chart,
    headline_chart,
    write_charts_sheet,
)
from extractor.report.inputs import prepare
from extractor.report.pivot import write_pivot_sheet
from extractor.report.privacy import (
    DEFAULT_IDENTIFYING,
    PrivacyOptions,
    dropped_columns,
    identifying_columns,
)
from extractor.report.quotes import QUOTE_NOTES, quotes_by_trait
from extractor.report.rollup import has_hierarchy, parent_summary
from extractor.report.summary import SUMMARY_NOTES, trait_summary
from extractor.report.tables import (
    mention_evidence,
    preferred_traits,
    trait_matrix,
    unlinked_terms,
)
from extractor.report.varieties import (
    HEAD_TO_HEAD_NOTES,
    VARIETY_NOTES,
    head_to_head,
    variety_table,
)
from extractor.workspace.files import atomic_path

SHEETS = {
    "preferred": "Traits per respondent",
    "matrix": "Respondent x trait",
    "mentions": "Mentions",
    "summary": "Summary by group",
    "pivot": "Shares by group",
    "parents": "Summary by parent trait",
    "varieties": "Traits by variety",
    "head_to_head": "Head to head",
    "quotes": "Quotes by trait",
    "unlinked": "Unlinked terms",
    "chart": "Charts",
    "about": "About",
}


def _check_target(path: Path, group_by: Sequence[str], pseudonymise: PrivacyOptions | None) -> None:
    """Raise InputError for a path that is not a writable .xlsx or an identifying grouping."""
    if path.suffix.lower() != ".xlsx":
        raise InputError(f"The workbook file must end in .xlsx; got {path.name!r}.")
    if not path.parent.is_dir():
        raise InputError(f"The folder {str(path.parent)!r} for the workbook does not exist.")
    if pseudonymise is not None:
        dropped = identifying_columns(group_by, DEFAULT_IDENTIFYING + pseudonymise.drop_columns)
        if dropped:
            raise InputError(
                f"The grouping column {dropped[0]!r} is dropped as identifying when "
                "pseudonymising; remove it from the grouping or the drop list."
            )


def _write_about_sheet(wb: Workbook, frame: pd.DataFrame) -> None:
    ws = wb.create_sheet(SHEETS["about"])
    write_table(ws, frame, freeze_columns=1)
    ws.column_dimensions["B"].width = 60
    ws.column_dimensions["C"].width = 60
    ws.cell(row=2, column=1).font = HEADER_FONT  # the caution row stands out
    ws.cell(row=2, column=2).font = HEADER_FONT


def _privacy_rows(
    respondents: pd.DataFrame, pseudonymise: PrivacyOptions | None
) -> list[tuple[str, str]]:
    """Return the About rows of a pseudonymised export: columns left out, phones screened."""
    if pseudonymise is None:
        return []
    dropped = dropped_columns(respondents, pseudonymise)
    listed = "; ".join(f"{c} ({why})" for c, why in dropped) or "none"
    formats = phone_formats(pseudonymise.phone_regions)
    if not pseudonymise.phone_regions:
        formats += "; set phone_regions under [export] in traits.toml for national formats"
    return [
        ("Columns dropped as identifying", listed),
        ("Phone formats screened", formats),
    ]


def _save(wb: Workbook, path: Path) -> None:
    """Save atomically: a kill or a full disk leaves the previous workbook in place."""
    with atomic_path(path) as temp:
        wb.save(temp)


def _parent_sheet(
    m: pd.DataFrame, r: pd.DataFrame, concepts: pd.DataFrame, group_by: Sequence[str]
) -> list[tuple[str, pd.DataFrame, Sequence[str], int]]:
    """Return the parent-level summary sheet when the concept list has parents, else none."""
    if not has_hierarchy(concepts):
        return []
    first = (
        "Traits rolled up to the top of the concept list: a respondent counts once per "
        "parent trait, however many of its traits they mentioned."
    )
    notes = (first, *SUMMARY_NOTES)
    return [(SHEETS["parents"], parent_summary(m, r, concepts, group_by), notes, 2)]


def _write_sheets(
    path: Path,
    m: pd.DataFrame,
    r: pd.DataFrame,
    concepts: pd.DataFrame,
    summary: pd.DataFrame,
    charts: list[GroupChart],
    group_by: list[str],
    about: RunFacts,
    about_rows: list[tuple[str, Any]],
) -> None:
    """Write every sheet of the workbook from the prepared frames and save it at ``path``."""
    grouping = group_by[0] if group_by else None
    tables = [
        (SHEETS["preferred"], preferred_traits(m, r, concepts), (), 1),
        (SHEETS["matrix"], trait_matrix(m, r, concepts), (), 1),
        (SHEETS["mentions"], mention_evidence(m, r, concepts), (), 1),
        (SHEETS["summary"], summary, SUMMARY_NOTES, 2),
        *_parent_sheet(m, r, concepts, group_by),
        (SHEETS["varieties"], variety_table(m, r, concepts), VARIETY_NOTES, 1),
        (SHEETS["head_to_head"], head_to_head(m, r, concepts), HEAD_TO_HEAD_NOTES, 1),
        (SHEETS["quotes"], quotes_by_trait(m, r, concepts, grouping), QUOTE_NOTES, 2),
        (SHEETS["unlinked"], unlinked_terms(m), (), 1),
    ]
    wb = Workbook()
    wb.remove(wb.active)
    for title, frame, notes, freeze in tables:
        write_table(wb.create_sheet(title), frame, notes=notes, freeze_columns=freeze)
    write_pivot_sheet(wb.create_sheet(SHEETS["pivot"], index=4), summary)
    write_charts_sheet(wb.create_sheet(SHEETS["chart"]), charts)
    _write_about_sheet(wb, about_table(about, export_counts(m, r), about_rows))
    _save(wb, path)


def write_workbook(
    path: Path | str,
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    concepts: pd.DataFrame,
    about: RunFacts,
    *,
    group_by: Sequence[str] = (),
    min_confidence: float | None = None,
    pseudonymise: PrivacyOptions | None = None,
    chart_png: Path | str | None = None,
    chart_dir: Path | str | None = None,
) -> int:
    """Write the analysis workbook (.xlsx) and, optionally, its charts as PNG and SVG.

    Args:
        path: Where to write the ``.xlsx``; its folder must exist.
        mentions: Mention rows (see :mod:`extractor.report.inputs`).
        respondents: One row per respondent with ``is_group`` and metadata.
        concepts: The concept list: ``concept_id``, ``label``, ``parent``.
        about: Facts about the run for the About sheet.
        group_by: Respondent columns to break shares down by (e.g. gender, role);
            the first one also splits the chart.
        min_confidence: Drop predicted mentions below this tagger confidence.
        pseudonymise: Pseudonyms, screened text and dropped identifying columns.
        chart_png: Where to write the chart of liked traits by the first grouping as a PNG
            (the first with at most 12 values; it is that chart of ``chart_dir``).
        chart_dir: A folder to write every chart of the Charts sheet into, as PNG and SVG
            (liked, disliked and wanted, by each grouping).

    Returns:
        The number of mentions exported (after the confidence floor), as the About
        sheet states it.

    Raises:
        InputError: If a column is missing, a value is out of range, a grouping
            column is unknown or dropped as identifying, or the folder is missing.
    """
    path = Path(path)
    group_by = list(group_by)
    _check_target(path, group_by, pseudonymise)
    m, r = prepare(mentions, respondents, min_confidence=min_confidence, pseudonymise=pseudonymise)
    summary = trait_summary(m, r, concepts, group_by)
    charts = all_charts(summary, group_by)
    about_rows: list[tuple[str, Any]] = [
        ("Minimum tagger confidence", min_confidence if min_confidence is not None else "none"),
        ("Pseudonymised", "yes" if pseudonymise is not None else "no"),
        *_privacy_rows(respondents, pseudonymise),
        ("Written", datetime.now().isoformat(timespec="seconds")),
    ]
    # The chart files are drawn by worker processes while the sheets are written.
    calls: list[Call] = []
    if chart_png is not None:
        calls.append((draw_chart, (headline_chart(charts, group_by), Path(chart_png))))
    if chart_dir is not None:
        calls.extend(chart_file_calls(charts, Path(chart_dir)))
    with Drawing(calls) as drawing:
        _write_sheets(path, m, r, concepts, summary, charts, group_by, about, about_rows)
        drawing.wait()
    return len(m)
