"""Tests of extractor.report.workbook: the sheets, their craft and the About sheet.

All people, places, varieties and trait IDs are invented.
"""

from __future__ import annotations

import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest

from extractor.errors import InputError
from extractor.report.about import RunFacts
from extractor.report.caution import REVIEW_CAUTION
from extractor.report.privacy import PrivacyOptions
from extractor.report.workbook import SHEETS, write_workbook
from tests.report.study import CONCEPTS, S1, SECRET, Study, mention

NO_FACTS = RunFacts()


def _all_cells(path: Path) -> list[object]:
    wb = openpyxl.load_workbook(path)
    return [c.value for ws in wb.worksheets for row in ws.iter_rows() for c in row]


def test_write_workbook_sheets_and_craft(study: Study, tmp_path: Path) -> None:
    out = tmp_path / "traits.xlsx"
    png = tmp_path / "chart.png"
    write_workbook(
        out,
        *study,
        CONCEPTS,
        RunFacts(model_version="m-3", quality_cross_validated={"span_f1": 0.71}),
        group_by=["gender"],
        min_confidence=None,
        pseudonymise=None,
        chart_png=png,
    )
    wb = openpyxl.load_workbook(out)
    # the study's concept list has no parents, so no parent-level sheet
    assert wb.sheetnames == [s for s in SHEETS.values() if s != SHEETS["parents"]]
    for name in (SHEETS["preferred"], SHEETS["matrix"], SHEETS["mentions"]):
        assert wb[name].freeze_panes == "B2"
        assert wb[name].auto_filter.ref.startswith("A1:")
    summary = wb[SHEETS["summary"]]
    assert "respondents, not of mentions" in summary["A1"].value
    assert summary.auto_filter.ref.startswith("A6:")
    about = [c.value for row in wb[SHEETS["about"]].iter_rows() for c in row]
    assert about[3:5] == ["Caution", REVIEW_CAUTION]  # first row under the header
    assert "Quality (cross-validated): span F1" in about
    with zipfile.ZipFile(out) as zf:  # a native chart part (ECMA-376 DrawingML chart)
        assert any(n.startswith("xl/charts/chart") for n in zf.namelist())
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature, RFC 2083 section 3.1


@pytest.mark.parametrize(
    "text",
    ['=HYPERLINK("http://x","y")', "+1 cooks fast", "-weevils", "@SUM(A1)", "\tcooks", "#N/A"],
    ids=["equals-formula", "plus", "minus", "at", "tab", "error-code"],
)
def test_write_workbook_user_text_never_becomes_formula(text: str, tmp_path: Path) -> None:
    sentence = f"{text} said the farmer"
    rows = pd.DataFrame([mention("W1", 1, sentence, "said", None, "liked")])
    out = tmp_path / "safe.xlsx"
    write_workbook(out, rows, pd.DataFrame({"respondent": ["W1"]}), CONCEPTS, NO_FACTS)
    ws = openpyxl.load_workbook(out)[SHEETS["mentions"]]
    header = [c.value for c in ws[1]]
    cell = ws.cell(row=2, column=header.index("Sentence") + 1)
    # ECMA-376 inline string: openpyxl reads it back as data type "s", never "f".
    assert cell.data_type == "s" and cell.value == sentence
    frame = pd.read_excel(out, sheet_name=SHEETS["mentions"])
    assert frame["Sentence"].item() == sentence
    with zipfile.ZipFile(out) as zf:
        sheet_xml = zf.read("xl/worksheets/sheet3.xml").decode()
    assert "<f>" not in sheet_xml


def test_write_workbook_pseudonymised_hides_ids_and_phone(study: Study, tmp_path: Path) -> None:
    mentions, respondents = study
    phone = "+254 712 345 678"
    mentions = mentions.copy()
    mentions.loc[0, "sentence"] = S1 + f" Call Amani on {phone}."
    respondents = respondents.assign(name=[f"Person {i}" for i in range(len(respondents))])
    out = tmp_path / "private.xlsx"
    write_workbook(
        out,
        mentions,
        respondents,
        CONCEPTS,
        NO_FACTS,
        group_by=["gender"],
        pseudonymise=PrivacyOptions(secret=SECRET, names=("Amani",)),
    )
    text = "\n".join(str(v) for v in _all_cells(out) if v is not None)
    for original in respondents["respondent"]:
        assert original not in text  # not even inside another cell's text
    assert phone not in text and "712" not in text and "Amani" not in text
    assert "Person 1" not in text
    assert "[phone]" in text and "R-" in text


def test_write_workbook_min_confidence(study: Study, tmp_path: Path) -> None:
    mentions, respondents = study
    mentions = mentions.copy()
    mentions.loc[mentions["respondent"] == "U1", "confidence"] = 0.2
    out = tmp_path / "conf.xlsx"
    write_workbook(out, mentions, respondents, CONCEPTS, NO_FACTS, min_confidence=0.5)
    frame = pd.read_excel(out, sheet_name=SHEETS["mentions"])
    assert "U1" not in set(frame["Respondent"]) and len(frame) == len(mentions) - 1


def test_write_workbook_rejects_identifying_grouping(study: Study, tmp_path: Path) -> None:
    with pytest.raises(InputError, match="'district' is dropped as identifying"):
        write_workbook(
            tmp_path / "x.xlsx",
            *study,
            CONCEPTS,
            NO_FACTS,
            group_by=["district"],
            pseudonymise=PrivacyOptions(secret=SECRET, drop_columns=("district",)),
        )


@pytest.mark.parametrize("name", ["missing/out.xlsx", "out.csv"], ids=["no-folder", "not-xlsx"])
def test_write_workbook_rejects_bad_path(study: Study, tmp_path: Path, name: str) -> None:
    with pytest.raises(InputError, match="workbook"):
        write_workbook(tmp_path / name, *study, CONCEPTS, NO_FACTS)


def test_write_workbook_without_any_mentions(tmp_path: Path) -> None:
    empty = pd.DataFrame([mention("W1", 1, S1, "cooks fast", None, None)]).iloc[0:0]
    out = tmp_path / "empty.xlsx"
    write_workbook(
        out,
        empty,
        pd.DataFrame({"respondent": ["W1"]}),
        CONCEPTS,
        NO_FACTS,
        chart_png=tmp_path / "empty.png",
    )
    frame = pd.read_excel(out, sheet_name=SHEETS["preferred"])
    assert frame["Respondent"].tolist() == ["W1"]
    assert np.all(frame["Mentions"] == 0)


def test_write_workbook_keeps_the_previous_workbook_when_saving_fails(
    study: Study, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    out = tmp_path / "traits.xlsx"
    write_workbook(out, *study, CONCEPTS, NO_FACTS)
    before = out.read_bytes()

    def half_then_full_disk(self: openpyxl.Workbook, filename: str | Path) -> None:
        Path(filename).write_bytes(before[:100])
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(openpyxl.Workbook, "save", half_then_full_disk)
    with pytest.raises(InputError, match=r"traits\.xlsx.*No space left"):
        write_workbook(out, *study, CONCEPTS, NO_FACTS)
    assert out.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["traits.xlsx"]


def test_write_workbook_about_sheet_lists_the_columns_pseudonymising_dropped(
    study: Study, tmp_path: Path
) -> None:
    mentions, respondents = study
    respondents = respondents.assign(
        mobile="0712 345 678", contact="someone@example.org", respondent_name="Zawadi"
    )
    out = tmp_path / "p.xlsx"
    write_workbook(
        out,
        mentions,
        respondents,
        CONCEPTS,
        NO_FACTS,
        pseudonymise=PrivacyOptions(secret=SECRET, drop_columns=("village",)),
    )
    about = {row[0]: row[1] for row in openpyxl.load_workbook(out)[SHEETS["about"]].values}
    dropped = about["Columns dropped as identifying"]
    for column in ("mobile", "contact", "respondent_name"):
        assert column in dropped
    cells = [str(v) for v in _all_cells(out) if v is not None]
    assert not any("0712 345 678" in c or "someone@example.org" in c for c in cells)


def test_chart_beside_the_workbook_is_the_liked_chart_of_the_first_grouping(
    study: Study, tmp_path: Path
) -> None:
    # The PNG beside the workbook is drawn from the same figures as the Charts sheet:
    # Wilson intervals and each group's n (checked against statsmodels in
    # test_group_charts.py), so it is byte for byte the liked-by-gender chart file.
    png, folder = tmp_path / "chart.png", tmp_path / "charts"
    write_workbook(
        tmp_path / "traits.xlsx",
        *study,
        CONCEPTS,
        NO_FACTS,
        group_by=["gender"],
        chart_png=png,
        chart_dir=folder,
    )
    assert png.read_bytes() == (folder / "liked_by_gender.png").read_bytes()
    assert png.read_bytes() != (folder / "liked_all.png").read_bytes()
