"""`traits export`: every format and the printed line give the same number of mentions.

The workspace is built by hand (:func:`tests.report.study.build_workspace`) with one
mention the model could not link to a concept. The JSON-LD file is checked against the
W3C Web Annotation Data Model (Recommendation, 23 February 2017): an
``AnnotationCollection``'s ``total`` is the number of annotations in it (section 5.1),
and an annotation may have no body (section 3.1, "0 or more Bodies"; from memory) with
the motivation ``highlighting`` (section 3.3.5). All people and IDs are invented.
"""

from __future__ import annotations

import csv
import json
import re
from pathlib import Path

import openpyxl

from extractor.workspace import store
from tests.jobs.study import run
from tests.report.study import VERSION, build_workspace, predicted


def _workspace_with_unlinked_mention(root: Path) -> Path:
    """The hand-built workspace, tagged on every sentence, one mention left unlinked."""
    ws = build_workspace(root)
    store.store_predictions(
        ws.conn,
        VERSION,
        [
            {"sentence_id": 1, "mentions": []},
            {
                "sentence_id": 2,
                "mentions": [
                    predicted(3, 13, "BTX:0001", "liked", variety="VAR:01"),
                    predicted(18, 32, "BTX:0002", "disliked"),
                ],
            },
            {"sentence_id": 3, "mentions": [predicted(4, 18, None, "liked")]},
            # "Nobody said much.": "said much" found but linked to no concept.
            {"sentence_id": 4, "mentions": [predicted(7, 16, None, "neutral")]},
        ],
    )
    ws.close()
    return root


def _printed_count(out: str) -> int:
    found = re.search(r"\((\d+) mentions\)", out)
    assert found, out
    return int(found.group(1))


def test_export_jsonld_csv_and_workbook_count_the_same_mentions(tmp_path: Path) -> None:
    root = _workspace_with_unlinked_mention(tmp_path / "ws")
    # Expected from what was stored: 2 predicted mentions in sentence 2, the person's
    # span in sentence 3 (replacing the prediction there), 1 unlinked in sentence 4.
    expected = 4
    printed = {}
    for fmt in ("jsonld", "csv", "xlsx"):
        target = tmp_path / f"out.{fmt}"
        code, out = run("-w", str(root), "export", "--format", fmt, "--out", str(target))
        assert code == 0, out
        printed[fmt] = _printed_count(out)
    collection = json.loads((tmp_path / "out.jsonld").read_text(encoding="utf-8"))
    with (tmp_path / "out.csv").open(encoding="utf-8", newline="") as fh:
        csv_rows = list(csv.DictReader(fh))  # Python's csv module as the RFC 4180 reader
    about = openpyxl.load_workbook(tmp_path / "out.xlsx")["About"]
    about_count = next(
        r[1] for r in about.iter_rows(values_only=True) if r[0] == "Mentions exported"
    )
    assert printed == {"jsonld": expected, "csv": expected, "xlsx": expected}
    assert collection["total"] == len(collection["first"]["items"]) == expected
    assert len(csv_rows) == about_count == expected


def test_export_jsonld_unlinked_mention_is_a_highlight_without_a_concept(tmp_path: Path) -> None:
    root = _workspace_with_unlinked_mention(tmp_path / "ws")
    target = tmp_path / "out.jsonld"
    assert run("-w", str(root), "export", "--format", "jsonld", "--out", str(target))[0] == 0
    items = json.loads(target.read_text(encoding="utf-8"))["first"]["items"]
    unlinked = [a for a in items if a["target"]["selector"][0]["exact"] == "said much"]
    assert len(unlinked) == 1
    annotation = unlinked[0]
    assert annotation["motivation"] == "highlighting"
    assert all(body["purpose"] != "classifying" for body in annotation.get("body", []))
    linked = [a for a in items if a is not annotation]
    assert all(a["motivation"] == "classifying" for a in linked)
