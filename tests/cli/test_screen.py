"""The labeling screen, driven through injectable input and a recording rich Console."""

from __future__ import annotations

import io
import json
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

from extractor.cli import screen_implicit
from extractor.cli.screen import LabelScreen, run_console
from extractor.cli.screen_draw import status_line
from extractor.errors import InputError
from extractor.loop.items import SessionSummary
from extractor.loop.marking import ConceptEntry, concept_entries, rank_concepts
from extractor.loop.samples import SessionSettings
from extractor.loop.session import Session
from extractor.types import Span
from extractor.workspace import store
from tests.fake_model import ALIASES, ANSWERS, FakeModel, build_store, fake_retrain  # noqa: E402

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
        "model sure of the words and stance, fairly sure of the concept",
        "Enter keep",
        "q quit",
        "before",
        "Zamaro Red cooks fast on the fire.",
    ]:
        assert expected in screen
    assert "span 0.80" not in screen  # the figures are behind "?"


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
    assert "quality on the random check sample: 61 out of 100" in text
    assert "the last two models agree almost perfectly" in text
    assert "Further labels are changing little" in text
    for jargon in ("κ", "0.995", "f1 0.61", "span 0.80"):
        assert jargon not in text


def test_help_key_shows_the_figures_behind_the_plain_words(conn: sqlite3.Connection) -> None:
    out = io.StringIO()
    session = Session.open(conn, annotator="Ama", predictor=FakeModel(), settings=NO_EVAL)
    session.kappas.extend([0.908])
    lines = iter(["?", "", "q"])
    screen = LabelScreen(
        session,
        console=Console(file=out, force_terminal=False, width=160),
        read_line=lambda prompt: next(lines, None),
        entries=concept_entries(conn),
        quality=lambda: {"span F1": 0.61, "of version": "v002"},
    )
    screen.run()
    text = out.getvalue()
    main, behind = text.split("Enter to go back", 1)[0].split("Stance: l liked", 1)
    # Landis & Koch (1977) call a kappa above 0.80 "almost perfect" agreement
    assert "agree almost perfectly" in main and "0.908" not in main
    assert "span [1]: model probabilities span 0.80 concept 0.70 stance 0.90" in behind
    assert "quality on the evaluation sample: span F1 0.61 of version v002" in behind
    assert "Cohen's kappa: 0.908" in behind


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
    _, screen = _run(conn, ["c 1", "yie", "1", "?", "", "q"])
    after = screen.split("yie", 1)[1]
    assert "BTX:0015 yield" in after
    assert "model sure of the words and stance, unsure of the concept" in after
    assert "concept 0.30" in after.split("Enter to go back")[0]  # the fake linker's figure
    assert "(edited; Enter saves what is shown)" in after


def _first(sentence: int) -> FakeModel:
    """A fake model whose least confident sentence, asked first, is ``sentence``."""
    return FakeModel(path_prob=lambda s: 0.1 if s.id == sentence else 0.9)


def _labels(conn: sqlite3.Connection) -> dict[int, list[Span]]:
    return {k: v.spans for k, v in store.current_labels(conn).items()}


def test_span_numbers_stay_the_same_after_a_drop(conn: sqlite3.Connection) -> None:
    # sentence 19 has two suggestions, [1] "cooks fast" and [2] "bitter"
    _, screen = _run(conn, ["x 1", "x 2", "", "q"], model_provider=_first(19))
    assert _labels(conn) == {19: []}
    assert "Give a span number" not in screen


def test_a_dropped_span_number_is_refused_with_the_numbers_left(
    conn: sqlite3.Connection,
) -> None:
    _, screen = _run(conn, ["x 1", "t 1", "", "q"], model_provider=_first(19))
    assert "Span 1 was dropped; give 2." in screen
    assert _labels(conn) == {19: [_span(19, "bitter", "BTX:0007", "disliked")]}


@pytest.mark.parametrize(
    ("line", "expected"),
    [
        (
            "t 1 w",
            [
                _span(19, "cooks fast", "BTX:0002", "wanted"),
                _span(19, "bitter", "BTX:0007", "disliked"),
            ],
        ),
        (
            "t 2 liked",
            [
                _span(19, "cooks fast", "BTX:0002", "liked"),
                _span(19, "bitter", "BTX:0007", "liked"),
            ],
        ),
        (
            "c 2 yield",
            [
                _span(19, "cooks fast", "BTX:0002", "liked"),
                _span(19, "bitter", "BTX:0015", "disliked"),
            ],
        ),
        (
            "c 1 -",
            [_span(19, "cooks fast", None, "liked"), _span(19, "bitter", "BTX:0007", "disliked")],
        ),
        ("x 1 2", []),
    ],
    ids=["stance-key", "stance-name", "concept-name", "no-concept", "drop-two"],
)
def test_command_with_its_arguments_on_one_line(
    conn: sqlite3.Connection, line: str, expected: list[Span]
) -> None:
    _, screen = _run(conn, [line, "", "q"], model_provider=_first(19))
    assert "is not in this sentence" not in screen
    assert _labels(conn) == {19: expected}


def test_concept_letters_on_one_line_that_fit_several_ask_which(
    conn: sqlite3.Connection,
) -> None:
    # "t" is in several names: the screen lists them and asks, as it does without letters
    _, screen = _run(conn, ["c 1 t", "2", "", "q"], model_provider=_first(19))
    assert "number to pick" in screen
    second = rank_concepts("t", concept_entries(conn), lang="en")[1].concept
    assert _labels(conn)[19][0] == _span(19, "cooks fast", second, "liked")


def test_letters_naming_one_concept_in_the_list_pick_it_without_a_number(
    conn: sqlite3.Connection,
) -> None:
    # "t" fits several names, so the list is shown; "yield" then names one concept, which
    # is taken at once (no "1" to type for a single match) and said back
    _, screen = _run(conn, ["c 1 t", "yield", "", "q"], model_provider=_first(19))
    assert "number to pick" in screen
    assert "Concept: " in screen
    assert _labels(conn)[19][0] == _span(19, "cooks fast", "BTX:0015", "liked")


def test_stance_prompt_names_the_words_and_a_concept_taken_by_its_letters(
    conn: sqlite3.Connection,
) -> None:
    # "yield" names one concept, which is taken at once inside the marking step; the
    # stance asked next names the marked words and that concept, and so does "t 1"
    _, screen = _run(
        conn, ["x 2", "bitter", "yield", "d", "t 1", "", "", "q"], model_provider=_first(19)
    )
    assert "stance of 'bitter' (BTX:0015 yield)" in screen
    assert "stance of 'cooks fast' (BTX:0002 cooking time)" in screen
    assert _labels(conn)[19][1] == _span(19, "bitter", "BTX:0015", "disliked")


def test_stance_prompt_of_a_trait_without_quote_span_names_its_concept(
    conn: sqlite3.Connection,
) -> None:
    _, screen = _run(conn, ["", "+ yield", "w", "", "q"])
    assert "stance of BTX:0015 yield" in screen
    rows = conn.execute("SELECT implicit FROM labels WHERE sentence_id = 2").fetchall()
    assert [json.loads(r[0]) for r in rows] == [[{"concept": "BTX:0015", "stance": "wanted"}]]


def test_new_span_stance_defaults_to_the_model_stance(conn: sqlite3.Connection) -> None:
    # the model says "bitter" is disliked in sentence 19, under a question that leans liked
    _run(conn, ["x 2", "bitter", "", "", "", "q"], model_provider=_first(19))
    assert _labels(conn)[19][1] == _span(19, "bitter", "BTX:0007", "disliked")


def test_new_span_stance_defaults_to_the_question_lean(tmp_path: Path) -> None:
    # Hu & Liu's (2004) opinion lexicon lists "dislike" as a negative word (from memory);
    # the packaged cue lexicon's question_disliked category holds it.
    conn = build_store(
        tmp_path / "q.sqlite",
        [("The soup turns dark.",)],
        question="What do you dislike about this bean?",
    )
    _, screen = _run(conn, ["soup turns dark", "-", "", "", "q"])
    assert "(Enter: disliked)" in screen
    assert _labels(conn) == {1: [Span(4, 19, None, "disliked")]}


@pytest.mark.parametrize(
    ("text", "lang", "alias", "words", "concept"),
    [
        (
            "Muhogo huu una ladha tamu sana.",
            "sw",
            ("BTX:0007", "ladha", "sw"),
            "ladha tamu",
            "BTX:0007",
        ),
        # "à" folds to "a": Unicode canonical decomposition (NFKD) drops the grave accent
        (
            "A mandioca aguenta bem à seca.",
            "pt",
            ("BTX:0020", "aguenta a seca", "pt"),
            "aguenta bem à seca",
            "BTX:0020",
        ),
    ],
    ids=["alias-inside-the-words", "alias-words-in-order-accent-folded"],
)
def test_typed_words_holding_an_alias_offer_its_concept_first(
    tmp_path: Path,
    text: str,
    lang: str,
    alias: tuple[str, str, str],
    words: str,
    concept: str,
) -> None:
    conn = build_store(
        tmp_path / "a.sqlite",
        [(text,)],
        lang=lang,
        aliases=[*ALIASES, (*alias, "alternative")],
    )
    _, screen = _run(conn, [words, "", "l", "", "q"])
    start = text.index(words)
    assert _labels(conn) == {1: [Span(start, start + len(words), concept, "liked")]}
    assert f"1  {concept}" in screen


def test_typed_span_overlapping_a_suggestion_replaces_it(conn: sqlite3.Connection) -> None:
    # sentence 1 suggests [1] "cooks fast"; the annotator marks the longer phrase
    _, screen = _run(conn, ["cooks fast on the fire", "", "", "", "q"])
    assert "Replaced span 1 ('cooks fast') with 'cooks fast on the fire'." in screen
    assert _labels(conn) == {1: [_span(1, "cooks fast on the fire", "BTX:0002", "liked")]}


def test_status_line_names_the_model_version(conn: sqlite3.Connection) -> None:
    out = io.StringIO()
    run_console(
        conn,
        annotator="Ama",
        model_provider=FakeModel(),
        settings=NO_EVAL,
        version="v004-20261201T101500",
        console=Console(file=out, force_terminal=False, width=120),
        input_stream=io.StringIO("q\n"),
    )
    assert "model v004-20261201T101500" in out.getvalue()
    assert "model 1" not in out.getvalue()


def test_status_line_says_when_labels_are_newer_than_the_model(conn: sqlite3.Connection) -> None:
    out = io.StringIO()
    run_console(
        conn,
        annotator="Ama",
        model_provider=FakeModel(),
        settings=NO_EVAL,
        version="v002",
        newer_labels=3,
        console=Console(file=out, force_terminal=False, width=160),
        input_stream=io.StringIO("q\n"),
    )
    assert "suggestions come from model v002, older than the last 3 labels" in out.getvalue()


def test_status_line_counts_updates_after_the_saved_version(conn: sqlite3.Connection) -> None:
    settings = SessionSettings(
        evaluation_fraction=0, evaluation_min=0, stop_set_size=0, retrain_every=1
    )
    session = Session.open(
        conn,
        annotator="Ama",
        predictor=FakeModel(),
        retrain=fake_retrain(),
        settings=settings,
        version="v002",
        newer_labels=4,
    )
    assert status_line(session).plain.endswith("model v002")
    assert session.behind == 4
    item = session.next()
    assert item is not None
    session.submit(item.sentence.id, [])
    assert session.wait_for_model(timeout=10)
    assert status_line(session).plain.endswith(
        "model v002, updated once with this session's labels"
    )
    assert session.behind == 0  # the update learned every label


def test_screen_refuses_a_very_long_line_without_echoing_it_whole(
    conn: sqlite3.Connection,
) -> None:
    long = "cooks fast " * 2_000  # 22,000 characters, e.g. a file pasted by mistake
    started = time.perf_counter()
    summary, shown = _run(conn, [long, "q"])
    elapsed = time.perf_counter() - started
    assert summary.labeled == 0
    assert "22,000 characters" in shown
    # The echo is cut: no shown line holds more than a screen's worth of the paste.
    assert max(len(line) for line in shown.splitlines()) < 400
    assert elapsed < 10, elapsed  # rich's highlighter took 5.5 s for 20,000 characters


@pytest.mark.parametrize("typed", ["[/]", "x[/]y", "[bold]x"], ids=str)
def test_typed_markup_is_text_never_rich_markup(conn: sqlite3.Connection, typed: str) -> None:
    # letters for a concept that match nothing are said back: "[/]" once raised MarkupError
    _, screen = _run(conn, [f"c 1 {typed}", typed, "-", "q"], model_provider=_first(19))
    assert f"No concept is named like {typed!r}" in screen
    assert screen.count(typed) >= 3  # the echo of both lines and the message, brackets kept


def test_pipe_line_not_in_utf8_is_refused_by_number_keeping_earlier_labels(
    conn: sqlite3.Connection,
) -> None:
    # Python reads a pipe in the C locale with surrogateescape: bad bytes become surrogates
    stream = io.TextIOWrapper(io.BytesIO(b"n\ncooks \xff fast\nq\n"), errors="surrogateescape")
    with pytest.raises(InputError, match=r"Line 2 of the input is not UTF-8 text"):
        _run(conn, [], input_stream=stream)
    assert len(store.current_labels(conn)) == 1  # the "n" of line 1 is kept


def test_pipe_decoding_strictly_is_refused_not_a_traceback(conn: sqlite3.Connection) -> None:
    # a strict stream decodes a whole chunk at once, so the error comes at the first read
    stream = io.TextIOWrapper(io.BytesIO(b"n\n\xff\xfe broken\nq\n"), encoding="utf-8")
    with pytest.raises(InputError, match=r"The input \(at or after line 1\) is not UTF-8"):
        _run(conn, [], input_stream=stream)
    assert store.current_labels(conn) == {}


def test_trait_without_quote_span_is_shown_under_the_sentence_and_stored(
    conn: sqlite3.Connection,
) -> None:
    # Sentence 2 has no suggestion; "+ yield d" adds yield, disliked, without a span.
    _, screen = _run(conn, ["", "+ yield d", "", "q"])
    frame = screen.split("› + yield d\n")[1].split("› ")[0]
    line = "Without quote span: [1] BTX:0015 yield disliked"
    assert line in frame
    assert frame.index(line) < frame.index("(edited; Enter saves what is shown)")
    assert frame.index(line) < frame.index("Enter keep")
    assert "no trait here" not in frame
    assert "suggested by the model" not in frame
    rows = conn.execute("SELECT spans, implicit FROM labels WHERE sentence_id = 2").fetchall()
    assert [(json.loads(r[0]), json.loads(r[1])) for r in rows] == [
        ([], [{"concept": "BTX:0015", "stance": "disliked"}])
    ]


def test_letters_beginning_one_concepts_name_take_it_though_they_occur_in_others() -> None:
    # the README's own example, "+ tast l": in a study whose list also held "striga
    # resistance" (s-t-r-i-g-a ... s-t: the letters t, a, s, t in order) the screen listed
    # both instead of taking taste
    entries = [
        ConceptEntry("MLX:001", "taste", "en", True),
        ConceptEntry("MLX:002", "striga resistance", "en", True),
        ConceptEntry("MLX:003", "grain yield", "en", True),
        ConceptEntry("MLX:004", "yield stability", "en", True),
    ]
    assert len(rank_concepts("tast", entries)) == 2
    assert screen_implicit.clear_concept("tast", entries, "en") == "MLX:001"
    assert screen_implicit.clear_concept("gra", entries, "en") == "MLX:003"  # a word's start
    assert screen_implicit.clear_concept("yie", entries, "en") is None  # begins two names
    assert screen_implicit.clear_concept("sta", entries, "en") == "MLX:004"  # "stability"
    assert screen_implicit.clear_concept("ta", entries, "en") == "MLX:001"
    # one letter names nothing by its start: "t" begins only "taste" here, but is in others
    assert screen_implicit.clear_concept("t", entries, "en") is None
