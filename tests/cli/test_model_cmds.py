"""`traits export` from the command line: one sentence on bad input, the settings floor."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from tests.jobs.study import run


def test_names_file_not_in_utf8_is_one_sentence(study: Path) -> None:
    assert run("-w", str(study), "run")[0] == 0
    (study / "names.txt").write_bytes("Zélie Ombara\n".encode("cp1252"))
    code, out = run("-w", str(study), "export", "--pseudonymise", "--names-file", "names.txt")
    assert code == 1 and "not UTF-8" in out and "Traceback" not in out


def test_other_formats_apply_the_settings_confidence_floor(study: Path, tmp_path: Path) -> None:
    assert run("-w", str(study), "run")[0] == 0
    settings = study / "traits.toml"
    settings.write_text(
        settings.read_text(encoding="utf-8").replace(
            "min_confidence = 0.0", "min_confidence = 1.0"
        ),
        encoding="utf-8",
    )
    out_file = tmp_path / "m.csv"
    code, out = run("-w", str(study), "export", "--format", "csv", "--out", str(out_file))
    assert code == 0, out
    assert len(pd.read_csv(out_file)) == 0  # no prediction is fully certain
