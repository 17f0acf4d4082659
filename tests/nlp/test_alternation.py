"""The rewritten French token pattern matches exactly what spaCy's own pattern matches."""

from __future__ import annotations

import importlib
import json
import random
import re
from functools import cache
from pathlib import Path
from typing import Any

import pytest
import spacy

from extractor.nlp import alternation
from extractor.nlp.alternation import factored, language_class
from extractor.nlp.text import tokenize

# Test only: the standard library's own pattern parser, to draw strings a pattern matches.
sre_parse: Any = importlib.import_module("re._parser")
sre_c: Any = importlib.import_module("re._constants")
SAMPLE = Path(__file__).resolve().parents[2] / "sample_interviews"
LARGE = "[" + "".join(chr(c) for c in range(0x100, 0x100 + alternation.LARGE_CLASS)) + "a-z]"


def _draw(parsed: Any, rng: random.Random) -> str:
    """Return one string that the parsed pattern matches (no negated classes or lookarounds)."""
    out = []
    for op, av in parsed:
        if op is sre_c.LITERAL:
            out.append(chr(av))
        elif op is sre_c.IN:
            kind, value = rng.choice(av)
            if kind is sre_c.LITERAL:
                out.append(chr(value))
            elif kind is sre_c.RANGE:
                out.append(chr(rng.randint(*value)))
            else:
                raise ValueError(f"cannot draw from {kind}")
        elif op in (sre_c.MAX_REPEAT, sre_c.MIN_REPEAT):
            low, high, sub = av
            times = rng.randint(low, min(high, low + 3))
            out.extend(_draw(sub, rng) for _ in range(times))
        elif op is sre_c.SUBPATTERN:
            out.append(_draw(av[-1], rng))
        elif op is sre_c.BRANCH:
            out.append(_draw(rng.choice(av[1]), rng))
        elif op is sre_c.AT:
            continue
        else:
            raise ValueError(f"cannot draw from {op}")
    return "".join(out)


@cache
def _french_patterns() -> tuple[re.Pattern[str], re.Pattern[str]]:
    """Return spaCy's French token pattern as spaCy writes it, and as loaded here."""
    language_class("fr")
    import spacy.lang.fr.tokenizer_exceptions as fr_exceptions

    loaded: re.Pattern[str] = getattr(fr_exceptions.TOKEN_MATCH, "__self__")  # noqa: B009
    originals = [k for k, v in alternation.rewritten.items() if v == loaded.pattern]
    assert len(originals) == 1, "the French pattern was loaded in its rewritten form"
    return re.compile(originals[0]), loaded


def _french_sentences() -> list[str]:
    rows = [json.loads(line) for line in (SAMPLE / "gold.jsonl").open(encoding="utf-8")]
    return [r["sentence"] for r in rows if r["lang"] == "fr"]


def test_french_pattern_is_loaded_rewritten_and_much_smaller() -> None:
    original, loaded = _french_patterns()
    assert loaded.pattern != original.pattern
    assert len(loaded.pattern) < len(original.pattern) / 10
    assert loaded.flags == original.flags


def test_rewritten_french_pattern_matches_exactly_what_spacy_pattern_matches() -> None:
    # Outside reference: spaCy's French TOKEN_MATCH, compiled as spaCy writes it.
    original, loaded = _french_patterns()
    rng = random.Random(7)
    words = {w for s in _french_sentences() for w in s.split()}
    alternatives = alternation._split_alternatives(original.pattern[5:])
    assert alternatives is not None and len(alternatives) > 200
    for alternative in alternatives:
        parsed = sre_parse.parse(alternative)
        for _ in range(4):
            word = _draw(parsed, rng)
            words |= {word, word.upper(), word.title(), word[:-1], word + "-", "x" + word}
            words |= {word.replace("-", " "), word.replace("'", ""), word.replace("-", "'")}
    matched = 0
    for word in sorted(words):
        expected = original.match(word) is not None
        assert (loaded.match(word) is not None) == expected, word
        matched += expected
    assert matched > 1000, "the drawn words hit every alternative, so many match"
    assert len(words) - matched > 1000, "and their near misses do not"


def test_french_tokens_of_the_demo_are_spacy_tokens() -> None:
    # Outside reference: spaCy's French tokenizer with its own TOKEN_MATCH.
    original, _ = _french_patterns()
    reference = spacy.blank("fr")
    tokenizer: Any = reference.tokenizer
    tokenizer.token_match = original.match
    for sentence in _french_sentences():
        doc = tokenizer(sentence)
        assert tokenize(sentence, "fr") == [
            (t.idx, t.idx + len(t.text)) for t in doc if not t.is_space
        ]


def test_factored_merges_alternatives_with_a_shared_tail() -> None:
    alternatives = [f"^w{i}[-]{LARGE}+$" for i in range(30)] + ["^zz$"]
    pattern = "(?iu)" + "|".join(f"(?:{a})" for a in alternatives)
    fast = factored(pattern)
    assert fast is not None and fast.count(LARGE) == 1
    for word in ["w3-ab", "W29-Ā", "w3-", "w30-ab", "zz", "ZZ", "zzz", "w1ab"]:
        assert (re.match(fast, word) is None) == (re.match(pattern, word) is None), word


def test_factored_merges_alternatives_between_a_shared_beginning_and_end() -> None:
    words = ["la", "l[èe]s?", "en", "d[eu]", "sur"]
    alternatives = [f"^{LARGE}+[-]{w}[-]{LARGE}+$" for w in words] + [
        f"^w{i}{LARGE}$" for i in range(20)
    ]
    pattern = "(?iu)" + "|".join(f"(?:{a})" for a in alternatives)
    fast = factored(pattern)
    assert fast is not None and fast.count(LARGE) == 3
    for word in [
        "a-la-b",
        "Ab-lès-cd",
        "a-le-b",
        "a-lé-b",
        "a-du-b",
        "a-sur-",
        "-en-b",
        "aenb",
        "w3a",
    ]:
        assert (re.match(fast, word) is None) == (re.match(pattern, word) is None), word


def test_factored_does_not_split_a_quantifier_from_its_atom() -> None:
    # The middles would start with a quantifier of the shared beginning's last atom.
    alternatives = [f"^{LARGE}{q}[-]x$" for q in ("+", "*", "?", "{2}")] + [
        f"^w{i}{LARGE}$" for i in range(20)
    ]
    pattern = "(?u)" + "|".join(f"(?:{a})" for a in alternatives)
    fast = factored(pattern)
    assert fast is not None and fast.count(LARGE) == 5
    for word in ["-x", "a-x", "aa-x", "aaa-x", "w1a"]:
        assert (re.match(fast, word) is None) == (re.match(pattern, word) is None), word


@pytest.mark.parametrize(
    "pattern",
    [
        "(?iu)(?:^a$)|(?:^b$)",  # too few alternatives
        "(?:^a$)" + "|(?:^b$)" * 30,  # no inline flags
        "(?i)" + "|".join(f"(?:^(x)w{i}\\1{LARGE}$)" for i in range(30)),  # a backreference
    ],
)
def test_factored_leaves_other_patterns_alone(pattern: str) -> None:
    assert factored(pattern) is None
