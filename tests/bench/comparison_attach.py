"""Which trait mention a comparison goes to, on real farmer answers: this tree against a baseline.

Not part of the test suite. Run from the repository root:

    python tests/bench/comparison_attach.py [--baseline 7ef314f] [--sample 20] [--seed 0]

Reads the maize concept-testing verbatims in place (``../shared/datasets/``, CC BY 4.0;
never copied; ``tests/maize.py``). The answers name no released variety, so the check
uses a variety list written here for it: the concepts farmers were shown, as they name
them ("drought avoidance variety"), and the phrases they compare with ("other
varieties", "the other two", "normal varieties"; IDs ``CMP:..``, invented). Each answer
is split into sentences; trait mentions are the tool's predictions of a model trained on
our 300 labelled answers (``tests/maize_labels.jsonl``) with all answers as text, as
``traits run`` would. Every mention is attributed with this tree's
:func:`extractor.models.variety.attribute_corpus` and with the baseline revision's,
and the mentions given a compared variety are counted; mentions whose compared variety
differs are printed (a seeded sample of ``--sample`` of them) for a person to check.
The same is done on the invented demo's labeled spans (``sample_interviews/gold.jsonl``,
with its variety list), as a smoke check only: the demo is no evidence of quality.
"""

from __future__ import annotations

import argparse
import importlib.util
import json
import random
import subprocess
import sys
import tempfile
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.ingest.concepts import load_concept_list  # noqa: E402
from extractor.models.bundle import TraitModels  # noqa: E402
from extractor.models.stance import codebook_params  # noqa: E402
from extractor.models.variety import attribute_corpus  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.text import split_sentences  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests import maize  # noqa: E402

DEMO = ROOT / "sample_interviews"

# Written for this check from the concepts shown and the answers' own wording.
VARIETIES = [
    ("CMP:01", "drought avoidance variety", "en"),
    ("CMP:02", "drought resistance variety", "en"),
    ("CMP:03", "intercropping variety", "en"),
    ("CMP:04", "feed variety", "en"),
    ("CMP:05", "nutritious variety", "en"),
    ("CMP:06", "resilient variety", "en"),
    ("CMP:07", "green maize variety", "en"),
    ("CMP:10", "other varieties", "en"),
    ("CMP:10", "the other varieties", "en"),
    ("CMP:10", "other variety", "en"),
    ("CMP:10", "others", "en"),
    ("CMP:10", "the rest", "en"),
    ("CMP:10", "other normal varieties", "en"),
    ("CMP:11", "the other two", "en"),
    ("CMP:11", "the other two varieties", "en"),
    ("CMP:11", "the other 2 varieties", "en"),
    ("CMP:12", "normal varieties", "en"),
    ("CMP:12", "the normal varieties", "en"),
    ("CMP:12", "usual variety", "en"),
    ("CMP:12", "usual one", "en"),
    ("CMP:12", "ours", "en"),
]


def baseline_module(rev: str):  # noqa: ANN201 - a module loaded from a file
    """Return the baseline revision's variety module, loaded from a temporary file."""
    text = subprocess.run(
        ["git", "show", f"{rev}:extractor/models/variety.py"],
        cwd=ROOT, capture_output=True, text=True, check=True,
    ).stdout  # fmt: skip
    path = Path(tempfile.mkdtemp()) / "variety_baseline.py"
    path.write_text(text, encoding="utf-8")
    spec = importlib.util.spec_from_file_location("variety_baseline", path)
    assert spec and spec.loader
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def compare(
    corpus: list[Sentence],
    spans: dict[int, list[Span]],
    varieties: list[tuple[str, str, str]],
    baseline,  # noqa: ANN001 - the baseline module
) -> dict[str, Any]:
    """Return the mentions given a compared variety both ways and those that differ."""
    new = attribute_corpus(corpus, spans, varieties, {})
    old = baseline.attribute_corpus(corpus, spans, varieties, {})
    text = {s.id: s.text for s in corpus}
    changed = []
    for sid, pairs in new.items():
        for span, (_, ref_new), (_, ref_old) in zip(spans[sid], pairs, old[sid], strict=True):
            if ref_new != ref_old:
                changed.append(
                    {
                        "sentence": text[sid],
                        "span": text[sid][span.start : span.end],
                        "concept": span.concept,
                        "baseline": ref_old,
                        "new": ref_new,
                    }
                )
    return {
        "mentions": sum(len(v) for v in spans.values()),
        "mentions_with_compared_variety": {
            "new": sum(1 for pairs in new.values() for _, r in pairs if r),
            "baseline": sum(1 for pairs in old.values() for _, r in pairs if r),
        },
        "changed": changed,
    }


def demo_gold() -> tuple[list[Sentence], dict[int, list[Span]], list[tuple[str, str, str]]]:
    """Return the demo's labeled sentences (answers = runs of respondent and question)."""
    corpus: list[Sentence] = []
    spans: dict[int, list[Span]] = {}
    answer, last = 0, None
    for line in (DEMO / "gold.jsonl").read_text(encoding="utf-8").splitlines():
        r = json.loads(line)
        if (r["respondent"], r["question"]) != last:
            answer, last = answer + 1, (r["respondent"], r["question"])
        sid = len(corpus)
        corpus.append(
            Sentence(sid, r["sentence"], r["lang"], r["question"], r["respondent"], answer)
        )
        if r["mentions"]:
            spans[sid] = [Span(m["start"], m["end"], m.get("concept")) for m in r["mentions"]]
    listed = load_concept_list(DEMO / "varieties.csv")
    return corpus, spans, [(a.concept_id, a.text, a.lang) for a in listed.aliases]


def main() -> None:
    """Attribute the predicted mentions both ways and print counts and changed mentions."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--baseline", default="7ef314f")
    parser.add_argument("--sample", type=int, default=20)
    parser.add_argument("--seed", type=int, default=0)
    args = parser.parse_args()
    loaded = maize.load_workspace()
    if loaded is None:
        sys.exit(maize.SKIP_REASON)
    answers, labelled, aliases = loaded
    corpus: list[Sentence] = []
    for a in answers:
        for s, e in split_sentences(a.text, "en"):
            corpus.append(
                Sentence(len(corpus), a.text[s:e], "en", a.question, a.respondent, a.id, s)
            )
    gold = [(answers[g["row"]], [Span(**sp) for sp in g["spans"]]) for g in labelled]
    params = {"questions": codebook_params(maize.CODEBOOK)}
    clusters = learn_clusters([(s.text, s.lang) for s in corpus], seed=args.seed)
    models = TraitModels(stance_params=params).fit(gold, corpus, aliases, clusters=clusters)
    spans = {
        s.id: [Span(m.start, m.end, m.concept, m.stance) for m in p.mentions]
        for s, p in zip(corpus, models.predict(corpus), strict=True)
    }
    spans = {k: v for k, v in spans.items() if v}
    baseline = baseline_module(args.baseline)
    maize_figures = compare(corpus, spans, VARIETIES, baseline)
    changed = maize_figures.pop("changed")
    sample = random.Random(args.seed).sample(changed, min(args.sample, len(changed)))
    demo_figures = compare(*demo_gold(), baseline)
    print(
        json.dumps(
            {
                "maize": {
                    "answers": len(answers),
                    "sentences": len(corpus),
                    **maize_figures,
                    "changed": len(changed),
                    "sample": sample,
                },
                "demo_gold": {**demo_figures, "changed_count": len(demo_figures["changed"])},
            },
            indent=1,
            ensure_ascii=False,
        )
    )


if __name__ == "__main__":
    main()
