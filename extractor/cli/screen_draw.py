"""Drawing the labeling screen: the sentence in its context, the draft answer, progress, help.

Pure functions from what a :class:`~extractor.loop.session.Session` holds to rich
renderables; :mod:`extractor.cli.screen` reads the annotator's lines and calls them.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

from rich.console import Console
from rich.markup import escape
from rich.rule import Rule
from rich.table import Table
from rich.text import Text

from extractor.loop.items import Item
from extractor.loop.marking import ConceptEntry, kept
from extractor.loop.session import Session
from extractor.models.bundle import Mention
from extractor.types import Implicit, Span

STANCE_STYLE = {
    "liked": "green",
    "disliked": "red",
    "wanted": "blue",
    "neutral": "yellow",
    None: "magenta",
}

HELP_LINE = (
    "Enter keep · type words to mark · n no trait · s skip · u undo · q quit · ? help, figures"
)
SPAN_HELP_LINE = "x N drop · c N concept · t N stance · a N add words as alias"

HELP_TEXT = """\
[bold]Enter[/]        keep what is shown and go on (nothing shown = no trait here)
[bold]words[/]        mark those words of the sentence as a trait (or [bold]m words[/]);
             words overlapping a span replace it
[bold]x N[/]          drop span N (several: [bold]x 1 3[/]); the other spans keep their numbers
[bold]c N[/]          choose another concept for span N ([bold]c 2 yield[/] searches at once)
[bold]t N[/]          choose another stance for span N ([bold]t 1 d[/] sets it at once)
[bold]a N[/]          add the words of span N as a new alias of its concept
[bold]+ letters k[/]  add a trait stated without words to mark ([bold]+ tast l[/]: taste, liked)
[bold]- N[/]          drop trait N of those without quote span
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


def model_name(session: Session) -> str:
    """Return which model suggests: its saved version and the updates made in this session."""
    s = session
    if not s.model_version:
        return "no model yet"
    name = f"model {s.version}" if s.version else "model"
    if s.updates and s.version:
        times = "once" if s.updates == 1 else f"{s.updates} times"
        name += f", updated {times} with this session's labels"
    elif s.updates:
        name += " trained on this session's labels"
    return name


def status_line(session: Session) -> Text:
    """Return the top line: labels now and in total, the model version, retraining."""
    s = session
    parts = [f"{s.labeled_this_session} labeled now", f"{s.total_labels} in total"]
    parts.append(model_name(s))
    if s.retraining:
        parts.append("retraining…")
    return Text(" · ".join(parts), style="dim")


AGREEMENT_WORDS = (
    (0.80, "almost perfectly"),
    (0.60, "substantially"),
    (0.40, "moderately"),
    (0.20, "fairly"),
    (0.00, "slightly"),
)
"""Plain words for Cohen's kappa, from Landis & Koch (1977), "The measurement of observer
agreement for categorical data", Biometrics 33:159-174: above 0.80 almost perfect, 0.61-0.80
substantial, 0.41-0.60 moderate, 0.21-0.40 fair, 0-0.20 slight, below 0 poor."""


def agreement_words(kappa: float) -> str:
    """Return how well two models agree, in Landis & Koch's words for a kappa."""
    for floor, words in AGREEMENT_WORDS:
        if kappa > floor:
            return words
    return "poorly" if kappa < 0 else "slightly"


def _quality_words(figures: Figures) -> str:
    score = next((v for v in figures.values() if isinstance(v, float)), None)
    version = figures.get("of version")
    of = f" (model {version})" if version else ""
    if score is None:
        return f"quality was measured on the random check sample{of}"
    return f"quality on the random check sample: {round(100 * score)} out of 100{of}"


def progress_text(session: Session, figures: Figures | None) -> Text | None:
    """Return quality, model agreement and the stop sentence in plain words, or None.

    The figures themselves are one key away (``?``, see :func:`figures_text`).
    """
    s = session
    bits = []
    if s.behind and s.version:
        bits.append(
            f"suggestions come from model {s.version}, older than the last "
            + ("label" if s.behind == 1 else f"{s.behind} labels")
            + "; they count once the model updates (or run `traits train`)"
        )
    if figures:
        bits.append(_quality_words(figures))
    if s.kappas:
        agree = f"the last two models agree {agreement_words(s.kappas[-1])}"
        if s.kappas[-1] > AGREEMENT_WORDS[0][0] and not s.stop_signal:
            # Landis & Koch's words start at 0.80; the stop sign waits for steadier models.
            agree += ", but not yet steadily: keep labeling until the stop message"
        bits.append(agree)
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


def figures_text(
    session: Session, item: Item, draft: Sequence[Span | None], figures: Figures | None
) -> Text:
    """Return the technical figures behind the plain words: probabilities, quality, kappa."""
    s = session
    lines = []
    for n, span in enumerate(draft, 1):
        shown = _confidence(item, span) if span is not None else ""
        if shown:
            lines.append(f"span [{n}]: model probabilities {shown}")
    if figures:
        shown = " ".join(
            f"{k} {v:.2f}" if isinstance(v, float) else f"{k} {v}" for k, v in figures.items()
        )
        lines.append(f"quality on the evaluation sample: {shown}")
    if s.kappas:
        last = " ".join(f"{k:.3f}" for k in s.kappas[-s.settings.kappa_rounds :])
        lines.append(
            f"agreement of successive models on the stop set, Cohen's kappa: {last} "
            f"(stop at {s.settings.kappa_threshold} for {s.settings.kappa_rounds} rounds)"
        )
    return Text("\n".join(lines) or "No model figures for this sentence yet.", style="dim")


def context_grid(
    item: Item, metadata: Mapping[str, Any] | None = None, wording: str | None = None
) -> Table:
    """Return the question, the sentence before, and who answered.

    ``metadata`` is the respondent's as the workbook reads it (columns and spellings
    harmonised); without it the stored columns are shown. ``wording`` is the question's
    in the question codebook, shown before the question as stored (a field name).
    """
    ctx = item.context
    grid = Table.grid(padding=(0, 1))
    grid.add_column(style="dim", no_wrap=True)
    grid.add_column()
    if ctx.question:
        asked = f"{wording} ({ctx.question})" if wording else str(ctx.question)
        grid.add_row("asked", Text(asked, style="italic"))
    if ctx.previous:
        grid.add_row("before", Text(str(ctx.previous), style="dim"))
    meta = dict(ctx.metadata if metadata is None else metadata)
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


def _numbered(draft: Sequence[Span | None]) -> list[tuple[int, Span]]:
    """Return the draft's spans with their numbers on screen (dropped ones left out)."""
    return [(n, span) for n, span in enumerate(draft, 1) if span is not None]


def sentence_text(item: Item, draft: Sequence[Span | None]) -> Text:
    """Return the sentence with the drafted spans underlined in their stance's colour."""
    text = Text(item.sentence.text, style="bold")
    for _, span in _numbered(draft):
        text.stylize(f"underline {STANCE_STYLE.get(span.stance, 'magenta')}", span.start, span.end)
    # Numbers after each span, inserted from the end so offsets stay valid.
    for n, span in sorted(_numbered(draft), key=lambda p: -p[1].end):
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


SURE = ((0.8, "sure"), (0.5, "fairly sure"), (0.0, "unsure"))
"""Plain words for a model probability (common practice; the figures are behind ``?``)."""


def plain_confidence(mention: Mention, span: Span) -> str:
    """How sure the model is of the span as now drafted, in words: "model sure of the words"."""
    probs = {"words": mention.confidence}
    if mention.concept_probs and span.concept in mention.concept_probs:
        probs["concept"] = mention.concept_probs[span.concept]
    if mention.stance_probs and span.stance in mention.stance_probs:
        probs["stance"] = mention.stance_probs[span.stance]
    groups: dict[str, list[str]] = {}
    for part, p in probs.items():
        level = next(words for floor, words in SURE if p >= floor)
        groups.setdefault(level, []).append(part)
    said = [f"{level} of the {' and '.join(groups[level])}" for _, level in SURE if level in groups]
    return "model " + ", ".join(said)


def _mention(item: Item, span: Span) -> Mention | None:
    if item.origin != "model" or item.prediction is None:
        return None
    for m in item.prediction.mentions:
        if (m.start, m.end) == (span.start, span.end):
            return m
    return None


def _confidence(item: Item, span: Span) -> str:
    m = _mention(item, span)
    return "" if m is None else confidence_text(m, span)


def spans_grid(item: Item, draft: Sequence[Span | None], entries: Sequence[ConceptEntry]) -> Table:
    """Return one numbered row per drafted span: words, concept, stance, model confidence."""
    spans = Table.grid(padding=(0, 2))
    for _ in range(5):
        spans.add_column()
    for n, span in _numbered(draft):
        m = _mention(item, span)
        spans.add_row(
            f"[{n}]",
            escape(item.sentence.text[span.start : span.end]),
            escape(concept_label(entries, span.concept, item.sentence.lang)),
            Text(span.stance or "no stance", style=STANCE_STYLE.get(span.stance, "")),
            "" if m is None else plain_confidence(m, span),
        )
    return spans


def draw_item(
    console: Console,
    session: Session,
    item: Item,
    draft: Sequence[Span | None],
    *,
    entries: Sequence[ConceptEntry],
    figures: Figures | None,
    message: str,
    implicit: Sequence[Implicit] = (),
    metadata: Mapping[str, Any] | None = None,
    wording: str | None = None,
) -> None:
    """Draw the sentence in its context, the draft answer, progress, a message and help.

    The traits without a quote span (``implicit``) are listed under the spans; "no trait
    here" shows only when there is neither. ``metadata``: see :func:`context_grid`.
    """
    c = console
    if c.is_terminal:
        c.clear()
    c.print(Rule(status_line(session), style="dim"))
    c.print(context_grid(item, metadata, wording))
    c.print()
    c.print(sentence_text(item, draft))
    if kept(draft):
        c.print(spans_grid(item, draft, entries))
    if implicit:
        c.print(implicit_text(entries, implicit, item.sentence.lang))
    if not kept(draft) and not implicit:
        c.print(Text("no trait here", style="dim italic"))
    edited = kept(draft) != tuple(sorted(item.suggestion)) or set(implicit) != set(
        item.implicit_suggestion
    )
    origin = "edited" if edited else _ORIGIN[item.origin]
    c.print(Text(f"({origin}; Enter saves what is shown)", style="dim"))
    progress = progress_text(session, figures)
    if progress is not None:
        c.print(progress)
    if message:
        c.print(Text(message, style="yellow"))
    if kept(draft):
        c.print(Text(SPAN_HELP_LINE, style="dim"))
    c.print(Text(HELP_LINE, style="dim"))


def implicit_text(entries: Sequence[ConceptEntry], traits: Sequence[Implicit], lang: str) -> Text:
    """Return the line listing the traits without quote span, numbered for ``- N``."""
    line = Text("Without quote span: ", style="bold")
    line.append(
        " · ".join(
            f"[{n}] {concept_label(entries, t.concept, lang)} {t.stance or 'no stance'}"
            for n, t in enumerate(traits, 1)
        )
    )
    return line
