"""`traits run`, `traits report` and the indicator export on 2,400 real respondents (slow).

Run: ``python tests/bench/bench_report_maize.py [--keep DIR]``.

Reads ``../shared/datasets/maize-concept-testing/answers_long.csv`` in place (4,800
answers of 2,400 farmers in Kenya and Uganda; see its README) into a temporary
workspace with a small concept list invented here (fictional IDs ``MZX:...``), runs the
whole job without labels, writes the HTML report and the indicator files, and checks
what a reader needs: every chart of the report drawn without overlapping labels
(measured with matplotlib's renderer), the .dta and .sav read back with their labels,
one row per respondent. Prints the time of each step and where the files are, so the
charts and the report can be looked at. Exits non-zero when a check fails or the
dataset is absent.
"""

from __future__ import annotations

import argparse
import io
import shutil
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path[:0] = [str(ROOT)]

import pandas as pd  # noqa: E402
import pyreadstat  # noqa: E402
from rich.console import Console  # noqa: E402

from extractor.cli.main import main  # noqa: E402
from extractor.report.group_charts import all_charts, chart_figure  # noqa: E402
from extractor.report.inputs import prepare  # noqa: E402
from extractor.report.results import (  # noqa: E402
    concept_frame,
    mention_frame,
    respondent_frame,
)
from extractor.report.summary import trait_summary  # noqa: E402
from extractor.workspace import store  # noqa: E402
from extractor.workspace.folder import Workspace  # noqa: E402
from tests.report.reference import assert_no_overlap  # noqa: E402

DATA = ROOT.parent / "shared" / "datasets" / "maize-concept-testing" / "answers_long.csv"
# Invented for this check: fictional IDs; the synonyms are everyday English words.
CONCEPTS = """id,label,lang,synonyms
MZX:0001,yield,en,high yield|high yields|yields|yield|harvest|productive|produces a lot
MZX:0002,drought tolerance,en,drought|drought tolerant|little rain|dry spell|withstands drought
MZX:0003,early maturity,en,early maturing|matures early|matures fast|early|short season
MZX:0004,disease resistance,en,disease|diseases|resistant to disease|disease resistant
MZX:0005,pest resistance,en,pests|pest|armyworm|stalk borer|weevils
MZX:0006,cob size,en,big cobs|large cobs|cob size|cobs
MZX:0007,grain colour,en,colour|color|white|yellow
MZX:0008,taste,en,taste|tasty|sweet
MZX:0009,market value,en,marketable|market|sells|price|consumption
MZX:0010,intercropping,en,intercropping|intercrop|intercroping
MZX:0011,animal feed,en,feed|fodder|livestock
MZX:0012,storability,en,storage|stores well|store
"""


def run(*argv: str) -> tuple[int, str]:
    buffer = io.StringIO()
    code = main(list(argv), console=Console(file=buffer, width=160))
    return code, buffer.getvalue()


def timed(label: str, *argv: str) -> float:
    start = time.perf_counter()
    code, out = run(*argv)
    took = time.perf_counter() - start
    if code != 0:
        raise SystemExit(f"{label} failed ({code}):\n{out}")
    print(f"{label:<24} {took:7.1f} s")
    return took


def check_charts(root: Path) -> int:
    with Workspace.open(root) as ws:
        version = store.latest_model(ws.conn)
        assert version is not None
        m, r = prepare(mention_frame(ws, version.version), respondent_frame(ws))
        groups = [g for g in ("gender", "age_group", "country") if g in r.columns]
        summary = trait_summary(m, r, concept_frame(ws), groups)
    charts = all_charts(summary, groups)
    for chart in charts:
        assert_no_overlap(chart_figure(chart))
    return len(charts)


def check_indicators(exports: Path, respondents: int) -> None:
    with pd.io.stata.StataReader(exports / "indicators.dta") as reader:
        labels = reader.variable_labels()
        dta = reader.read()
    sav, meta = pyreadstat.read_sav(exports / "indicators.sav")
    assert len(dta) == len(sav) == respondents, (len(dta), len(sav), respondents)
    assert labels["like_MZX_0001"] == "liked: yield (MZX:0001)"
    assert meta.variable_value_labels["like_MZX_0001"] == {0.0: "no", 1.0: "yes"}
    print(f"indicators: {len(dta)} rows, {dta.shape[1]} variables, labels read back")


def bench(root: Path) -> None:
    (root / "concepts.csv").write_text(CONCEPTS, encoding="utf-8")
    assert run("init", str(root))[0] == 0
    toml = root / "traits.toml"
    text = toml.read_text(encoding="utf-8")
    text = text.replace('languages = ["en", "fr", "es"]', 'languages = ["en"]')
    text = text.replace('group_by = ["gender"', 'group_by = ["country", "gender"', 1)
    toml.write_text(text, encoding="utf-8")
    total = timed("add", "-w", str(root), "add", str(DATA))
    concepts = str(root / "concepts.csv")
    total += timed("concepts import", "-w", str(root), "concepts", "import", concepts)
    total += timed("run", "-w", str(root), "run")
    total += timed("report", "-w", str(root), "report")
    total += timed("export indicators", "-w", str(root), "export", "--format", "indicators")
    respondents = pd.read_csv(DATA)["respondent"].nunique()
    check_indicators(root / "exports", respondents)
    print(f"charts without overlapping labels: {check_charts(root)}")
    print(f"total {total:.1f} s; report {root / 'exports' / 'report.html'}")
    print(f"charts {root / 'exports' / 'preferred_traits_charts'}")


def main_cli() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--keep", type=Path, help="work in this folder and keep it")
    args = parser.parse_args()
    if not DATA.is_file():
        raise SystemExit(f"skipped: {DATA} is absent (see ../shared/datasets/)")
    if args.keep:
        shutil.rmtree(args.keep, ignore_errors=True)
        args.keep.mkdir(parents=True)
        bench(args.keep)
        return
    with tempfile.TemporaryDirectory() as tmp:
        bench(Path(tmp))


if __name__ == "__main__":
    main_cli()
