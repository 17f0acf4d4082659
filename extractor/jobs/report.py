"""The report to share (`traits report`): one self-contained HTML file, pseudonymised by default.

Reads the store as the exports do (:mod:`extractor.jobs.export`: the workspace's
grouping, confidence floor and pseudonymisation settings) and hands the frames to
:func:`extractor.report.html_report.write_report`.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from extractor.errors import ModelError
from extractor.jobs.export import (
    ExportResult,
    group_columns,
    min_confidence_floor,
    privacy_options,
)
from extractor.jobs.tag import ensure_tagged
from extractor.report.html_report import write_report
from extractor.report.results import concept_frame, mention_frame, respondent_frame, run_facts
from extractor.workspace import store
from extractor.workspace.folder import Workspace


def report(
    ws: Workspace,
    *,
    version: str | None = None,
    out: Path | None = None,
    pseudonymise: bool = True,
    min_confidence: float | None = None,
    group_by: Sequence[str] | None = None,
    names_file: str | None = None,
) -> ExportResult:
    """Do `traits report`: tag with ``version`` (default the newest) if needed, write the HTML.

    Args:
        ws: The open workspace.
        version: The model version whose mentions are reported; the newest by default.
        out: The file to write; ``exports/report.html`` by default
            (``report_identified.html`` when not pseudonymised).
        pseudonymise: Pseudonyms for respondents and screened quotes (the default).
        min_confidence: Drop predicted mentions below this confidence.
        group_by: Respondent columns to compare; the workspace's by default.
        names_file: Names to screen out of quotes, one per line.

    Raises:
        ModelError: no model is trained and no sentence labeled yet.
    """
    version = ensure_tagged(ws, version)
    if version is None and not store.current_labels(ws.conn):
        raise ModelError(
            "There is no model yet and no labeled sentence, so there is nothing to report; "
            "run `traits run` (or `traits train`) first."
        )
    out = out or ws.exports_dir / ("report.html" if pseudonymise else "report_identified.html")
    out.parent.mkdir(parents=True, exist_ok=True)
    respondents = respondent_frame(ws)
    privacy = privacy_options(ws, names_file) if pseudonymise else None
    written = write_report(
        out,
        mention_frame(ws, version),
        respondents,
        concept_frame(ws),
        run_facts(ws, version),
        group_by=group_columns(ws, respondents, group_by),
        min_confidence=min_confidence_floor(ws, min_confidence),
        pseudonymise=privacy,
    )
    return ExportResult(out, written, phone_regions=privacy.phone_regions if privacy else None)
