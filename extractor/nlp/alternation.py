"""Loading spaCy's language classes without compiling one huge character class hundreds of times.

spaCy's French tokenizer exceptions end in one regular expression, ``TOKEN_MATCH``: about
three hundred anchored alternatives ``(?:^HEAD[...]TAIL$)`` joined by ``|`` and compiled
case-insensitively at import time. Most alternatives repeat the same few character classes
of thousands of letters, and Python's regular-expression compiler folds the case of every
letter of every copy, which took 4.6 s of a fresh `traits run` (about 13 ms per copy).

:func:`language_class` loads a language class while :func:`factored` stands in for
``re.compile``: a pattern of that shape is rewritten so that the alternatives sharing
everything from their first large class to the end are merged,
``^(?:(?:HEAD1)|(?:HEAD2)|...)TAIL$``, and those starting with a large class and
differing only in the middle are merged as ``^BEGIN(?:(?:MID1)|(?:MID2)|...)END$``; the
result holds each class a few times instead of hundreds. Concatenation distributes over
alternation, so the rewritten pattern matches exactly the strings the original matches
(the tokenizer only asks whether a token matches); any pattern not of that exact shape is
compiled as given.
"""

from __future__ import annotations

import re
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any

import spacy.util
from spacy.language import Language

LARGE_CLASS = 200
"""A bracketed character class longer than this many characters counts as large."""
MIN_ALTERNATIVES = 20
"""Patterns with fewer top-level alternatives are compiled as given."""

_lock = threading.Lock()
rewritten: dict[str, str] = {}
"""Original pattern -> its rewritten form, for every pattern rewritten in this process."""


_ATOM = re.compile(r"\\.|\[\^?\]?(?:\\.|[^\]\\])*\]|[()|]|[^\\\[()|]+", re.S)
"""One piece of a pattern: an escape, a bracketed class, a parenthesis, a bar or other text."""


def _atoms(pattern: str) -> list[str] | None:
    """Return the pieces of ``pattern``, or None when they do not spell it (an open class)."""
    atoms = _ATOM.findall(pattern)
    return atoms if "".join(atoms) == pattern else None


def _balanced(atoms: list[str]) -> bool:
    """Whether the parentheses of ``atoms`` balance."""
    depth = 0
    for atom in atoms:
        depth += {"(": 1, ")": -1}.get(atom, 0)
        if depth < 0:
            return False
    return depth == 0


def _split_alternatives(body: str) -> list[str] | None:
    """Return the top-level alternatives of ``body``, or None when it does not parse."""
    atoms = _atoms(body)
    if atoms is None or not _balanced(atoms):
        return None
    parts: list[str] = []
    current: list[str] = []
    depth = 0
    for atom in atoms:
        depth += {"(": 1, ")": -1}.get(atom, 0)
        if atom == "|" and depth == 0:
            parts.append("".join(current))
            current = []
        else:
            current.append(atom)
    parts.append("".join(current))
    return parts


def _head_and_tail(alternative: str) -> tuple[str, str] | None:
    """Split ``(?:^HEAD TAIL$)`` before its first large class; None when not of that shape."""
    if not (alternative.startswith("(?:^") and alternative.endswith("$)")):
        return None
    atoms = _atoms(alternative[4:-1])  # HEAD TAIL$
    if atoms is None:
        return None
    for i, atom in enumerate(atoms):
        if atom.startswith("[") and len(atom) > LARGE_CLASS:
            head, tail = atoms[:i], atoms[i:]
            if _balanced(head) and _balanced(tail):
                return "".join(head), "".join(tail)
            return None
    return None


def factored(pattern: str) -> str | None:
    """Return ``pattern`` with alternatives of a shared tail merged, or None to keep it.

    Only a pattern ``(?FLAGS)(?:^...$)|(?:^...$)|...`` with at least
    :data:`MIN_ALTERNATIVES` alternatives and no backreference is rewritten.
    """
    flags = re.match(r"\(\?[aiLmsux]+\)", pattern)
    if flags is None or re.search(r"\\[1-9]|\(\?P=", pattern):
        return None
    body = pattern[flags.end() :]
    parts = _split_alternatives(body)
    if parts is None or len(parts) < MIN_ALTERNATIVES:
        return None
    groups: dict[str, list[str]] = {}
    kept: list[str] = []
    for part in parts:
        split = _head_and_tail(part)
        if split is None:
            kept.append(part)
            continue
        head, tail = split
        groups.setdefault(tail, []).append(head)
    merged = [
        "(?:^(?:" + "|".join(f"(?:{h})" for h in heads) + ")" + tail + ")"
        for tail, heads in groups.items()
        if heads != [""]
    ]
    # Alternatives that start with a large class: merge those that differ only between a
    # shared beginning and a shared end, ``^BEGIN(?:(?:MID1)|(?:MID2))END$``.
    starting: dict[str, list[list[str]]] = {}
    for tail, heads in groups.items():
        if heads == [""]:
            atoms = _atoms(tail) or []
            starting.setdefault(atoms[0], []).append(atoms)
    for members in starting.values():
        merged.extend(_merge_middles(members))
    return flags.group(0) + "|".join([*merged, *kept])


QUANTIFIERS = ("*", "+", "?", "{")


def _merge_middles(members: list[list[str]]) -> list[str]:
    """Return ``(?:^...$)`` alternatives for atom lists, merged on their shared ends if safe."""
    whole = ["(?:^" + "".join(atoms) + ")" for atoms in members]
    if len(members) < 2:
        return whole
    begin = 0
    while all(len(a) > begin and a[begin] == members[0][begin] for a in members):
        begin += 1
    end = 0
    while all(len(a) - end > begin and a[-1 - end] == members[0][-1 - end] for a in members):
        end += 1
    middles = [a[begin : len(a) - end] for a in members]
    safe = (
        begin > 0
        and end > 0
        and not members[0][len(members[0]) - end].startswith(QUANTIFIERS)
        and all(m and not m[0].startswith(QUANTIFIERS) and _balanced(m) for m in middles)
    )
    if not safe:
        return whole
    head, tail = "".join(members[0][:begin]), "".join(members[0][len(members[0]) - end :])
    return [
        "(?:^" + head + "(?:" + "|".join(f"(?:{''.join(m)})" for m in middles) + ")" + tail + ")"
    ]


def _compile_factored(original: Any) -> Any:
    def compile_(pattern: Any, flags: int = 0) -> Any:
        if isinstance(pattern, str) and flags == 0 and len(pattern) > 10_000:
            fast = factored(pattern)
            if fast is not None:
                rewritten[pattern] = fast
                return original(fast)
        return original(pattern, flags)

    return compile_


@contextmanager
def _factoring_compile() -> Iterator[None]:
    """Let ``re.compile`` rewrite large anchored alternations while the block runs."""
    with _lock:
        original = re.compile
        re.compile = _compile_factored(original)
        try:
            yield
        finally:
            re.compile = original


def language_class(code: str) -> type[Language]:
    """Return spaCy's language class for ``code`` (as ``spacy.util.get_lang_class``).

    Raises:
        ImportError: spaCy has no such language.
        KeyError: idem (spaCy raises either, by version).
    """
    with _factoring_compile():
        return spacy.util.get_lang_class(code)
