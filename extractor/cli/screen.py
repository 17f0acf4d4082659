"""The labeling screen: one sentence at a time, keyboard only, drawn with rich.

The screen reads whole lines, so it works the same in a terminal, from a pipe and in
tests (an injectable input stream and rich ``Console``). What the annotator can type:

- Enter alone: keep the answer exactly as shown and go on (no spans shown = no trait).
- some words of the sentence (or ``m words``): mark them as a trait span; if the words
  occur more than once, the screen asks which; then a concept is chosen by typing a
  few letters of any label or alias, in any language, and picking a number; then the
  stance with one key.
- ``x N`` drop span N, ``c N`` change its concept, ``t N`` change its stance,
  ``a N`` add span N's words as a new alias of its concept (N may be left out when
  there is one span). Arguments may follow on the same line (``x 1 3``, ``t 1 d``,
  ``c 2 yield``); without them the screen asks step by step. Span numbers stay the
  same while a sentence is shown: dropping span 1 leaves span 2 as 2.
- Words that overlap a span replace it (the screen says so). ``+``/``-``: screen_implicit.
- ``n`` no trait here, ``s`` skip, ``u`` undo the last answer, ``q`` save and quit,
  ``?`` help and the model's figures behind the plain words. End of input behaves
  like ``q``; Ctrl-C at any prompt also quits, and nothing is lost because every
  answer is committed the moment it is given.

The screen holds no scores and writes no SQL: it draws what :class:`Session` returns.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Callable, Mapping, Sequence
from typing import Any, TextIO

from rich.console import Console
from rich.text import Text

from extractor.cli import screen_implicit
from extractor.cli.common import spoken_list
from extractor.cli.screen_draw import (
    HELP_TEXT,
    Figures,
    Quality,
    concept_label,
    draw_item,
    figures_text,
)
from extractor.cli.screen_input import MAX_LINE, line_reader, too_long
from extractor.errors import TraitsError
from extractor.loop.items import Item, SessionSummary
from extractor.loop.marking import (
    ConceptEntry,
    ConceptMatch,
    concept_entries,
    concepts_for_words,
    default_stance,
    find_phrase,
    kept,
    rank_concepts,
)
from extractor.loop.predictor import Predictor, Retrain
from extractor.loop.samples import SessionSettings
from extractor.loop.session import Session
from extractor.types import STANCES, Implicit, Span

STANCE_KEYS = {"l": "liked", "d": "disliked", "w": "wanted", "n": "neutral"}
"""One key per stance."""

SPAN_COMMANDS = ("x", "c", "t", "a")
"""Commands on a numbered span: drop, concept, stance, alias."""

Draft = list[Span | None]
"""The answer being edited: position N-1 holds span N; a dropped span leaves None."""


def _either(numbers: Sequence[int]) -> str:
    """Return "2", "2 or 3", "2, 3 or 4"."""
    return spoken_list([str(n) for n in numbers], "or")


def _stance_of(key: str) -> str | None:
    key = key.lower()
    return STANCE_KEYS.get(key) or (key if key in STANCES else None)


class _Quit(Exception):
    """The annotator asked to stop (``q``, end of input)."""


class LabelScreen:
    """The interactive loop over a :class:`Session`; it keeps the current draft."""

    def __init__(
        self,
        session: Session,
        *,
        console: Console,
        read_line: Callable[[str], str | None],
        entries: Sequence[ConceptEntry],
        quality: Quality | None = None,
        respondents: Mapping[str, Mapping[str, Any]] | None = None,
        questions: Mapping[str, str] | None = None,
    ) -> None:
        self.session = session
        self.respondents = respondents or {}  # ID -> metadata as the workbook reads it
        self.questions = questions or {}  # field name -> the codebook's wording
        self.console = console
        self._read = read_line
        self.entries = list(entries)
        self._quality = quality
        self._quality_cache: tuple[int, Figures | None] | None = None
        self._message = ""
        self.implicit: list[Implicit] = []  # the draft's traits without a quote span

    # ----------------------------------------------------------------- prompts

    def ask(self, prompt: str) -> str:
        """Read one line; end of input quits; a line over :data:`MAX_LINE` is asked again."""
        while True:
            line = self._read(prompt)
            if line is None:
                raise _Quit
            if len(line) <= MAX_LINE:
                return line.strip()
            self.console.print(Text(too_long(line)))

    def say(self, message: str) -> None:
        """Show a one-line message under the sentence on the next redraw."""
        self._message = message

    def _quality_figures(self) -> Figures | None:
        if self._quality is None:
            return None
        version = self.session.model_version
        if self._quality_cache is None or self._quality_cache[0] != version:
            self._quality_cache = (version, self._quality())
        return self._quality_cache[1]

    def draw(self, item: Item, draft: Draft) -> None:
        """Draw the sentence in its context, the draft answer, progress and help."""
        draw_item(
            self.console,
            self.session,
            item,
            draft,
            entries=self.entries,
            figures=self._quality_figures(),
            message=self._message,
            implicit=self.implicit,
            metadata=self.respondents.get(item.context.respondent),
            wording=self.questions.get(item.context.question or ""),
        )
        self._message = ""

    def choose_occurrence(self, text: str, found: Sequence[tuple[int, int]]) -> tuple[int, int]:
        """Ask which occurrence of the typed words is meant (when there are several)."""
        if len(found) == 1:
            return found[0]
        self.console.print(f"Those words occur {len(found)} times:")
        for n, (start, end) in enumerate(found, 1):
            line = Text(f"  {n}  …{text[max(0, start - 25) : start]}")
            line.append(text[start:end], style="bold underline")
            line.append(f"{text[end : end + 25]}…")
            self.console.print(line)
        while True:
            answer = self.ask(f"which one (1-{len(found)})? ")
            if answer.isdigit() and 1 <= int(answer) <= len(found):
                return found[int(answer) - 1]
            self.console.print(f"Type a number from 1 to {len(found)}.")

    def choose_concept(
        self, words: str, current: str | None, lang: str, query: str | None = None
    ) -> str | None:
        """Ranked completion over every label and alias; returns a concept ID or None.

        The first list holds the concepts with a name inside the marked ``words``, then
        completions of the words; with ``query`` (letters typed on the command line) it
        holds the completions of the query instead.
        """
        matches: list[ConceptMatch] = (
            concepts_for_words(words, self.entries, lang=lang)
            if query is None
            else rank_concepts(query, self.entries, lang=lang)
        )
        if query is not None and not matches:
            self.console.print(Text(f"No concept is named like {query!r}; try others."))
        default = current if current is not None else (matches[0].concept if matches else None)
        while True:
            self._show_matches(matches)
            answer = self.ask(
                f"concept — letters to search, number to pick, - for none "
                f"(Enter: {default or 'none'}): "
            )
            if answer == "":
                return default
            if answer == "-":
                return None
            if answer.isdigit():
                if 1 <= int(answer) <= len(matches):
                    return matches[int(answer) - 1].concept
                self.console.print(Text(f"There is no match number {answer}."))
                continue
            chosen = screen_implicit.clear_concept(answer, self.entries, lang)
            if chosen is not None:
                self.say(f"Concept: {concept_label(self.entries, chosen, lang)}.")
                return chosen
            matches = rank_concepts(answer, self.entries, lang=lang)
            if not matches:
                self.console.print(Text(f"No concept is named like {answer!r}; try others."))

    def _show_matches(self, matches: Sequence[ConceptMatch]) -> None:
        for n, m in enumerate(matches, 1):
            line = Text(f"  {n}  {m.concept}  {m.label}")
            if m.matched != m.label:
                line.append(f"  ({m.matched}, {m.lang})", style="dim")
            self.console.print(line)

    def choose_stance(self, current: str | None, subject: str = "") -> str:
        """One key per stance; Enter keeps the current one (the offered one for a new span).

        ``subject`` names what the stance is for (the span's words and concept, or the
        concept of a trait without a quote span); the prompt says it, so that a concept
        just taken by its letters is named before its stance is asked.
        """
        default = current or "neutral"
        keys = " · ".join(f"{k} {v}" for k, v in STANCE_KEYS.items())
        about = f" of {subject}" if subject else ""
        while True:
            answer = self.ask(f"stance{about} — {keys} (Enter: {default}): ")
            if answer == "":
                return default
            stance = _stance_of(answer)
            if stance is not None:
                return stance
            self.console.print("Press l, d, w or n.")

    def _subject(self, words: str, concept: str | None, lang: str) -> str:
        """Name a span for a prompt: its words and its concept's ID and label."""
        return f"{words!r} ({concept_label(self.entries, concept, lang)})"

    # ----------------------------------------------------------------- editing

    def _span_number(self, arg: str, draft: Draft) -> int | None:
        """Return the draft position of span number ``arg`` (or of the only span), else None."""
        numbers = [n for n, span in enumerate(draft, 1) if span is not None]
        if arg == "" and len(numbers) == 1:
            return numbers[0] - 1
        if arg.isdigit() and int(arg) in numbers:
            return int(arg) - 1
        if not numbers:
            self.say("No span to change.")
        elif arg.isdigit() and 1 <= int(arg) <= len(draft):
            self.say(f"Span {arg} was dropped; give {_either(numbers)}.")
        else:
            self.say(f"Give a span number: {_either(numbers)}.")
        return None

    def mark(self, item: Item, words: str, draft: Draft) -> None:
        """Mark typed words as a new span, then ask its concept and stance.

        Words overlapping spans of the draft replace them: the new span takes the first
        one's number, and its concept and stance are offered as the defaults.
        """
        text = item.sentence.text
        lang = item.sentence.lang
        found = find_phrase(text, words, lang)
        if not found:
            self.say(f"{words!r} is not in this sentence; type words exactly as they appear.")
            return
        start, end = self.choose_occurrence(text, found)
        overlapped = [
            k
            for k, other in enumerate(draft)
            if other is not None and start < other.end and other.start < end
        ]
        replaced = draft[overlapped[0]] if overlapped else None
        concept = self.choose_concept(text[start:end], replaced and replaced.concept, lang)
        stance = (replaced and replaced.stance) or default_stance(
            item.sentence, item.prediction, start, end
        )
        subject = self._subject(text[start:end], concept, lang)
        span = Span(start, end, concept, self.choose_stance(stance, subject))
        if not overlapped:
            draft.append(span)
            return
        names = " and ".join(
            f"{k + 1} ({text[o.start : o.end]!r})"
            for k in overlapped
            if (o := draft[k]) is not None
        )
        for k in overlapped:
            draft[k] = None
        draft[overlapped[0]] = span
        plural = "s" if len(overlapped) > 1 else ""
        self.say(f"Replaced span{plural} {names} with {text[start:end]!r}.")

    def add_alias(self, item: Item, span: Span) -> None:
        """Add the span's words as an alias of its concept."""
        try:
            added = self.session.add_alias(item.sentence.id, span)
        except TraitsError as exc:
            self.say(str(exc))
            return
        words = item.sentence.text[span.start : span.end]
        if added and span.concept is not None:
            self.entries.append(ConceptEntry(span.concept, words, item.sentence.lang, False))
            self.say(f"Added {words!r} as an alias of {span.concept}.")
        else:
            self.say(f"{words!r} is already an alias of {span.concept}.")

    def edit(self, item: Item, command: str, args: Sequence[str], draft: Draft) -> None:
        """Apply a span command (``x``, ``c``, ``t``, ``a``) with what followed it on the line."""
        if command == "x":
            if not all(a.isdigit() for a in args):
                self.say("x takes span numbers only, like x 1 or x 1 3.")
                return
            picked = [self._span_number(a, draft) for a in args or [""]]
            if None not in picked:
                for k in picked:
                    draft[k or 0] = None
            return
        k = self._span_number(args[0] if args else "", draft)
        span = draft[k] if k is not None else None
        if k is None or span is None:
            return
        rest = " ".join(args[1:])
        if command == "c":
            draft[k] = span._replace(concept=self._concept_for(item, span, rest))
        elif command == "t":
            words = item.sentence.text[span.start : span.end]
            subject = self._subject(words, span.concept, item.sentence.lang)
            stance = _stance_of(rest) if rest else self.choose_stance(span.stance, subject)
            if stance is None:
                self.say(f"Give the stance as l, d, w or n, like t {k + 1} d.")
            else:
                draft[k] = span._replace(stance=stance)
        elif rest:
            self.say(f"a takes one span number, like a {k + 1}.")
        else:
            self.add_alias(item, span)

    def _concept_for(self, item: Item, span: Span, query: str) -> str | None:
        """Return the concept for ``c N [letters]``: one clear match at once, else ask."""
        words = item.sentence.text[span.start : span.end]
        lang = item.sentence.lang
        if not query:
            return self.choose_concept(words, span.concept, lang)
        if query == "-":
            return None
        chosen = screen_implicit.clear_concept(query, self.entries, lang)
        if chosen is not None:
            self.say(f"Concept: {concept_label(self.entries, chosen, lang)}.")
            return chosen
        return self.choose_concept(words, span.concept, lang, query=query)

    def handle(self, item: Item, line: str, draft: Draft) -> bool:
        """Apply one typed line to the draft; return True when the sentence is done."""
        sid = item.sentence.id
        command, _, arg = line.partition(" ")
        arg = arg.strip()
        if line == "":
            self.session.submit(sid, kept(draft), self.implicit)
            return True
        if line == "q":
            raise _Quit
        if screen_implicit.command(self, item.sentence.lang, line):
            return False
        if line == "n":
            self.session.submit(sid, [])
            return True
        if line == "s":
            self.session.skip(sid)
            return True
        if line == "u":
            if self.session.undo() is None:
                self.say("There is no answer of yours to undo.")
                return False
            self.session.defer(sid)  # the current sentence comes right after the undone one
            self.say("Your last answer was withdrawn; here it is again.")
            return True
        if line == "?":
            self.console.print(HELP_TEXT)
            self.console.print(figures_text(self.session, item, draft, self._quality_figures()))
            self.ask("Enter to go back ")
            return False
        parts = line.split()
        if parts[0] in SPAN_COMMANDS and (len(parts) == 1 or parts[1].isdigit()):
            self.edit(item, parts[0], parts[1:], draft)
            return False
        words = arg if command == "m" and arg else line
        self.mark(item, words, draft)
        return False

    def run(self) -> None:
        """Show sentences until nothing is left, the annotator quits or presses Ctrl-C."""
        try:
            self.loop()
        except _Quit:
            pass
        except KeyboardInterrupt:
            self.console.print()

    def loop(self) -> None:
        """Show sentences until nothing is left or the annotator quits."""
        while True:
            item = self.session.next()
            if item is None:
                self.console.print("Nothing left to ask: every sentence is labeled or skipped.")
                return
            draft: Draft = screen_implicit.start(self, item)
            done = False
            while not done:
                self.draw(item, draft)
                line = self.ask("› ")
                try:
                    done = self.handle(item, line, draft)
                except _Quit:
                    raise
                except TraitsError as exc:
                    self.say(str(exc))


def run_console(
    conn: sqlite3.Connection,
    *,
    annotator: str,
    batch_size: int = 10,
    strategy: str = "default",
    model_provider: Predictor | None = None,
    retrain: Retrain | None = None,
    console: Console | None = None,
    input_stream: TextIO | None = None,
    settings: SessionSettings | None = None,
    quality: Quality | None = None,
    version: str | None = None,
    newer_labels: int = 0,
    notice: str = "",
    respondents: Mapping[str, Mapping[str, Any]] | None = None,
    questions: Mapping[str, str] | None = None,
) -> SessionSummary:
    """Run a labeling session in the terminal (or over a pipe) and return its summary.

    Args:
        conn: the workspace store.
        annotator: name stored with every label.
        batch_size: sentences picked together by the strategy.
        strategy: a name from :data:`extractor.loop.strategies.STRATEGIES`.
        model_provider: the current model's predictor, or None before any model.
        retrain: background refits every few labels (:data:`~extractor.loop.predictor.Retrain`).
        console: where to draw; a new rich Console on standard output by default.
        input_stream: where to read lines; standard input by default.
        settings: session settings.
        quality: returns estimated quality on the evaluation sample, if known.
        version: the saved model version ``model_provider`` comes from, shown on screen.
        newer_labels: labels given after that version was trained (the screen says so).
        notice: a line shown under the first sentence.
        respondents: respondent ID -> metadata as the workbook reads it
            (:func:`extractor.report.results.respondent_metadata`); the stored
            columns are shown for a respondent not in it.
        questions: question as stored -> its codebook wording, shown beside it.

    Returns:
        The session summary (also when input fails, the session quits: its leases end).

    Raises:
        TraitsError: the session cannot start (unknown strategy, empty annotator...).
    """
    console = console or Console()
    session = Session.open(
        conn,
        annotator=annotator,
        strategy=strategy,
        batch_size=batch_size,
        predictor=model_provider,
        retrain=retrain,
        settings=settings,
        version=version,
        newer_labels=newer_labels,
    )
    screen = LabelScreen(
        session,
        console=console,
        read_line=line_reader(console, input_stream),
        entries=concept_entries(conn),
        quality=quality,
        respondents=respondents,
        questions=questions,
    )
    screen.say(notice)
    try:
        screen.run()
    finally:
        summary = session.quit()
    console.print(
        f"Saved: {summary.labeled} labels this session, {summary.total_labels} in total"
        f", {summary.skipped} skipped."
    )
    return summary
