"""The labeling screen, driven through injectable input and a recording rich Console."""

from __future__ import annotations

import io
import os
import signal
import sqlite3
import subprocess
import sys
import time
from collections.abc import Iterator
from pathlib import Path
from typing import TextIO

import pytest
from rich.console import Console

from extractor.cli.screen import LabelScreen, run_console
from extractor.loop.items import SessionSummary
from extractor.loop.marking import concept_entries
from extractor.loop.samples import SessionSettings
from extractor.loop.session import Session
from extractor.types import Span
from extractor.workspace import store
from tests.fake_model import ANSWERS, FakeModel, build_store  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
NO_EVAL = SessionSettings(evaluation_fraction=0.0, evaluation_min=0, stop_set_size=0)
TEXTS = [part for answer in ANSWERS for part in answer]  # sentence i + 1 is TEXTS[i]


@pytest.fixture
def conn(tmp_path: Path) -> Iterator[sqlite3.Connection]:
    c = build_store(tmp_path / "traits.sqlite")
    yield c
    c.close()


def _run(
    conn: sqlite3.Connection,
    lines: list[str],
    *,
    input_stream: TextIO | None = None,
    model_provider: FakeModel | None = None,
) -> tuple[SessionSummary, str]:
    out = io.StringIO()
    summary = run_console(
        conn,
        annotator="Ama",
        batch_size=4,
        strategy="least_confidence",
        model_provider=model_provider or FakeModel(),
        settings=NO_EVAL,
        console=Console(file=out, force_terminal=False, width=120),
        input_stream=input_stream or io.StringIO("".join(line + "\n" for line in lines)),
    )
    return summary, out.getvalue()


def _span(sid: int, words: str, concept: str | None, stance: str | None) -> Span:
    start = TEXTS[sid - 1].lower().index(words.lower())
    return Span(start, start + len(words), concept, stance)


# One scripted line group per sentence; the fake model makes least confidence ask 1..20.
SCRIPT = [
    [""],  # 1 keep "cooks fast"
    [""],  # 2 nothing suggested: Enter = no trait
    ["harvest", "", "d", ""],  # 3 mark, top concept by Enter, disliked
    ["n"],  # 4 no trait
    [""],  # 5 keep "bitter"
    ["s"],  # 6 skip
    ["t 1", "w", ""],  # 7 change stance to wanted
    ["x 1", ""],  # 8 drop the suggestion
    ["m survives the dry spell", "drou", "1", "w", ""],  # 9 search a concept
    [""],
    [""],  # 10, 11
    ["c 1", "yie", "1", ""],  # 12 change concept
    [""],  # 13 keep "bitter" ...
    ["u", "n", ""],  # 14: undo 13, answer 13 again with "no trait", then keep 14
    ["bigger harvest", "yield", "1", "w", "a", ""],  # 15 new alias
    [""],  # 16
    ["soup turns dark", "-", "d", ""],  # 17 a span with no concept
    [""],  # 18
    [""],  # 19 keep two suggestions
    ["?", "", ""],  # 20 help, back, keep
]

EXPECTED = {
    1: [_span(1, "cooks fast", "BTX:0002", "liked")],
    2: [],
    3: [_span(3, "harvest", "BTX:0015", "disliked")],
    4: [],
    5: [_span(5, "bitter", "BTX:0007", "disliked")],
    7: [_span(7, "big grains", "BTX:0011", "wanted")],
    8: [],
    9: [_span(9, "survives the dry spell", "BTX:0020", "wanted")],
    10: [],
    11: [],
    12: [_span(12, "cooks fast", "BTX:0015", "liked")],
    13: [],
    14: [],
    15: [_span(15, "bigger harvest", "BTX:0015", "wanted")],
    16: [],
    17: [_span(17, "soup turns dark", None, "disliked")],
    18: [],
    19: [_span(19, "cooks fast", "BTX:0002", "liked"), _span(19, "bitter", "BTX:0007", "disliked")],
    20: [],
}


def test_scripted_session_of_twenty_sentences_stores_every_answer(
    conn: sqlite3.Connection,
) -> None:
    summary, screen = _run(conn, [line for group in SCRIPT for line in group])
    labels = store.current_labels(conn)
    assert {sid: label.spans for sid, label in labels.items()} == EXPECTED
    assert {label.annotator for label in labels.values()} == {"Ama"}
    assert store.skipped(conn, "Ama") == {6}
    assert [r["action"] for r in store.label_history(conn) if r["sentence_id"] == 13] == [
        "label",
        "retract",
        "label",
    ]
    assert summary.labeled == 19 and summary.skipped == 1 and summary.undone == 1
    assert "Nothing left to ask" in screen


def test_scripted_session_adds_alias_of_annotator(conn: sqlite3.Connection) -> None:
    _run(conn, [line for group in SCRIPT for line in group])
    added = [a for a in store.aliases(conn) if a.origin == "annotator"]
    assert [(a.concept_id, a.text, a.lang, a.added_by) for a in added] == [
        ("BTX:0015", "bigger harvest", "en", "Ama")
    ]


@pytest.mark.parametrize(
    ("sentence", "expected"),
    [
        (
            19,
            [
                _span(19, "cooks fast", "BTX:0002", "liked"),
                _span(19, "bitter", "BTX:0007", "disliked"),
            ],
        ),
        (2, []),
    ],
    ids=["two-suggestions", "nothing-suggested"],
)
def test_enter_keeps_the_suggestion_exactly(
    conn: sqlite3.Connection, sentence: int, expected: list[Span]
) -> None:
    model = FakeModel(path_prob=lambda s: 0.1 if s.id == sentence else 0.9)
    _run(conn, ["", "q"], model_provider=model)
    assert {k: v.spans for k, v in store.current_labels(conn).items()} == {sentence: expected}


def test_q_saves_and_quits_without_reading_further(conn: sqlite3.Connection) -> None:
    stream = io.StringIO("\nn\nq\nn\nn\n")
    summary, screen = _run(conn, [], input_stream=stream)
    assert sorted(store.current_labels(conn)) == [1, 2]
    assert summary.labeled == 2
    assert stream.readline() == "n\n"
    assert "Saved: 2 labels this session" in screen


def test_end_of_input_behaves_like_q(conn: sqlite3.Connection) -> None:
    summary, _ = _run(conn, ["n", "harvest"])  # input ends at the concept prompt
    assert sorted(store.current_labels(conn)) == [1]
    assert summary.labeled == 1


class _Interrupting(io.StringIO):
    """An input stream that raises Ctrl-C once its lines run out."""

    # typeshed gives StringIO two readline signatures that disagree (bytes from _IOBase)
    def readline(self, size: int = -1, /) -> str:  # type: ignore[override]
        line = super().readline(size)
        if line == "":
            raise KeyboardInterrupt
        return line


def test_ctrl_c_at_a_prompt_keeps_everything_confirmed(conn: sqlite3.Connection) -> None:
    summary, screen = _run(conn, [], input_stream=_Interrupting("n\n\nharvest\n"))
    assert sorted(store.current_labels(conn)) == [1, 2]
    assert summary.labeled == 2
    assert "Saved: 2 labels" in screen


def test_ambiguous_words_ask_which_occurrence(tmp_path: Path) -> None:
    conn = build_store(tmp_path / "t.sqlite", [("Sweet beans make sweet soup.",)])
    _, screen = _run(
        conn,
        ["sweet soup", "-", "l", "x 1", "sweet", "7", "2", "", "n", ""],
    )
    assert "occur 2 times" in screen
    assert "Type a number from 1 to 2" in screen
    assert store.current_labels(conn)[1].spans == [Span(17, 22, None, "neutral")]


def test_words_not_in_sentence_are_refused_with_a_message(conn: sqlite3.Connection) -> None:
    _, screen = _run(conn, ["purple", "q"])
    assert "'purple' is not in this sentence" in screen
    assert store.current_labels(conn) == {}


def test_screen_shows_context_suggestion_and_help(conn: sqlite3.Connection) -> None:
    _, screen = _run(conn, ["n", "q"])
    for expected in [
        "Why do you grow this bean?",
        "gender man",
        "district Tinsoka",
        "Zamaro Red cooks fast on the fire.",
        "BTX:0002 cooking time",
        "liked",
        "span 0.80",
        "concept 0.70",
        "Enter keep",
        "q quit",
        "before",
        "Zamaro Red cooks fast on the fire.",
    ]:
        assert expected in screen


def test_screen_shows_quality_kappas_and_stop_sentence(conn: sqlite3.Connection) -> None:
    out = io.StringIO()
    session = Session.open(conn, annotator="Ama", predictor=FakeModel(), settings=NO_EVAL)
    session.kappas.extend([0.995, 0.999, 1.0])
    screen = LabelScreen(
        session,
        console=Console(file=out, force_terminal=False, width=120),
        read_line=lambda prompt: None,
        entries=concept_entries(conn),
        quality=lambda: {"f1": 0.61, "sentences": 40},
    )
    item = session.next()
    assert item is not None
    screen.draw(item, list(item.suggestion))
    text = out.getvalue()
    assert "f1 0.61 sentences 40" in text
    assert "0.995 0.999 1.000" in text
    assert "Further labels are changing little" in text


def test_stop_sentence_absent_before_rule_fires(conn: sqlite3.Connection) -> None:
    _, screen = _run(conn, ["q"])
    assert "changing little" not in screen


CHILD = """
import sys
from pathlib import Path
sys.path[:0] = [{root!r}, {tests!r}]
from rich.console import Console
from extractor.workspace import store
from extractor.cli.screen import run_console
from extractor.loop.samples import SessionSettings
from tests.fake_model import FakeModel
conn = store.connect(Path({db!r}))
run_console(conn, annotator="Ama", batch_size=4, strategy="least_confidence",
            model_provider=FakeModel(), console=Console(file=open("/dev/null", "w")),
            input_stream=sys.stdin,
            settings=SessionSettings(evaluation_fraction=0, evaluation_min=0, stop_set_size=0))
"""


@pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs POSIX SIGKILL")
def test_killed_process_keeps_the_five_answers_given(tmp_path: Path) -> None:
    db = tmp_path / "traits.sqlite"
    build_store(db).close()
    code = CHILD.format(root=str(ROOT), tests=str(ROOT / "tests"), db=str(db))
    child = subprocess.Popen(
        [sys.executable, "-c", code],
        stdin=subprocess.PIPE,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        assert child.stdin is not None
        child.stdin.write("\n" * 2 + "n\n" * 3)  # five answers; the pipe stays open
        child.stdin.flush()
        watcher = store.connect(db)
        # generous: the child first imports the package, slow on a loaded machine
        deadline = time.monotonic() + 120
        while len(store.current_labels(watcher)) < 5 and time.monotonic() < deadline:
            assert child.poll() is None, child.stderr.read() if child.stderr else ""
            time.sleep(0.05)
        watcher.close()
    finally:
        os.kill(child.pid, signal.SIGKILL)
        child.wait(timeout=10)
    assert child.returncode == -signal.SIGKILL
    reopened = store.connect(db)
    labels = store.current_labels(reopened)
    assert sorted(labels) == [1, 2, 3, 4, 5]
    assert labels[1].spans == [_span(1, "cooks fast", "BTX:0002", "liked")]


def test_edited_span_shows_model_probability_of_the_new_choice(conn: sqlite3.Connection) -> None:
    _, screen = _run(conn, ["c 1", "yie", "1", "q"])
    after = screen.split("yie", 1)[1]
    assert "BTX:0015 yield" in after
    assert "concept 0.30" in after  # the fake linker's probability of BTX:0015
    assert "(edited; Enter saves what is shown)" in after
