"""Tests of extractor.jobs.export: where exports go, what they return, what they refuse.

The workspace is built by hand (:func:`tests.report.study.build_workspace`); expected
counts are worked out from what it stores. All people and trait IDs are invented.
"""

from __future__ import annotations

import csv
import dataclasses
import json
from collections.abc import Iterator
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

from extractor.errors import InputError
from extractor.ingest.labels import read_labels
from extractor.jobs.export import (
    ExportResult,
    export,
    export_other,
    export_workbook,
    group_columns,
    privacy_options,
    workspace_secret,
)
from extractor.report.caution import REVIEW_CAUTION
from extractor.report.results import respondent_frame
from extractor.types import Implicit, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from tests.report.study import VERSION, build_workspace


@pytest.fixture
def ws(tmp_path: Path) -> Iterator[Workspace]:
    """The hand-built workspace with a recorded version and its predictions."""
    ws = build_workspace(tmp_path / "ws")
    yield ws
    ws.close()


def test_export_workbook_default_paths_and_counts(ws: Workspace) -> None:
    result = export_workbook(ws, VERSION)
    # Two predicted mentions in sentence 2 and the person's span in sentence 3.
    assert result == ExportResult(
        ws.exports_dir / "preferred_traits.xlsx",
        3,
        ws.exports_dir / "preferred_traits_chart.png",
        ws.exports_dir / "preferred_traits_charts",
    )
    assert (ws.exports_dir / "preferred_traits_charts" / "liked_all.svg").is_file()
    about = openpyxl.load_workbook(result.path)["About"]
    assert (about["A2"].value, about["B2"].value) == ("Caution", REVIEW_CAUTION)


def test_export_other_csv_rows(ws: Workspace) -> None:
    result = export_other(ws, VERSION, "csv")
    assert result == ExportResult(ws.exports_dir / "mentions.csv", 3)
    # Read back with Python's csv module (RFC 4180 dialect) as the reference reader.
    with result.path.open(encoding="utf-8", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert [r["span_text"] for r in rows] == ["cooks fast", "weevils eat it", "grain"]


def test_export_other_jsonld_skips_unlinked(ws: Workspace) -> None:
    result = export_other(ws, VERSION, "jsonld")
    collection = json.loads(result.path.read_text(encoding="utf-8"))
    # All three mentions are linked, so all three are annotations (W3C Web Annotation).
    assert collection["total"] == 3 and result.mentions == 3


def test_export_other_conll_writes_labeled_sentences(ws: Workspace) -> None:
    result = export_other(ws, VERSION, "conll")
    assert result == ExportResult(ws.exports_dir / "labeled_sentences.conll", 1)
    assert "# text = The grain is large." in result.path.read_text(encoding="utf-8")


def test_export_other_conll_refuses_pseudonymising(ws: Workspace) -> None:
    with pytest.raises(InputError, match="cannot be pseudonymised"):
        export_other(ws, VERSION, "conll", pseudonymise=True)


def test_export_labels_round_trip_through_import(ws: Workspace) -> None:
    store.add_label(
        ws.conn, 2, [], "coder-a", implicit=[Implicit("BTX:0003", "liked")], origin="terminal"
    )
    result = export_other(ws, VERSION, "labels")
    assert result == ExportResult(ws.exports_dir / "labeled_sentences.jsonl", 2)
    records = read_labels(result.path, default_lang="en")
    assert sorted((list(r.spans), r.implicit) for r in records) == [
        ([], (Implicit("BTX:0003", "liked"),)),
        ([Span(4, 9, "BTX:0003", "liked")], ()),
    ]
    conll = export_other(ws, VERSION, "conll")
    again = read_labels(conll.path, default_lang="en")
    assert [(list(r.spans), r.implicit) for r in again] == [
        (list(r.spans), r.implicit) for r in records
    ]
    with pytest.raises(InputError, match="labels export holds the labeled sentences verbatim"):
        export_other(ws, VERSION, "labels", pseudonymise=True)


def test_export_other_rejects_unknown_format(ws: Workspace) -> None:
    with pytest.raises(
        InputError,
        match="must be one of xlsx, csv, jsonl, conll, jsonld, labels, indicators; got 'pdf'",
    ):
        export_other(ws, VERSION, "pdf")


def test_export_pseudonymised_hides_respondent_ids(ws: Workspace) -> None:
    result = export_other(ws, VERSION, "jsonl", pseudonymise=True)
    assert result.path.name == "mentions_pseudonymised.jsonl"
    text = result.path.read_text(encoding="utf-8")
    assert "KR-01" not in text and "R-" in text


def test_export_without_a_model_writes_person_labels(tmp_path: Path) -> None:
    with build_workspace(tmp_path / "ws", with_model=False) as ws:
        result = export(ws, "csv", out=tmp_path / "out.csv")
    assert result == ExportResult(tmp_path / "out.csv", 1)


def test_workspace_secret_is_made_once_and_kept(ws: Workspace) -> None:
    first = workspace_secret(ws)
    # RFC 2104 section 3: the key should be at least as long as the hash output (32 bytes
    # for SHA-256) to be strong; the same key must come back on every export.
    assert len(first) >= 32
    assert workspace_secret(ws) == first


def test_privacy_options_read_the_names_file(ws: Workspace) -> None:
    (ws.root / "names.txt").write_text("Amani\n\n  Wanjiru \n", encoding="utf-8")
    options = privacy_options(ws, "names.txt")
    assert options.names == ("Amani", "Wanjiru")
    assert options.drop_columns == ws.settings.export.identifying_columns


@pytest.mark.parametrize(
    ("content", "message"),
    [(None, "names file .* does not exist"), (b"Am\xe9lie\n", "is not UTF-8 text")],
    ids=["missing", "latin-1"],
)
def test_privacy_options_bad_names_file_is_one_sentence(
    ws: Workspace, content: bytes | None, message: str
) -> None:
    if content is not None:
        (ws.root / "names.txt").write_bytes(content)
    with pytest.raises(InputError, match=message):
        privacy_options(ws, "names.txt")


def test_group_columns_chosen_must_exist(ws: Workspace) -> None:
    respondents = respondent_frame(ws)
    assert group_columns(ws, respondents, ["gender"]) == ["gender"]
    with pytest.raises(InputError, match="No respondent column 'region'; choose from gender."):
        group_columns(ws, respondents, ["region"])


def test_privacy_options_take_phone_regions_from_language_tags_and_settings(
    ws: Workspace,
) -> None:
    settings = ws.settings
    changed = dataclasses.replace(
        settings,
        workspace=dataclasses.replace(settings.workspace, languages=("en-KE", "sw", "pt-MZ")),
        export=dataclasses.replace(settings.export, phone_regions=("in",)),
    )
    options = privacy_options(dataclasses.replace(ws, settings=changed))
    assert set(options.phone_regions) >= {"KE", "MZ", "IN"}


def _matrix_header(path: Path) -> list[str]:
    sheet = openpyxl.load_workbook(path)["Respondent x trait"]
    return [str(c.value) for c in next(sheet.iter_rows(min_row=1, max_row=1))]


def test_export_workbook_level_rolls_children_into_their_parent(ws: Workspace) -> None:
    # KR-02's "grain" is linked to BTX:0003, whose parent is BTX:0001 (tests/report/study.py).
    plain = _matrix_header(export_workbook(ws, VERSION).path)
    rolled = _matrix_header(export_workbook(ws, VERSION, level=1, out=ws.root / "l1.xlsx").path)
    assert any("BTX:0003" in c for c in plain)
    assert not any("BTX:0003" in c for c in rolled)
    assert any("BTX:0001" in c for c in rolled)
    parents = openpyxl.load_workbook(ws.root / "l1.xlsx")["Summary by parent trait"]
    assert parents.max_row > 1


def test_export_level_applies_to_the_workbook_only(ws: Workspace) -> None:
    with pytest.raises(InputError, match="--level rolls up the workbook"):
        export(ws, "csv", level=1)


def test_export_indicators_writes_csv_stata_spss_and_codebook(ws: Workspace) -> None:
    result = export_other(ws, VERSION, "indicators")
    assert result.path == ws.exports_dir / "indicators.csv"
    for name in ("indicators.dta", "indicators.sav", "indicators_codebook.csv"):
        assert (ws.exports_dir / name).is_file()
    with pd.io.stata.StataReader(ws.exports_dir / "indicators.dta") as reader:
        frame = reader.read()
    assert len(frame) == result.mentions  # one row per respondent
