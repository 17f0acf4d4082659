"""The report to share: one self-contained HTML file with the caution, figures, charts, quotes.

Everything is inside the file: styles inline, charts as PNG data URIs, no script, no
font or image from anywhere else; its Content-Security-Policy forbids loading
anything but inline styles and data images, so a browser opening it offline shows
it whole and a copy sent by e-mail cannot call out. Every text from the interviews
is HTML-escaped.

Sections: the review caution, a table of contents, what the report rests on (the
About figures, quality among them), the charts, the shares by group, the variety
tables, and every quote per trait.
"""

from __future__ import annotations

import base64
import html
import io
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path
from typing import Any

import pandas as pd

from extractor.errors import InputError
from extractor.report.about import RunFacts, about_table, export_counts
from extractor.report.caution import REVIEW_CAUTION
from extractor.report.group_charts import GroupChart, all_charts, chart_figure
from extractor.report.inputs import plain_value, prepare
from extractor.report.pivot import PIVOT_NOTES, pivot_table
from extractor.report.privacy import PrivacyOptions
from extractor.report.quotes import quotes_by_trait
from extractor.report.stats import format_share
from extractor.report.summary import trait_summary
from extractor.report.varieties import head_to_head, variety_table
from extractor.workspace.files import atomic_open

STYLE = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0 auto;
max-width:72rem;padding:1rem 2rem;color:#1b1b1b;line-height:1.45}
h1{font-size:1.6rem}h2{border-bottom:2px solid #dde4ee;padding-bottom:.2rem;margin-top:2.2rem}
.caution{background:#fff4d6;border-left:6px solid #e0a800;padding:.8rem 1rem;font-weight:600}
table{border-collapse:collapse;margin:.6rem 0 1.2rem;font-size:.85rem}
th,td{border:1px solid #cfd6df;padding:.25rem .5rem;text-align:left;vertical-align:top}
th{background:#dde4ee}td.small{background:#fce8b2}td.sig{font-weight:700}
.wide{overflow-x:auto}figure{margin:1rem 0}figure img{max-width:100%;height:auto}
figcaption{font-size:.85rem;color:#444}.note{font-size:.85rem;color:#444}
blockquote{margin:.2rem 0 .2rem 1rem;padding-left:.6rem;border-left:3px solid #cfd6df}
.who{font-size:.8rem;color:#555}nav ol{columns:2}
"""
CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"
"""Content-Security-Policy of the report: nothing loads from anywhere but the file."""
STANCE_HEADINGS = {
    "liked": "liked",
    "disliked": "disliked",
    "wanted": "wanted",
    "neutral": "named without a stance",
}
OUTCOME_HEADINGS = {"like": "Liked traits", "dislike": "Disliked traits", "want": "Wanted traits"}


@dataclass(frozen=True)
class ReportParts:
    """What the report shows, prepared: frames already filtered and pseudonymised."""

    mentions: pd.DataFrame
    respondents: pd.DataFrame
    concepts: pd.DataFrame
    summary: pd.DataFrame
    about: pd.DataFrame
    charts: Sequence[GroupChart]
    grouping: str | None
    pseudonymised: bool


def esc(value: Any) -> str:
    """Return a cell value as escaped HTML text; missing values as empty text."""
    plain = plain_value(value)
    if plain is None:
        return ""
    if isinstance(plain, float):
        return f"{plain:.3g}" if abs(plain) < 1 else f"{plain:,.2f}"
    return html.escape(str(plain))


def table_html(frame: pd.DataFrame, classes: dict[tuple[int, str], str] | None = None) -> str:
    """Return ``frame`` as an escaped HTML table; ``classes`` marks cells (row, column)."""
    classes = classes or {}
    head = "".join(f"<th>{esc(c)}</th>" for c in frame.columns)
    rows = []
    for i, record in enumerate(frame.itertuples(index=False)):
        cells = []
        for col, value in zip(frame.columns, record, strict=True):
            cls = classes.get((i, str(col)))
            attr = f' class="{cls}"' if cls else ""
            cells.append(f"<td{attr}>{esc(value)}</td>")
        rows.append("<tr>" + "".join(cells) + "</tr>")
    body = "".join(rows)
    return (
        f'<div class="wide"><table><thead><tr>{head}</tr></thead>'
        f"<tbody>{body}</tbody></table></div>"
    )


def chart_png_uri(chart: GroupChart) -> str:
    """Return one chart drawn as PNG, as a ``data:`` URI."""
    import matplotlib.pyplot as plt

    fig = chart_figure(chart)
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=110)
    plt.close(fig)
    return "data:image/png;base64," + base64.b64encode(buffer.getvalue()).decode("ascii")


def readable_shares(frame: pd.DataFrame) -> pd.DataFrame:
    """Return a share table with one "42% (31–54%)" column instead of share and bounds."""
    out = frame.drop(columns=["Concept ID", "Share", "95% CI low", "95% CI high"])
    text = [
        format_share(int(k), int(n))
        for k, n in zip(frame["Respondents"], frame["Respondents of variety"], strict=True)
    ]
    out.insert(out.columns.get_loc("Respondents") + 1, "Share (95% CI)", text)
    return out


def _section(anchor: str, title: str, body: str) -> str:
    return f'<section id="{anchor}"><h2>{html.escape(title)}</h2>{body}</section>'


def _charts_html(charts: Iterable[GroupChart], uris: dict[str, str]) -> str:
    parts = []
    for outcome, heading in OUTCOME_HEADINGS.items():
        parts.append(f"<h3>{heading}</h3>")
        for chart in charts:
            if chart.outcome != outcome:
                continue
            parts.append(
                f'<figure><img src="{uris[chart.name]}" alt="{html.escape(chart.title)}">'
                f"<figcaption>{html.escape(chart.title)}; bars: 95% Wilson interval; n of each "
                "group in its label.</figcaption></figure>"
            )
    return "".join(parts)


def _pivot_html(summary: pd.DataFrame) -> str:
    frame, flags = pivot_table(summary)
    classes = {(i, c): "small" for i, c in flags.small}
    for i, c in flags.significant:
        classes[(i, c)] = (classes.get((i, c), "") + " sig").strip()
    notes = "".join(f'<p class="note">{html.escape(n)}</p>' for n in PIVOT_NOTES)
    return notes + table_html(frame, classes)


def _quotes_html(quotes: pd.DataFrame, grouping: str | None) -> str:
    """Return every quote, by trait, then stance, then group."""
    column = grouping or "Group"
    parts = []
    for trait, by_trait in quotes.groupby("Trait", sort=False):
        parts.append(f"<h3>{esc(trait)}</h3>")
        for stance, by_stance in by_trait.groupby("Stance", sort=False):
            parts.append(f"<h4>{html.escape(STANCE_HEADINGS.get(str(stance), str(stance)))}</h4>")
            for group, rows in by_stance.groupby(column, sort=False):
                if grouping:
                    parts.append(f"<p><strong>{esc(grouping)}: {esc(group)}</strong></p>")
                for rec in rows.to_dict("records"):
                    parts.append(
                        f"<blockquote>{esc(rec['Quote'])} "
                        f'<span class="who">({esc(rec["Respondent"])}, {esc(rec["Type"])}'
                        f"{', ' + esc(rec['Variety']) if plain_value(rec['Variety']) else ''})"
                        "</span></blockquote>"
                    )
    return "".join(parts) or "<p>No quotes: no mention is linked to a trait.</p>"


def render_report(parts: ReportParts, *, title: str = "Trait preferences") -> str:
    """Return the whole report as one HTML document (UTF-8 text)."""
    m, r, c = parts.mentions, parts.respondents, parts.concepts
    uris = {chart.name: chart_png_uri(chart) for chart in parts.charts if len(chart.data)}
    drawn = [chart for chart in parts.charts if chart.name in uris]
    varieties = variety_table(m, r, c)
    comparisons = head_to_head(m, r, c)
    sections = [
        ("about", "What this report rests on", table_html(parts.about)),
        ("charts", "Charts", _charts_html(drawn, uris) or "<p>No chart: no linked trait.</p>"),
        ("shares", "Shares by group", _pivot_html(parts.summary)),
        (
            "varieties",
            "Traits by variety",
            table_html(varieties)
            if len(varieties)
            else "<p>No mention is attributed to a variety.</p>",
        ),
        (
            "head-to-head",
            "Head to head",
            table_html(comparisons)
            if len(comparisons)
            else "<p>No comparison between varieties was found.</p>",
        ),
        (
            "quotes",
            "Quotes per trait",
            _quotes_html(quotes_by_trait(m, r, c, parts.grouping), parts.grouping),
        ),
    ]
    toc = "".join(f'<li><a href="#{a}">{html.escape(t)}</a></li>' for a, t, _ in sections)
    privacy = (
        "Respondent IDs are pseudonyms and quotes were screened for names, phone numbers and "
        "e-mail addresses; still, read it through before sharing it."
        if parts.pseudonymised
        else "This report holds respondent IDs and quotes as recorded: keep it inside the project."
    )
    body = "".join(_section(a, t, b) for a, t, b in sections)
    stamp = datetime.now().isoformat(timespec="minutes")
    return (
        '<!DOCTYPE html><html lang="en"><head><meta charset="utf-8">'
        f'<meta http-equiv="Content-Security-Policy" content="{CSP}">'
        '<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>{html.escape(title)}</title><style>{STYLE}</style></head><body>"
        f"<h1>{html.escape(title)}</h1>"
        f'<p class="caution" role="note">{html.escape(REVIEW_CAUTION)}</p>'
        f'<p class="note">{html.escape(privacy)} Written {html.escape(stamp)}.</p>'
        f'<nav aria-label="Contents"><h2>Contents</h2><ol>{toc}</ol></nav>'
        f"{body}</body></html>\n"
    )


def write_report(
    path: Path | str,
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    concepts: pd.DataFrame,
    about: RunFacts,
    *,
    group_by: Sequence[str] = (),
    min_confidence: float | None = None,
    pseudonymise: PrivacyOptions | None = None,
) -> int:
    """Write the HTML report and return the number of mentions it rests on.

    Args:
        path: Where to write the ``.html``; its folder must exist.
        mentions: Mention rows (see :mod:`extractor.report.inputs`).
        respondents: One row per respondent with ``is_group`` and metadata.
        concepts: The concept list.
        about: Facts about the run, for the figures the report rests on.
        group_by: Respondent columns to compare groups by; the first groups the quotes.
            Columns dropped as identifying are left out.
        min_confidence: Drop predicted mentions below this tagger confidence.
        pseudonymise: Pseudonyms and screened quotes (the report's default).

    Raises:
        InputError: If the path does not end in .html or its folder is missing.
    """
    path = Path(path)
    if path.suffix.lower() not in (".html", ".htm"):
        raise InputError(f"The report file must end in .html; got {path.name!r}.")
    if not path.parent.is_dir():
        raise InputError(f"The folder {str(path.parent)!r} for the report does not exist.")
    m, r = prepare(mentions, respondents, min_confidence=min_confidence, pseudonymise=pseudonymise)
    groups = [g for g in group_by if g in r.columns]
    summary = trait_summary(m, r, concepts, groups)
    written: list[tuple[str, Any]] = [
        ("Minimum tagger confidence", min_confidence if min_confidence is not None else "none"),
        ("Pseudonymised", "yes" if pseudonymise is not None else "no"),
        ("Written", datetime.now().isoformat(timespec="seconds")),
    ]
    parts = ReportParts(
        mentions=m,
        respondents=r,
        concepts=concepts,
        summary=summary,
        # the caution stands at the top of the report; the table starts with the facts
        about=about_table(about, export_counts(m, r), written).iloc[1:],
        charts=all_charts(summary, groups),
        grouping=groups[0] if groups else None,
        pseudonymised=pseudonymise is not None,
    )
    text = render_report(parts)
    with atomic_open(path) as handle:
        handle.write(text)
    return len(m)
