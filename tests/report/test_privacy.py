"""Tests of extractor.report.privacy: pseudonyms, text screening, frame pseudonymisation."""

from __future__ import annotations

import hashlib
import hmac

import pandas as pd
import pytest

from extractor.errors import InputError
from extractor.report.privacy import (
    PrivacyOptions,
    new_secret,
    pseudonym,
    pseudonym_map,
    pseudonymise_frames,
    screen_mentions,
    screen_text,
)

SECRET = b"fictional-test-secret-0123456789"


def test_pseudonym_rfc4231_test_case_1() -> None:
    # RFC 4231 section 4.2, test case 1: key = 0x0b * 20, data = "Hi There",
    # HMAC-SHA-256 = b0344c61d8db38535ca8afceaf0bf12b881dc200c9833da726e9376c2e32cff7
    # (value from memory; Python's hmac module agrees).
    assert pseudonym("Hi There", b"\x0b" * 20, length=64) == (
        "R-b0344c61d8db38535ca8afceaf0bf12b881dc200c9833da726e9376c2e32cff7"
    )
    assert pseudonym("Hi There", b"\x0b" * 20) == "R-b0344c61"


def test_pseudonym_agrees_with_stdlib_hmac() -> None:
    # RFC 2104 construction as implemented by Python's hmac module is the reference.
    ref = hmac.new(SECRET, b"KOR-017", hashlib.sha256).hexdigest()[:8]
    assert pseudonym("KOR-017", SECRET) == "R-" + ref


def test_pseudonym_stable_for_same_secret() -> None:
    assert pseudonym("KOR-017", SECRET) == pseudonym("KOR-017", SECRET)
    assert pseudonym("KOR-017", SECRET) == pseudonym(" KOR-017 ", SECRET)


def test_pseudonym_differs_with_other_secret_or_id() -> None:
    other = b"another-fictional-secret-abcdefg"
    assert pseudonym("KOR-017", SECRET) != pseudonym("KOR-017", other)
    assert pseudonym("KOR-017", SECRET) != pseudonym("KOR-018", SECRET)


def test_pseudonym_looks_like_short_token() -> None:
    token = pseudonym("KOR-017", SECRET)
    assert token.startswith("R-") and len(token) == 10
    int(token[2:], 16)  # hex digits, raises if not


def test_pseudonym_rejects_short_secret() -> None:
    with pytest.raises(InputError, match="at least 16 bytes"):
        pseudonym("KOR-017", b"short")


def test_new_secret_is_random_and_long_enough() -> None:
    a, b = new_secret(), new_secret()
    assert len(a) == 32 and a != b


def test_pseudonym_map_is_one_to_one() -> None:
    ids = [f"VLG-{i:04d}" for i in range(2000)]
    mapping = pseudonym_map(ids, SECRET)
    assert len(set(mapping.values())) == len(ids)


SCREEN_CASES = [
    ("Call me on +254 712 345 678 please", "Call me on [phone] please"),
    ("my number is 0712-345-678.", "my number is [phone]."),
    ("ring +44 (0)20 7946 0958 now", "ring [phone] now"),
    ("write to wanjiru.k@example.org today", "write to [email] today"),
    ("my ID is 12345678", "my ID is [id-number]"),
    ("passport A1234567 expired", "passport [id-number] expired"),
    ("card 12-345678-9", "card [id-number]"),
    ("we harvest 2-3 bags, 5000 shillings, on 12/05/2023", None),
    ("yield 1.5 t/ha and 1200 kg", None),
]


@pytest.mark.parametrize(
    ("text", "expected"),
    SCREEN_CASES,
    ids=[
        "intl-phone",
        "local-phone",
        "phone-with-brackets",
        "email",
        "eight-digit-id",
        "letter-digit-id",
        "grouped-id",
        "small-numbers-and-date-kept",
        "measures-kept",
    ],
)
def test_screen_text_patterns(text: str, expected: str | None) -> None:
    # Expected forms follow the brief's examples (E.164-style +CC groups, local 0-prefixed).
    assert screen_text(text) == (text if expected is None else expected)


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("Jose likes Nyota beans", "[name] likes Nyota beans"),
        ("JOSÉ said so", "[name] said so"),
        ("josé and Ana  Maria came", "[name] and [name] came"),
        ("Josephine came", "Josephine came"),
        ("Ana came; Anabel stayed", "[name] came; Anabel stayed"),
    ],
    ids=["plain", "upper-accented", "multi-word-extra-space", "not-inside-word", "whole-word"],
)
def test_screen_text_names(text: str, expected: str) -> None:
    assert screen_text(text, ["José", "Ana Maria", "ana"]) == expected


def test_screen_text_is_pure() -> None:
    text = "Amani 0712-345-678"
    screen_text(text, ["Amani"])
    assert text == "Amani 0712-345-678"


def test_screen_mentions_moves_offsets_after_redaction() -> None:
    sentence = "Call 0712-345-678, I like the fast cooking of Nyota."
    start = sentence.index("fast cooking")
    mentions = pd.DataFrame(
        {
            "sentence": [sentence],
            "start": [start],
            "end": [start + len("fast cooking")],
            "span_text": ["fast cooking"],
            "question": ["Who is Amani?"],
        }
    )
    out = screen_mentions(mentions, ["Amani"])
    new = out.loc[0, "sentence"]
    assert new == "Call [phone], I like the fast cooking of Nyota."
    assert new[out.loc[0, "start"] : out.loc[0, "end"]] == "fast cooking"
    assert out.loc[0, "span_text"] == "fast cooking"
    assert out.loc[0, "question"] == "Who is [name]?"
    assert mentions.loc[0, "sentence"] == sentence  # input untouched


def test_pseudonymise_frames_drops_identifying_columns() -> None:
    mentions = pd.DataFrame(
        {
            "respondent": ["KOR-017"],
            "sentence": ["Amani likes it"],
            "start": [6],
            "end": [11],
            "span_text": ["likes"],
        }
    )
    respondents = pd.DataFrame(
        {
            "respondent": ["KOR-017"],
            "Name": ["Amani Wekesa"],
            "Village": ["Lumoro"],
            "gender": ["woman"],
        }
    )
    m, r = pseudonymise_frames(
        mentions, respondents, PrivacyOptions(secret=SECRET, names=("Amani Wekesa", "Amani"))
    )
    assert list(r.columns) == ["respondent", "gender"]
    assert r.loc[0, "respondent"] == m.loc[0, "respondent"] == pseudonym("KOR-017", SECRET)
    assert m.loc[0, "sentence"] == "[name] likes it"
    assert m.loc[0, "span_text"] == "likes"
