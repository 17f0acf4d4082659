"""Tests of extractor.report.chart: the chart's data and the PNG.

All people and trait IDs are invented.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from extractor.report.chart import chart_data, write_chart_png
from extractor.report.inputs import prepare
from extractor.report.summary import trait_summary
from tests.report.study import CONCEPTS, Study

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # RFC 2083 section 3.1


def test_chart_data_top_traits_by_group(study: Study) -> None:
    m, r = prepare(*study)
    data = chart_data(trait_summary(m, r, CONCEPTS, ["gender"]), "gender")
    assert list(data.columns) == ["Trait", "man", "woman"]
    assert data["Trait"].iloc[0] == "fast cooking (BTX:0001)"
    assert data["woman"].iloc[0] == pytest.approx(2 / 4)


def test_chart_data_without_grouping_is_one_series(study: Study) -> None:
    m, r = prepare(*study)
    data = chart_data(trait_summary(m, r, CONCEPTS), None)
    # Liked by individuals: fast cooking W1, W2, U1 (3 of 7); pest tolerance by nobody.
    assert data.values.tolist() == [["fast cooking (BTX:0001)", pytest.approx(3 / 7)]]


@pytest.mark.parametrize("empty", [False, True], ids=["bars", "no-traits"])
def test_write_chart_png_writes_a_png(study: Study, tmp_path: Path, empty: bool) -> None:
    m, r = prepare(*study)
    data = pd.DataFrame() if empty else chart_data(trait_summary(m, r, CONCEPTS), None)
    out = tmp_path / "chart.png"
    write_chart_png(data, out, "Liked traits")
    assert out.read_bytes()[:8] == PNG_SIGNATURE
