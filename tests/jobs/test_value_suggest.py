"""`traits status` suggests merges of wide metadata columns; it never applies them."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

import numpy as np
import pytest
from scipy.cluster.hierarchy import fcluster, linkage

from extractor.ingest.intake import add_files, interview_files
from extractor.jobs.status import metadata_merges, metadata_suggestions
from extractor.nlp import pretrained
from extractor.report.pivot import MAX_GROUPS
from extractor.report.value_suggest import (
    THRESHOLD,
    MergeSuggestion,
    _groups,
    values_line,
    wide_columns,
)
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace
from tests.jobs.study import run

SAMPLE = Path(__file__).resolve().parents[2] / "sample_interviews"
needs_space = pytest.mark.skipif(
    not pretrained.installed(pretrained.DEFAULT), reason="the pretrained space is not installed"
)


@pytest.fixture
def demo(tmp_path: Path) -> Path:
    root = init_workspace(tmp_path / "demo")
    with Workspace.open(root) as ws:
        add_files(ws, interview_files(SAMPLE / "interviews"))
    return root


def _target(merges: tuple, value: str) -> str | None:
    for s in merges:
        if value == s.value or value in {v for v, _ in s.others}:
            return str(s.value)
    return None


def test_groups_match_scipy_average_linkage() -> None:
    # scipy.cluster.hierarchy (average linkage, cut at a cophenetic distance) is the
    # reference for the grouping rule; random unit vectors with a few near-copies.
    rng = np.random.default_rng(3)
    base = rng.normal(size=(12, 16))
    rows = np.vstack([base, base[:4] + rng.normal(scale=0.3, size=(4, 16))])
    rows /= np.linalg.norm(rows, axis=1, keepdims=True)
    ours = {frozenset(g) for g in _groups(rows, THRESHOLD)}
    labels = fcluster(linkage(rows, "average", metric="cosine"), 1 - THRESHOLD, "distance")
    theirs = {
        frozenset(int(i) for i in np.flatnonzero(labels == k))
        for k in set(labels.tolist())
        if (labels == k).sum() > 1
    }
    assert ours == theirs and ours


@needs_space
def test_demo_roles_get_cross_language_suggestions(demo: Path) -> None:
    with Workspace.open(demo) as ws:
        before = store.respondents(ws.conn)
        merged = metadata_merges(ws)
        assert len(wide_columns(merged.records)["role"]) > MAX_GROUPS
        suggested = metadata_suggestions(ws, merged)
        assert store.respondents(ws.conn) == before  # nothing stored changes
    merges = suggested.merges
    assert {s.column for s in merges} == {"role"}
    for value in ("agricultrice", "agricultor", "agricultora", "agriculteur"):
        assert _target(merges, value) == "farmer"
    assert _target(merges, "commerçante") == _target(merges, "comerciante") is not None
    assert _target(merges, "school cook") is None
    farmer = next(s for s in merges if s.value == "farmer")
    assert farmer.count == 9 and farmer.respondents == 9 + 7 + 5 + 4 + 4


def test_nothing_is_suggested_without_the_space(demo: Path) -> None:
    with Workspace.open(demo) as ws:
        suggested = metadata_suggestions(ws, space=pretrained.NONE)
    assert suggested.merges == () and suggested.values_line == ""


def test_narrow_columns_get_no_suggestions(study: Path) -> None:
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    with Workspace.open(study) as ws:
        assert metadata_suggestions(ws).merges == ()
    code, out = run("-w", str(study), "status")
    assert code == 0 and "Suggested merges" not in out


@needs_space
def test_pasted_line_parses_and_makes_status_read_them_as_one(demo: Path) -> None:
    code, out = run("-w", str(demo), "status")
    assert code == 0 and "read as one only after you add them" in out
    assert "role: farmer (9) <- agricultrice (7), agricultor (5)" in out
    line = next(x for x in out.splitlines() if x.startswith("values = {"))
    # tomllib (Python standard library) is the reference TOML 1.0 reader
    parsed = tomllib.loads(line)["values"]["role"]
    assert parsed["agricultrice"] == "farmer" and parsed["agricultor"] == "farmer"
    assert "farmer" not in re.findall(r'"([^"]+)" =', line)  # the target maps nowhere
    toml = demo / "traits.toml"
    text = toml.read_text(encoding="utf-8")
    old = re.search(r"^values = \{\}.*$", text, re.M)
    assert old is not None
    toml.write_text(text[: old.start()] + line + text[old.end() :], encoding="utf-8")
    with Workspace.open(demo) as ws:
        read = {(v.column, v.value): set(v.spellings) for v in metadata_merges(ws).values}
        again = metadata_suggestions(ws)
    assert {"agricultrice", "agricultor", "agriculteur", "agricultora", "farmer"} <= read[
        ("role", "farmer")
    ]
    assert _target(again.merges, "agricultrice") is None  # already read as one
    code, out = run("-w", str(demo), "status")
    row = next(x for x in out.splitlines() if "│ role" in x and "│ farmer" in x)
    assert row.rstrip(" │").endswith("29")


def test_values_line_quotes_any_spelling_and_keeps_existing_mappings() -> None:
    odd = 'vendor "big" [market] \\ é'
    merge = MergeSuggestion("role", "trader", ((odd, 2), ("agricultrice", 1)), 5, 2)
    line = values_line([merge], {"role": {"agricultrice": "farmer"}, "gender": {"W": "female"}})
    # tomllib (Python standard library) is the reference TOML 1.0 reader
    parsed = tomllib.loads(line)["values"]
    assert parsed == {"role": {"agricultrice": "farmer", odd: "trader"}, "gender": {"W": "female"}}
