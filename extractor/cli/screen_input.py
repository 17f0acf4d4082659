"""Reading the annotator's lines for the labeling screen: from a terminal or a pipe, UTF-8 only.

A line too long for a command (a paste by mistake) is refused by the screen with
:func:`too_long`; a line that is not UTF-8 text ends the session with one clear
sentence (:func:`read_utf8`); lines read from a pipe are echoed back, clipped.
"""

from __future__ import annotations

import sys
from collections.abc import Callable
from typing import TextIO

from rich.console import Console
from rich.markup import escape
from rich.text import Text

from extractor.errors import InputError

MAX_LINE = 500
"""Longest line the screen takes; a longer one (a paste by mistake) is refused."""
ECHO_CHARS = 120
"""Characters of a piped line echoed back; rich's highlighter is quadratic in length."""


def clip(text: str, limit: int = ECHO_CHARS) -> str:
    """Return ``text`` cut to ``limit`` characters, with an ellipsis when cut."""
    return text if len(text) <= limit else text[: limit - 1] + "…"


def too_long(line: str) -> str:
    """Return the message for a line over :data:`MAX_LINE` characters."""
    return (
        f"That line has {len(line):,} characters; a command or the words to mark take at "
        f"most {MAX_LINE}. Nothing was changed."
    )


def not_utf8(where: str) -> InputError:
    """Return the error for input that is not UTF-8 text, ``where`` naming the line."""
    return InputError(
        f"{where} is not UTF-8 text; nothing from it was stored (labels confirmed before it "
        "are saved); send UTF-8 text and start again."
    )


def read_utf8(read: Callable[[], str], number: int, console: Console | None = None) -> str:
    """Return the line ``read`` gives (line ``number`` of the input), refusing one not in UTF-8.

    Under the C locale Python reads bytes that are not UTF-8 as lone surrogates
    (``surrogateescape``), which can be neither stored nor shown; a stream decoding
    strictly raises instead, at the read of the chunk that holds them. On refusal the
    prompt's line on ``console`` is ended, so the error starts a line of its own.
    """
    try:
        line = read()
        line.encode("utf-8")
        return line
    except UnicodeError as exc:
        if console is not None:
            console.print()
        decoding = isinstance(exc, UnicodeDecodeError)
        where = (
            f"The input (at or after line {number})" if decoding else f"Line {number} of the input"
        )
        raise not_utf8(where) from exc


def line_reader(console: Console, stream: TextIO | None) -> Callable[[str], str | None]:
    """Return a function that shows a prompt and reads one line (None at end of input)."""
    if stream is None and console.is_terminal and sys.stdin.isatty():

        def read_terminal(prompt: str) -> str | None:
            while True:
                try:
                    return read_utf8(lambda: console.input(Text(prompt)), 0)
                except EOFError:
                    return None
                except InputError:
                    console.print(Text("That line is not UTF-8 text; type it again."))

        return read_terminal
    source = stream if stream is not None else sys.stdin
    count = iter(range(1, sys.maxsize))

    def read_stream(prompt: str) -> str | None:
        console.print(Text(prompt), end="")
        line = read_utf8(source.readline, next(count), console)
        if line == "":
            return None
        if not console.is_terminal:
            console.print(escape(clip(line.rstrip("\n"))), highlight=False)
        return line.rstrip("\r\n")

    return read_stream
