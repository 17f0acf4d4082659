"""Fixtures of the report tests: the invented study of :mod:`tests.report.study`."""

from __future__ import annotations

import pandas as pd
import pytest

from tests.report.study import study_frames

Study = tuple[pd.DataFrame, pd.DataFrame]


@pytest.fixture()
def study() -> Study:
    """Mentions and respondents: six individuals (3 women, 2 men, 1 unrecorded), one group."""
    return study_frames()
