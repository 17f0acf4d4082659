"""Tests of extractor.report.privacy: pseudonyms, text screening, frame pseudonymisation."""

from __future__ import annotations

import hashlib
import hmac

import pandas as pd
import pytest

from extractor.errors import InputError
from extractor.report.privacy import (
    PrivacyOptions,
    dropped_columns,
    identifying_by_values,
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


# --- identifying columns: merged lists, and recognised by their values ------------------

USER_LIST = ("name", "phone", "village", "address")  # a traits.toml list shorter than ours


def _respondents() -> pd.DataFrame:
    # Invented people; the phone numbers follow the national plans of the regions named.
    return pd.DataFrame(
        {
            "respondent": ["OMB-777", "OMB-778", "OMB-779"],
            "gender": ["woman", "man", "woman"],
            "email": ["zawadi@example.org", "", "tumaini@example.net"],
            "mobile": ["0712 345 678", "0723 456 789", ""],
            "gps": ["-1.29210, 36.82190", "-1.30001, 36.80002", "-1.31000, 36.79999"],
            "national_id": ["KX1234567", "KX7654321", "KX5555555"],
            "respondent_name": ["Zawadi Achieng", "Baraka Otieno", "Tumaini Wekesa"],
            "contact": ["+254 733 111 222", "zuri@example.com", "0711 222 333"],
            "where": ["-1.2921 36.8219", "-1.3000 36.8000", "-1.3100 36.7999"],
            "district": ["Lumoro", "Keth", "Lumoro"],
            "age": [34, 51, 29],
            "notes": ["sells at market", "", "grows two varieties"],
        }
    )


def test_pseudonymise_frames_merges_a_settings_list_with_the_built_in_one() -> None:
    options = PrivacyOptions(secret=SECRET, drop_columns=USER_LIST, phone_regions=("KE",))
    _, r = pseudonymise_frames(pd.DataFrame({"respondent": []}), _respondents(), options)
    assert list(r.columns) == ["respondent", "gender", "district", "age", "notes"]


def test_identifying_by_values_finds_phones_emails_and_coordinates() -> None:
    found = dict(identifying_by_values(_respondents(), ("KE",)))
    assert set(found) == {"email", "mobile", "gps", "contact", "where"}
    assert "phone" in found["mobile"] and "e-mail" in found["email"] and "coord" in found["gps"]


def test_dropped_columns_say_why() -> None:
    options = PrivacyOptions(secret=SECRET, drop_columns=USER_LIST, phone_regions=("KE",))
    dropped = dict(dropped_columns(_respondents(), options))
    assert set(dropped) == {
        "email",
        "mobile",
        "gps",
        "national_id",
        "respondent_name",
        "contact",
        "where",
    }


# --- screening: phone numbers by region, the workspace's own respondent IDs ------------


@pytest.mark.parametrize(
    ("text", "region", "expected"),
    [
        ("call me on 98765 43210 please", "IN", "call me on [phone] please"),
        ("my number is 712 345 678.", "KE", "my number is [phone]."),
        ("we sold 2000 bags in 2023 for 150000", "KE", None),
        ("it took 3 to 4 weeks, 1998-2003", "KE", None),
    ],
    ids=["india-mobile", "kenya-mobile-no-prefix", "amounts", "ranges"],
)
def test_screen_text_finds_national_phone_formats_of_named_regions(
    text: str, region: str, expected: str | None
) -> None:
    # Valid numbers by the national numbering plans phonenumbers ships (libphonenumber);
    # amounts and year ranges are no phone numbers (six-digit amounts are hidden as
    # ID-like numbers, a separate older rule).
    screened = screen_text(text, regions=(region,))
    if expected is None:
        assert "[phone]" not in screened
    else:
        assert screened == expected


def test_pseudonymise_frames_screens_the_workspaces_respondent_ids_and_names() -> None:
    mentions = pd.DataFrame(
        {
            "respondent": ["OMB-778"],
            "sentence": ["Respondent OMB-777 told me Zawadi Achieng grows it"],
            "question": ["Did omb-779 or Baraka Otieno plant it?"],
        }
    )
    m, _ = pseudonymise_frames(
        mentions, _respondents(), PrivacyOptions(secret=SECRET, phone_regions=("KE",))
    )
    assert m.loc[0, "sentence"] == "Respondent [respondent] told me [name] grows it"
    assert m.loc[0, "question"] == "Did [respondent] or [name] plant it?"
