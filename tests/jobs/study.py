"""A small invented study for the job tests, and the ``traits`` command driven in-process.

Respondents, answers and trait IDs are invented; the studies run the whole job on them
(smoke checks of the wiring; quality is measured on outside data in tests/models).
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest
from rich.console import Console

from extractor.cli.main import main
from extractor.workspace import store
from extractor.workspace.folder import Workspace

ANSWERS = [
    ("KA-01", "woman", "farmer", "It cooks fast and the broth is thick. I like the taste."),
    ("KA-02", "man", "trader", "The grains are too small. Buyers want big grains."),
    ("KA-03", "woman", "consumer", "It does not cook fast. The taste is bitter."),
    ("KA-04", "man", "farmer", "I wish it matured earlier. The yield is good."),
    ("KA-05", "woman", "processor", "Weevils eat it in the store. We planted after the rains."),
    ("KA-06", "man", "farmer", "Good yield even in drought. It cooks fast."),
]
CONCEPTS = (
    "id,label,lang,synonyms\n"
    "BTX:0001,cooking time,en,cooks fast|cook fast|quick to cook\n"
    "BTX:0002,broth thickness,en,broth|thick broth\n"
    "BTX:0003,taste,en,flavour|tasty\n"
    "BTX:0004,grain size,en,small grains|big grains|grain size\n"
    "BTX:0005,yield,en,harvest\n"
    "BTX:0006,earliness,en,matures early|matured earlier\n"
    "BTX:0007,storability,en,weevils|stores well\n"
    "BTX:0008,drought tolerance,en,drought\n"
)
PHRASES = {
    "cooks fast": "BTX:0001",
    "broth": "BTX:0002",
    "taste": "BTX:0003",
    "grains": "BTX:0004",
    "yield": "BTX:0005",
    "matured earlier": "BTX:0006",
    "Weevils": "BTX:0007",
    "drought": "BTX:0008",
}


def run(
    *argv: str, stdin: str | None = None, monkeypatch: pytest.MonkeyPatch | None = None
) -> tuple[int, str]:
    """Run the ``traits`` command with a captured console; return (exit code, output)."""
    if stdin is not None and monkeypatch is not None:
        monkeypatch.setattr("sys.stdin", io.StringIO(stdin))
    buffer = io.StringIO()
    code = main(list(argv), console=Console(file=buffer, width=160, force_terminal=False))
    return code, buffer.getvalue()


def make_study(root: Path) -> Path:
    """Write the study's interviews and concept list into ``root`` and make it a workspace."""
    (root / "interviews").mkdir(parents=True)
    lines = ["respondent,gender,role,language,question,answer"]
    lines += [f'{r},{g},{role},en,Why do you grow it?,"{a}"' for r, g, role, a in ANSWERS]
    (root / "interviews" / "survey.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    (root / "concepts.csv").write_text(CONCEPTS, encoding="utf-8")
    assert run("init", str(root))[0] == 0
    return root


def latest_version(root: Path) -> store.ModelVersion:
    """Return the workspace's newest model version (there must be one)."""
    with Workspace.open(root) as ws:
        latest = store.latest_model(ws.conn)
    assert latest is not None
    return latest


def labeled(respondent: str, text: str) -> str:
    """A gold JSON line marking every phrase of PHRASES found in the text."""
    spans = [
        {"start": text.index(p), "end": text.index(p) + len(p), "concept": c, "stance": "liked"}
        for p, c in PHRASES.items()
        if p in text
    ]
    return json.dumps({"respondent": respondent, "lang": "en", "sentence": text, "mentions": spans})


def label_line(respondent: str, text: str, spans: list[dict[str, object]]) -> str:
    """A gold JSON line with the spans given."""
    return json.dumps({"respondent": respondent, "lang": "en", "sentence": text, "mentions": spans})
