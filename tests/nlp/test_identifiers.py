"""Tests of extractor.nlp.identifiers: phone numbers found with no phone region known.

Recall is measured on the example numbers Google's libphonenumber ships (the
``phonenumbers`` package, ``example_number_for_type``), written the way its national
format writes them; false masks on every number-holding sentence of the open maize
verbatims, of the MAMS restaurant reviews and of the demo's answers.
"""

from __future__ import annotations

import re
from pathlib import Path

import phonenumbers
import pytest
from phonenumbers import PhoneNumberFormat, PhoneNumberType

from extractor.ingest.reader import read_interviews
from extractor.nlp.identifiers import (
    MAX_PHONE_DIGITS,
    find_identifiers,
    grouped_phones,
    phone_formats,
)
from extractor.nlp.text import split_sentences
from extractor.report.privacy import screen_text
from tests.maize import SKIP_REASON as MAIZE_SKIP
from tests.maize import load_answers
from tests.mams import SKIP_REASON as MAMS_SKIP
from tests.mams import load_mams

DEMO = Path(__file__).resolve().parents[2] / "sample_interviews" / "interviews"

# Regions where crop-preference studies are commonly run (common practice), spread over
# Africa, Asia, Latin America and Europe: 43 regions, a mobile and a fixed-line number each.
REGIONS = (
    "KE UG TZ RW BI ET NG GH SN CI ML BF NE CM CD MZ MW ZM ZW ZA MG BJ TG SD "
    "IN BD NP PK VN PH ID BR CO PE BO GT HN NI MX EC PT FR ES"
).split()


def _phones(text: str) -> list[str]:
    return [text[a:b] for a, b, tag in find_identifiers(text) if tag == "[phone]"]


def _example_numbers() -> list[tuple[str, str]]:
    out = []
    for region in REGIONS:
        for kind in (PhoneNumberType.MOBILE, PhoneNumberType.FIXED_LINE):
            number = phonenumbers.example_number_for_type(region, kind)
            if number is not None:
                out.append((region, phonenumbers.format_number(number, PhoneNumberFormat.NATIONAL)))
    return out


def test_example_numbers_of_many_regions_are_found_with_no_region_known() -> None:
    # Outside reference: libphonenumber's example mobile and fixed-line numbers of 43
    # regions, nationally formatted ("84 123 4567", "(11) 96123-4567", "0712 123456").
    # Measured with phonenumbers 9.0.43: 84 of 86 found whole as [phone] with no region given
    # (48 of 86 before digit groups were screened). The two left: CI "21 23 4 56789"
    # (a one-digit group) and BO "71234567" (one unbroken run, hidden as [id-number]).
    cases = _example_numbers()
    found = [nat for _, nat in cases if _phones(f"ligue {nat} hoje") == [nat]]
    assert len(cases) == 86
    assert len(found) >= 84, sorted(set(nat for _, nat in cases) - set(found))


def test_the_reported_portuguese_answer_is_screened_with_no_region() -> None:
    # The new-user check: a workspace of ["en", "pt"] with no phone_regions; 84 is a
    # Mozambican mobile prefix (libphonenumber's MZ example is "84 123 4567").
    text = "A Maria diz que a Ambrel coze rápido, ligue 84 123 4567."
    assert screen_text(text, ["Maria"]) == "A [name] diz que a Ambrel coze rápido, ligue [phone]."


@pytest.mark.parametrize(
    "text",
    [
        "Le sac coûte 1 200 francs, 800 francs le kilo.",
        "J'ai vendu 120 sacs de 50 kg en 2019.",
        "On a récolté 1 200 000 francs cette année.",
        "Le champ a rapporté 12 500 000 francs.",
        "Plantei em 12/03/2024 e colhi em 75 dias.",
        "A colheita foi a 12.03.2024, 3.500.000 meticais.",
        "Tulivuna 2019 2020 na 2021.",
        "We sold at 1000-1500 shillings, 2003/2004 was dry.",
        "Now it is 2500-3750 shillings a tin.",
        "It yields 3.5 t/ha, 1.2 t/ha on poor soil.",
        "From 10 to 15 bags per acre, 2-3 weeks.",
    ],
    ids=[
        "fr-prices",
        "fr-quantity-year",
        "fr-thousands-7-digits",
        "fr-round-8-digits",
        "pt-date-days",
        "pt-dotted-date-amount",
        "sw-years",
        "en-price-range-years",
        "en-price-range",
        "en-decimals",
        "en-ranges",
    ],
)
def test_ordinary_numbers_are_not_phones(text: str) -> None:
    # Forms of prices, quantities, dates and years as farmers' answers write them
    # (common practice: French and Portuguese group thousands by spaces or dots).
    assert _phones(text) == []
    assert "[id-number]" not in screen_text(text)


def test_more_digits_than_e164_allows_are_not_a_phone() -> None:
    # ITU-T E.164: an international number holds at most 15 digits.
    assert grouped_phones("12 3456 7890 12345") == [(0, 18)]
    sixteen = "1234 5678 9012 3456"
    assert sum(ch.isdigit() for ch in sixteen) == MAX_PHONE_DIGITS + 1
    assert grouped_phones(sixteen) == []


def _number_sentences(texts: list[tuple[str, str]]) -> list[str]:
    out = []
    for text, lang in texts:
        out += [text[a:b] for a, b in split_sentences(text, lang) if re.search(r"\d", text[a:b])]
    return out


def test_no_phone_in_the_maize_verbatims() -> None:
    # Open data: 4,800 real farmer answers (Kenya, Uganda). Measured: 108 sentences hold
    # a digit, none gets a [phone] (the dataset's phone numbers were left out at source).
    answers = load_answers()
    if answers is None:
        pytest.skip(MAIZE_SKIP)
    sentences = _number_sentences([(a["answer"], "en") for a in answers])
    assert len(sentences) == 108
    assert [s for s in sentences if _phones(s)] == []


def test_no_phone_in_the_mams_reviews() -> None:
    # Open data: MAMS restaurant reviews, with prices, times and years. Measured: 878
    # distinct sentences of its three splits hold a digit, none gets a [phone].
    splits = [load_mams(split) for split in ("train", "val", "test")]
    if any(s is None for s in splits):
        pytest.skip(MAMS_SKIP)
    texts = {row["sentence"] for split in splits for row in split or []}
    numbered = [t for t in texts if re.search(r"\d", t)]
    assert len(numbered) == 878
    assert [t for t in numbered if _phones(t)] == []


def test_no_phone_in_the_demo_answers() -> None:
    # The invented demo study (a smoke test only): 13 sentences hold a digit, none a phone.
    rows = [row for path in sorted(DEMO.iterdir()) for row in read_interviews(path).rows]
    sentences = _number_sentences([(row.answer, row.lang) for row in rows])
    assert len(sentences) == 13
    assert [s for s in sentences if _phones(s)] == []


def test_phone_formats_name_the_regions_or_say_none_is_known() -> None:
    assert "national numbering plans of KE, TZ" in phone_formats(("tz", "KE"))
    assert "no national numbering plan" in phone_formats(())
