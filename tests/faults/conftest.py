"""Tests marked `faults_long` run only when asked for by marker (`pytest -m faults_long`),
as their own CI step. The fault tests' helpers are in tests/helpers/faultwork.py."""

import pytest


def pytest_collection_modifyitems(config, items):
    if "faults_long" in (config.getoption("markexpr") or ""):
        return
    skip = pytest.mark.skip(reason="a long fault test: run it with -m faults_long")
    for item in items:
        if item.get_closest_marker("faults_long"):
            item.add_marker(skip)
