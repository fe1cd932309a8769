"""Shared fixtures of the output tests: the invented carbonic-acid test study (tests/output/data/carbonic,
numbers labelled as invented there) and its TST rates and fits, read once per module."""

from pathlib import Path

import pytest

from tstrate.io.study import read_study
from tstrate.study.fits import fit_study
from tstrate.study.rates import study_rates

CARBONIC = Path(__file__).resolve().parent / "data" / "carbonic" / "study.toml"


@pytest.fixture(scope="module")
def carbonic():
    return read_study(CARBONIC)


@pytest.fixture(scope="module")
def carbonic_fits(carbonic):
    return fit_study(carbonic)


@pytest.fixture(scope="module")
def rates(carbonic):
    return study_rates(carbonic)
