from __future__ import annotations

from pathlib import Path

import pytest
from openpyxl import Workbook, load_workbook

from extractor.report.group_charts import (
    all_charts,
    chart_figure,
    chart_figures,
    draw_chart,
    headline_chart,
    write_charts_sheet,
)
from extractor.report.inputs import prepare
from extractor.report.summary import trait_summary
from tests.report.reference import assert_no_overlap, counts, group_members, share
from tests.report.study import CONCEPTS, Study


@pytest.mark.parametrize("outcome", ["like", "dislike", "want"])
def test_chart_bars_are_shares_with_statsmodels_wilson_intervals(
    study: Study, outcome: str
) -> None:
    m, r = prepare(*study)
    summary = trait_summary(m, r, CONCEPTS, ["gender"])
    for grouping in (None, "gender"):
        data = chart_figures(summary, outcome, grouping).data
        assert len(data)
        for row in data.to_dict("records"):
            value = None if grouping is None else row["Group"].split(" (n=")[0]
            members = group_members(r, grouping, value)
            k, n = counts(m, members, row["Concept ID"], outcome)
            expected = share(k, n)
            assert (row["Respondents"], row["Respondents in group"]) == (k, n)
            assert row["Share"] == pytest.approx(expected[0])
            assert row["95% CI low"] == pytest.approx(expected[1], abs=1e-12)
            assert row["95% CI high"] == pytest.approx(expected[2], abs=1e-12)
            assert row["Group"].endswith(f"(n={n})")  # n in every label


def test_charts_leave_focus_groups_out(study: Study) -> None:
    m, r = prepare(*study)
    summary = trait_summary(m, r, CONCEPTS, ["gender"])
    for chart in all_charts(summary, ["gender"]):
        assert not chart.data["Group"].str.contains("focus").any()
    # the one focus group FG1 likes fast cooking; all individuals are 7, not 8
    liked = chart_figures(summary, "like", None).data
    assert set(liked["Respondents in group"]) == {7}


def test_charts_cover_every_outcome_and_grouping(study: Study) -> None:
    m, r = prepare(*study)
    summary = trait_summary(m, r, CONCEPTS, ["gender", "district"])
    names = [c.name for c in all_charts(summary, ["gender", "district"])]
    assert names == [
        f"{s}_{g}"
        for s in ("liked", "disliked", "wanted")
        for g in ("all", "by_gender", "by_district")
    ]


def test_draw_chart_writes_png_and_svg_without_overlapping_labels(
    study: Study, tmp_path: Path
) -> None:
    m, r = prepare(*study)
    chart = chart_figures(trait_summary(m, r, CONCEPTS, ["gender"]), "like", "gender")
    png, svg = tmp_path / "c.png", tmp_path / "c.svg"
    draw_chart(chart, png, svg)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature, RFC 2083 section 3.1
    text = svg.read_text(encoding="utf-8")
    assert "<svg" in text and "woman (n=4)" in text  # SVG keeps the labels as text


def test_chart_labels_do_not_overlap(study: Study) -> None:
    m, r = prepare(*study)
    summary = trait_summary(m, r, CONCEPTS, ["gender", "district"])
    for chart in all_charts(summary, ["gender", "district"]):
        assert_no_overlap(chart_figure(chart))


def test_charts_sheet_holds_native_charts_with_error_bars(study: Study, tmp_path: Path) -> None:
    m, r = prepare(*study)
    charts = all_charts(trait_summary(m, r, CONCEPTS, ["gender"]), ["gender"])
    wb = Workbook()
    ws = wb.active
    ws.title = "Charts"
    write_charts_sheet(ws, charts)
    wb.save(tmp_path / "c.xlsx")
    import zipfile

    with zipfile.ZipFile(tmp_path / "c.xlsx") as zf:
        parts = [n for n in zf.namelist() if n.startswith("xl/charts/chart")]
        xml = zf.read(parts[0]).decode("utf-8")
    assert len(parts) == sum(1 for c in charts if len(c.data))
    assert "errBars" in xml and 'val="cust"' in xml  # ECMA-376 custom error bars
    assert load_workbook(tmp_path / "c.xlsx")["Charts"]["A3"].value == "Trait"


def test_headline_chart_passes_over_a_grouping_left_out(study: Study) -> None:
    m, r = prepare(*study)
    charts = all_charts(trait_summary(m, r, CONCEPTS, ["gender"]), ["gender"])
    # "role" stands for a grouping all_charts left out for its many values.
    chosen = headline_chart(charts, ["role", "gender"])
    assert (chosen.outcome, chosen.grouping) == ("like", "gender")
    assert all(" (n=" in group for group in chosen.data["Group"])
    assert headline_chart(charts, ["role"]).grouping is None
    empty = headline_chart([], ["gender"])
    assert empty.data.empty and empty.title.endswith("praising a variety on each trait")


def test_a_chart_of_some_traits_only_says_how_many_it_shows(study: Study) -> None:
    m, r = prepare(*study)
    summary = trait_summary(m, r, CONCEPTS, ["gender"])
    everything = chart_figures(summary, "dislike", None)
    named = len(everything.data)  # two traits disliked by someone in the study
    assert named == 2 and everything.title.endswith("faulting a variety on each trait")
    fewer = chart_figures(summary, "dislike", "gender", top=1)
    assert fewer.title == (
        "Share of individual respondents faulting a variety on each trait "
        "(the 1 most often faulted, of 2), by gender"
    )
