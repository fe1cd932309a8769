"""Every test of the semi-empirical route gets its own empty results cache."""

import pytest


@pytest.fixture(autouse=True)
def _private_cache(tmp_path, monkeypatch):
    monkeypatch.setenv("TSTRATE_CACHE", str(tmp_path / "cache"))
    monkeypatch.chdir(tmp_path)
