"""Fixtures of the analysis tests (the tiny site of tiny_site.py)."""
import pytest

from analysis.tiny_site import make_tiny


@pytest.fixture(scope="package")
def tiny(tmp_path_factory):
    return make_tiny(tmp_path_factory.mktemp("mc"))
