"""The exports of a workspace: the workbook with its chart, and the plain formats.

Each reads the store into frames (:mod:`extractor.report.results`), applies the
workspace's export settings (grouping, confidence floor, pseudonymisation with the
workspace's own secret and names file) and hands the frames to a pure writer in
:mod:`extractor.report`.
"""

from __future__ import annotations

import base64
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from extractor.errors import InputError, ModelError
from extractor.jobs.inputs import (
    gold_examples,
    gold_implicit,
    gold_records,
    listed_names,
    phone_regions,
)
from extractor.jobs.tag import ensure_tagged
from extractor.report import formats
from extractor.report.indicators import indicator_table, write_indicators
from extractor.report.inputs import prepare
from extractor.report.pivot import MAX_GROUPS
from extractor.report.privacy import (
    DEFAULT_IDENTIFYING,
    PrivacyOptions,
    identifying_columns,
    new_secret,
)
from extractor.report.results import concept_frame, mention_frame, respondent_frame, run_facts
from extractor.report.rollup import roll_up
from extractor.report.workbook import write_workbook
from extractor.workspace import store
from extractor.workspace.folder import Workspace

SECRET_KEY = "pseudonym_secret"
"""Meta key of the workspace's pseudonym secret (base64); it never leaves the store."""
OTHER_FORMATS = {
    "csv": ".csv",
    "jsonl": ".jsonl",
    "conll": ".conll",
    "jsonld": ".jsonld",
    "labels": ".jsonl",
    "indicators": ".csv",
}
"""Export format -> file suffix, besides the workbook (``xlsx``)."""
LABEL_FORMATS = ("conll", "labels")
"""Formats of the labeled sentences themselves (not of a model's mentions)."""


@dataclass(frozen=True)
class ExportResult:
    """A file an export wrote, how many mentions (or labeled sentences) it holds, its charts.

    ``charts`` is the folder of the workbook's charts as PNG and SVG, when written;
    ``ungrouped`` the respondent columns the workbook could compare groups by but does
    not (see :func:`ungrouped_columns`); ``phone_regions`` the regions whose national
    phone plans a pseudonymised export screened (empty when the workspace knows none;
    None when the export is not pseudonymised).
    """

    path: Path
    mentions: int
    chart: Path | None = None
    charts: Path | None = None
    ungrouped: tuple[tuple[str, int], ...] = ()
    phone_regions: tuple[str, ...] | None = None


def workspace_secret(ws: Workspace) -> bytes:
    """Return the workspace's pseudonym key, creating it on first use; it never leaves the store."""
    found = store.get_meta(ws.conn, SECRET_KEY)
    if found is None:
        found = base64.b64encode(new_secret()).decode("ascii")
        store.set_meta(ws.conn, SECRET_KEY, found)
    return base64.b64decode(found)


def privacy_options(ws: Workspace, names_file: str | None = None) -> PrivacyOptions:
    """Return the pseudonymisation options from the workspace settings."""
    names = listed_names(ws, names_file)  # a bad names file stores nothing, not even the secret
    return PrivacyOptions(
        secret=workspace_secret(ws),
        names=names,
        drop_columns=ws.settings.export.identifying_columns,
        phone_regions=phone_regions(ws),
    )


def group_columns(
    ws: Workspace, respondents: pd.DataFrame, chosen: Sequence[str] | None = None
) -> list[str]:
    """Return the grouping columns to use: chosen ones, else the configured ones present."""
    wanted = list(chosen) if chosen else list(ws.settings.export.group_by)
    if chosen:
        missing = [c for c in wanted if c not in respondents.columns]
        if missing:
            raise InputError(
                f"No respondent column {missing[0]!r}; choose from "
                + ", ".join(c for c in respondents.columns if c not in ("respondent", "is_group"))
                + "."
            )
    return [c for c in wanted if c in respondents.columns]


def ungrouped_columns(
    ws: Workspace, respondents: pd.DataFrame, grouped: Sequence[str]
) -> tuple[tuple[str, int], ...]:
    """Return the respondent columns left out of the comparisons, with their values.

    A column counts when its individual respondents hold 2 to
    :data:`~extractor.report.pivot.MAX_GROUPS` distinct values and it is neither compared
    already nor identifying (by its name, as pseudonymised exports drop it): a ``region``
    column in a workspace whose ``group_by`` names ``district`` is one.
    """
    known = DEFAULT_IDENTIFYING + tuple(ws.settings.export.identifying_columns)
    columns = [c for c in respondents.columns if c not in ("respondent", "is_group", *grouped)]
    identifying = set(identifying_columns(columns, known))
    people = (
        respondents[~respondents["is_group"].astype(bool)]
        if "is_group" in respondents
        else respondents
    )
    found = []
    for column in columns:
        if column in identifying:
            continue
        values = {str(v).strip() for v in people[column].dropna() if str(v).strip()}
        if 2 <= len(values) <= MAX_GROUPS:
            found.append((column, len(values)))
    return tuple(found)


def min_confidence_floor(ws: Workspace, given: float | None) -> float | None:
    """Return the confidence floor: the one given, else traits.toml's (0 means none)."""
    if given is not None:
        return given
    return ws.settings.export.min_confidence or None


def export_workbook(
    ws: Workspace,
    version: str | None,
    *,
    out: Path | None = None,
    pseudonymise: bool = False,
    min_confidence: float | None = None,
    group_by: Sequence[str] | None = None,
    names_file: str | None = None,
    level: int | None = None,
) -> ExportResult:
    """Write the preferred-traits workbook, its chart PNG and its charts folder.

    The charts (PNG and SVG) go into a folder beside the workbook named after it
    (``preferred_traits_charts/``). With ``level``, every table shows the concepts rolled
    up to that level of the concept list (:func:`extractor.report.rollup.roll_up`). The
    mention count is the one on the workbook's About sheet ("Mentions exported").
    """
    out = out or ws.exports_dir / (
        "preferred_traits_pseudonymised.xlsx" if pseudonymise else "preferred_traits.xlsx"
    )
    out.parent.mkdir(parents=True, exist_ok=True)
    concepts = concept_frame(ws)
    mentions = mention_frame(ws, version)
    if level is not None:
        mentions = roll_up(mentions, concepts, level)
    respondents = respondent_frame(ws)
    png = out.with_name(out.stem + "_chart.png")
    charts = out.with_name(out.stem + "_charts")
    grouped = group_columns(ws, respondents, group_by)
    privacy = privacy_options(ws, names_file) if pseudonymise else None
    written = write_workbook(
        out,
        mentions,
        respondents,
        concepts,
        run_facts(ws, version),
        group_by=grouped,
        min_confidence=min_confidence_floor(ws, min_confidence),
        pseudonymise=privacy,
        chart_png=png,
        chart_dir=charts,
    )
    return ExportResult(
        out,
        written,
        png if png.exists() else None,
        charts if charts.is_dir() else None,
        ungrouped_columns(ws, respondents, grouped),
        privacy.phone_regions if privacy else None,
    )


def _export_labeled(out: Path, ws: Workspace, fmt: str, pseudonymise: bool) -> ExportResult:
    if pseudonymise:
        raise InputError(
            f"The {fmt} export holds the labeled sentences verbatim and cannot be "
            "pseudonymised; export it without --pseudonymise and keep it inside the project."
        )
    if fmt == "labels":
        return ExportResult(out, formats.write_labels(out, gold_records(ws)))
    return ExportResult(out, formats.write_conll(out, gold_examples(ws), gold_implicit(ws)))


def export_other(
    ws: Workspace,
    version: str | None,
    fmt: str,
    *,
    out: Path | None = None,
    pseudonymise: bool = False,
    min_confidence: float | None = None,
    names_file: str | None = None,
) -> ExportResult:
    """Write mentions as CSV, JSON Lines or W3C Web Annotations, or the labels themselves.

    ``indicators`` writes one row per respondent (0/1 per trait and stance) as CSV,
    Stata ``.dta`` and SPSS ``.sav`` beside each other, with a codebook CSV; its
    count is of respondents.
    """
    if fmt not in OTHER_FORMATS:
        raise InputError(
            f"The export format must be one of xlsx, {', '.join(OTHER_FORMATS)}; got {fmt!r}."
        )
    stem = {"indicators": "indicators"}.get(
        fmt, "labeled_sentences" if fmt in LABEL_FORMATS else "mentions"
    )
    out = (
        out
        or ws.exports_dir / f"{stem}{'_pseudonymised' if pseudonymise else ''}{OTHER_FORMATS[fmt]}"
    )
    out.parent.mkdir(parents=True, exist_ok=True)
    if fmt in LABEL_FORMATS:
        return _export_labeled(out, ws, fmt, pseudonymise)
    privacy = privacy_options(ws, names_file) if pseudonymise else None
    mentions, respondents = prepare(
        mention_frame(ws, version),
        respondent_frame(ws),
        min_confidence=min_confidence_floor(ws, min_confidence),
        pseudonymise=privacy,
    )
    regions = privacy.phone_regions if privacy else None
    if fmt == "indicators":
        table = indicator_table(mentions, respondents, concept_frame(ws))
        out = write_indicators(out.with_suffix(".csv"), table)["csv"]
        return ExportResult(out, len(table.frame), phone_regions=regions)
    writer = {
        "csv": formats.write_mentions_csv,
        "jsonl": formats.write_mentions_jsonl,
        "jsonld": formats.write_web_annotations,
    }[fmt]
    return ExportResult(out, writer(out, mentions), phone_regions=regions)


def export(
    ws: Workspace,
    fmt: str = "xlsx",
    *,
    version: str | None = None,
    out: Path | None = None,
    pseudonymise: bool = False,
    min_confidence: float | None = None,
    group_by: Sequence[str] | None = None,
    names_file: str | None = None,
    level: int | None = None,
) -> ExportResult:
    """Do `traits export`: tag with ``version`` (default the newest) if needed, then write.

    Args:
        ws: The open workspace.
        fmt: ``xlsx`` (the workbook) or one of :data:`OTHER_FORMATS`.
        version: The model version whose mentions are exported; the newest by default.
        out: The file to write; by default one in the workspace's ``exports`` folder.
        pseudonymise: Replace IDs with pseudonyms and screen quotes (not for ``conll``).
        min_confidence: Drop predicted mentions below this confidence; traits.toml's
            floor by default.
        group_by: Respondent columns the workbook breaks shares down by (``xlsx`` only).
        names_file: Names to screen out of quotes, one per line, when pseudonymising.
        level: Roll the workbook's tables up to this level of the concept list (1 is
            the top; ``xlsx`` only).

    Raises:
        ModelError: no model is trained and no sentence labeled yet (except for
            ``conll`` and ``labels``, which write the labels alone).
        InputError: ``level`` is given for another format than ``xlsx``, or is below 1.
    """
    if level is not None and fmt != "xlsx":
        raise InputError(
            f"--level rolls up the workbook's tables; it does not apply to --format {fmt}. "
            "Leave it out, or export the workbook (--format xlsx)."
        )
    version = ensure_tagged(ws, version)
    if version is None and fmt not in LABEL_FORMATS and not store.current_labels(ws.conn):
        raise ModelError(
            "There is no model yet and no labeled sentence, so there are no mentions to "
            "export; run `traits run` (or `traits train`) first."
        )
    if fmt == "xlsx":
        return export_workbook(
            ws,
            version,
            out=out,
            pseudonymise=pseudonymise,
            min_confidence=min_confidence,
            group_by=group_by,
            names_file=names_file,
            level=level,
        )
    return export_other(
        ws,
        version,
        fmt,
        out=out,
        pseudonymise=pseudonymise,
        min_confidence=min_confidence,
        names_file=names_file,
    )
