from __future__ import annotations

import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.report.about import RunFacts
from extractor.report.caution import REVIEW_CAUTION
from extractor.report.html_report import readable_shares, write_report
from extractor.report.privacy import PrivacyOptions, pseudonym
from extractor.report.varieties import variety_table
from tests.report.reference import share
from tests.report.study import CONCEPTS, SECRET, Study, study_frames

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
CHROMIUM_FLAGS = (
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--enable-logging=stderr",
    "--log-level=0",
)


class _Links(HTMLParser):
    """Collects every tag, and every attribute that could load or link something."""

    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.refs: list[tuple[str, str, str]] = []
        self.ids: set[str] = set()

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append(tag)
        for name, value in attrs:
            if name == "id" and value:
                self.ids.add(value)
            if name in ("src", "href", "srcset", "action", "data") and value is not None:
                self.refs.append((tag, name, value))


def _write(study: Study, path: Path, private: bool = True) -> str:
    write_report(
        path,
        *study,
        CONCEPTS,
        RunFacts(
            model_version="m-3", quality_cross_validated={"span_f1": {"mean": 0.6, "sd": 0.1}}
        ),
        group_by=["gender"],
        pseudonymise=PrivacyOptions(secret=SECRET) if private else None,
    )
    return path.read_text(encoding="utf-8")


@pytest.fixture(scope="module")
def private_report(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The study's report, pseudonymised, written once for the module."""
    path = tmp_path_factory.mktemp("report") / "report.html"
    _write(study_frames(), path)
    return path


def test_report_is_one_self_contained_file(private_report: Path) -> None:
    text = private_report.read_text(encoding="utf-8")
    parser = _Links()
    parser.feed(text)
    assert "script" not in parser.tags and "link" not in parser.tags
    for tag, name, value in parser.refs:
        if name == "href":
            assert value.startswith("#") and value[1:] in parser.ids, (tag, value)
        else:
            assert value.startswith("data:image/png;base64,"), (tag, value[:40])
    assert "url(" not in text and "@import" not in text and "@font-face" not in text
    assert sum(1 for tag, _, _ in parser.refs if tag == "img") == 6  # 3 outcomes x 2 charts
    assert REVIEW_CAUTION in text
    assert "0.60 ± 0.10" in text  # the quality figure, rounded


def test_report_is_pseudonymised_by_the_options(
    study: Study, private_report: Path, tmp_path: Path
) -> None:
    private = private_report.read_text(encoding="utf-8")
    assert pseudonym("W1", SECRET) in private and ">W1<" not in private and "(W1," not in private
    identified = _write(study, tmp_path / "identified.html", private=False)
    assert "(W1," in identified


def test_report_escapes_interview_text(study: Study, tmp_path: Path) -> None:
    mentions, respondents = study
    mentions = mentions.copy()
    mentions.loc[0, "sentence"] = "<script>alert(1)</script> cooks fast"
    mentions.loc[0, ["start", "end"]] = [29, 39]
    text = _write((mentions, respondents), tmp_path / "r.html", private=False)
    assert "<script>" not in text and "&lt;script&gt;" in text


def test_report_path_must_be_html(study: Study, tmp_path: Path) -> None:
    with pytest.raises(InputError, match="must end in .html"):
        write_report(tmp_path / "r.pdf", *study, CONCEPTS, RunFacts())


def _chromium(page: Path, tmp_path: Path, shot: Path) -> tuple[int, list[str]]:
    """Open ``page`` offline in headless Chromium; return its exit code and console lines."""
    assert CHROMIUM is not None
    done = subprocess.run(
        [
            CHROMIUM,
            *CHROMIUM_FLAGS,
            f"--user-data-dir={tmp_path / 'profile'}",
            "--window-size=1280,1600",
            f"--screenshot={shot}",
            page.as_uri(),
        ],
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )
    return done.returncode, [line for line in done.stderr.splitlines() if ":CONSOLE" in line]


@pytest.mark.skipif(CHROMIUM is None, reason="Chromium is not installed (apt-get install chromium)")
def test_report_renders_offline_in_headless_chromium(private_report: Path, tmp_path: Path) -> None:
    page = private_report
    shot = tmp_path / "shot.png"
    code, console = _chromium(page, tmp_path, shot)
    assert code == 0 and console == []
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature, RFC 2083
    assert shot.stat().st_size > 20_000  # a drawn page, not a blank one
    # the console check can fail: a page that tries to load from outside is caught
    bad = tmp_path / "bad.html"
    head = page.read_text(encoding="utf-8").split("<body>")[0]
    bad.write_text(head + '<body><img src="https://example.invalid/x.png"></body></html>')
    _, console = _chromium(bad, tmp_path, tmp_path / "bad.png")
    assert any("example.invalid" in line for line in console)


def test_report_variety_shares_read_as_percent_with_wilson_interval(study: Study) -> None:
    mentions, respondents = study
    table = variety_table(mentions, respondents, CONCEPTS)
    shown = readable_shares(table)
    assert len(shown) == len(table) > 0
    for text, k, n in zip(
        shown["Share (95% CI)"], table["Respondents"], table["Respondents of variety"], strict=True
    ):
        p, low, high = share(int(k), int(n))  # statsmodels' Wilson interval
        assert text == f"{p:.0%} ({low:.0%}–{high:.0%})"
