"""An invented trial shared by the command tests: answers in Portuguese, Swahili and English.

The varieties (Branquinha, Kibanda) and places are fictional; one sentence per answer.
"""

from __future__ import annotations

import io

from rich.console import Console

from extractor.cli.main import main

TRIAL = {
    "pt": (
        "A mandioca Branquinha cozinha rápido e tem bom sabor.",
        "Não gosto porque apodrece logo depois da colheita.",
        "Aguenta bem a seca e dá muita raiz.",
    ),
    "sw": (
        "Mavuno mengi kuliko Kibanda, na inakomaa mapema.",
        "Sipendi kwa sababu mizizi inaoza haraka.",
        "Nataka aina inayostahimili ukame.",
    ),
    "en": (
        "The roots stay firm in the ground for a long time.",
        "It gives a lot of flour and the flour is very white.",
        "I would like a variety that matures early.",
    ),
}


def run(*argv: str, width: int = 200) -> tuple[int, str]:
    """Run the command with a captured console of ``width`` columns; return (code, output)."""
    buffer = io.StringIO()
    code = main(list(argv), console=Console(file=buffer, width=width, force_terminal=False))
    return code, buffer.getvalue()


def trial_lines() -> list[str]:
    """Return the trial as CSV lines: a header, then one answer per respondent."""
    rows = [f"{lang}-{i},Why?,{t}" for lang, texts in TRIAL.items() for i, t in enumerate(texts)]
    return ["respondent,question,answer", *rows]
