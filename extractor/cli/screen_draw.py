"""Drawing the labeling screen: the sentence in its context, the draft answer, progress, help.

Pure functions from what a :class:`~extractor.loop.session.Session` holds to rich
renderables; :mod:`extractor.cli.screen` reads the annotator's lines and calls them.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence

from rich.console import Console
from rich.markup import escape
from rich.rule import Rule
from rich.table import Table
from rich.text import Text

from extractor.loop.items import Item
from extractor.loop.marking import ConceptEntry
from extractor.loop.session import Session
from extractor.models.bundle import Mention
from extractor.types import Span

STANCE_STYLE = {
    "liked": "green",
    "disliked": "red",
    "wanted": "blue",
    "neutral": "yellow",
    None: "magenta",
}

HELP_LINE = "Enter keep · type words to mark · n no trait · s skip · u undo · q quit · ? more"
SPAN_HELP_LINE = "x N drop · c N concept · t N stance · a N add words as alias"

HELP_TEXT = """\
[bold]Enter[/]        keep what is shown and go on (nothing shown = no trait here)
[bold]words[/]        mark those words of the sentence as a trait (or [bold]m words[/])
[bold]x N[/]          drop span N
[bold]c N[/]          choose another concept for span N
[bold]t N[/]          choose another stance for span N
[bold]a N[/]          add the words of span N as a new alias of its concept
[bold]n[/]            no trait here        [bold]s[/]  skip (not asked again)
[bold]u[/]            undo your last answer and see it again
[bold]q[/]            save and quit (everything you confirmed is already saved)
Concepts: type a few letters of any name in any language, then the number shown.
Stance: l liked · d disliked · w wanted · n neutral."""

Figures = Mapping[str, float | str]
"""Estimated quality on the evaluation sample, e.g. ``{"span F1": 0.61, "of version": "v002"}``."""

Quality = Callable[[], Figures | None]
"""Returns the estimated quality on the evaluation sample, if it was measured."""

_METADATA_ORDER = ("role", "gender", "age", "district", "region", "village", "group")

_ORIGIN = {
    "model": "suggested by the model",
    "previous": "your earlier answer",
    "none": "nothing suggested",
}


def status_line(session: Session) -> Text:
    """Return the top line: labels now and in total, the model version, retraining."""
    s = session
    parts = [f"{s.labeled_this_session} labeled now", f"{s.total_labels} in total"]
    parts.append(f"model {s.model_version}" if s.model_version else "no model yet")
    if s.retraining:
        parts.append("retraining…")
    return Text(" · ".join(parts), style="dim")


def progress_text(session: Session, figures: Figures | None) -> Text | None:
    """Return estimated quality, model agreement and the stop sentence, or None for none."""
    s = session
    bits = []
    if figures:
        shown = " ".join(
            f"{k} {v:.2f}" if isinstance(v, float) else f"{k} {v}" for k, v in figures.items()
        )
        bits.append(f"estimated quality on the evaluation sample: {shown}")
    if s.kappas:
        last = " ".join(f"{k:.3f}" for k in s.kappas[-s.settings.kappa_rounds :])
        bits.append(f"model agreement κ {last}")
    if s.last_error:
        bits.append(f"retraining failed ({s.last_error}); the previous model stays")
    if not bits and not s.stop_signal:
        return None
    text = Text(" · ".join(bits), style="dim")
    if s.stop_signal:
        text.append(
            "\nFurther labels are changing little: this is a good moment to stop.",
            style="bold green",
        )
    return text


def context_grid(item: Item) -> Table:
    """Return the question, the sentence before, and who answered."""
    ctx = item.context
    grid = Table.grid(padding=(0, 1))
    grid.add_column(style="dim", no_wrap=True)
    grid.add_column()
    if ctx.question:
        grid.add_row("asked", Text(str(ctx.question), style="italic"))
    if ctx.previous:
        grid.add_row("before", Text(str(ctx.previous), style="dim"))
    meta = dict(ctx.metadata)
    ordered = [k for k in _METADATA_ORDER if k in meta] + sorted(
        k for k in meta if k not in _METADATA_ORDER
    )
    who = [str(ctx.respondent or "")] + [f"{k} {meta[k]}" for k in ordered]
    if ctx.is_group:
        who.append("group interview")
    if ctx.variety:
        who.append(f"variety {ctx.variety}")
    grid.add_row("who", Text(" · ".join(w for w in who if w)))
    if item.in_evaluation:
        grid.add_row("", Text("evaluation sample", style="cyan"))
    return grid


def sentence_text(item: Item, draft: Sequence[Span]) -> Text:
    """Return the sentence with the drafted spans underlined in their stance's colour."""
    text = Text(item.sentence.text, style="bold")
    for span in draft:
        text.stylize(f"underline {STANCE_STYLE.get(span.stance, 'magenta')}", span.start, span.end)
    # Numbers after each span, inserted from the end so offsets stay valid.
    for n, span in sorted(enumerate(draft, 1), key=lambda p: -p[1].end):
        text = text[: span.end] + Text(f"[{n}]", style="dim") + text[span.end :]
    return text


def concept_label(entries: Sequence[ConceptEntry], concept: str | None, lang: str) -> str:
    """Return a concept's ID and preferred label (in ``lang``, else English, else any)."""
    if concept is None:
        return "no concept"
    own = {e.lang: e.text for e in reversed(entries) if e.concept == concept and e.preferred}
    label = own.get(lang) or own.get("en") or next(iter(own.values()), "")
    return f"{concept} {label}".strip()


def confidence_text(mention: Mention, span: Span) -> str:
    """The model's probabilities for the span as now drafted (the annotator may have edited)."""
    parts = [f"span {mention.confidence:.2f}"]
    concept = span.concept
    if mention.concept_probs and concept is not None and concept in mention.concept_probs:
        parts.append(f"concept {mention.concept_probs[concept]:.2f}")
    stance = span.stance
    if mention.stance_probs and stance is not None and stance in mention.stance_probs:
        parts.append(f"stance {mention.stance_probs[stance]:.2f}")
    return " ".join(parts)


def _confidence(item: Item, span: Span) -> str:
    if item.origin != "model" or item.prediction is None:
        return ""
    for m in item.prediction.mentions:
        if (m.start, m.end) == (span.start, span.end):
            return confidence_text(m, span)
    return ""


def spans_grid(item: Item, draft: Sequence[Span], entries: Sequence[ConceptEntry]) -> Table:
    """Return one numbered row per drafted span: words, concept, stance, model confidence."""
    spans = Table.grid(padding=(0, 2))
    for _ in range(5):
        spans.add_column()
    for n, span in enumerate(draft, 1):
        spans.add_row(
            f"[{n}]",
            escape(item.sentence.text[span.start : span.end]),
            escape(concept_label(entries, span.concept, item.sentence.lang)),
            Text(span.stance or "no stance", style=STANCE_STYLE.get(span.stance, "")),
            _confidence(item, span),
        )
    return spans


def draw_item(
    console: Console,
    session: Session,
    item: Item,
    draft: Sequence[Span],
    *,
    entries: Sequence[ConceptEntry],
    figures: Figures | None,
    message: str,
) -> None:
    """Draw the sentence in its context, the draft answer, progress, a message and help."""
    c = console
    if c.is_terminal:
        c.clear()
    c.print(Rule(status_line(session), style="dim"))
    c.print(context_grid(item))
    c.print()
    c.print(sentence_text(item, draft))
    if draft:
        c.print(spans_grid(item, draft, entries))
    else:
        c.print(Text("no trait here", style="dim italic"))
    origin = "edited" if tuple(draft) != item.suggestion else _ORIGIN[item.origin]
    c.print(Text(f"({origin}; Enter saves what is shown)", style="dim"))
    progress = progress_text(session, figures)
    if progress is not None:
        c.print(progress)
    if message:
        c.print(Text(message, style="yellow"))
    if draft:
        c.print(Text(SPAN_HELP_LINE, style="dim"))
    c.print(Text(HELP_LINE, style="dim"))
