"""Shared fixtures of the test suite."""

import pytest
from hypothesis import HealthCheck, settings

# Deterministic property tests: the same examples on every run and in CI.
settings.register_profile("calendra", derandomize=True, deadline=None, max_examples=200,
                          suppress_health_check=[HealthCheck.too_slow])
settings.load_profile("calendra")


@pytest.fixture(scope="session")
def host():
    """The process-wide plugin host with every installed plugin."""
    from calendra.pluginmanager import get_host

    return get_host()


@pytest.fixture
def fresh_host():
    """Restore the process-wide host after a test that replaces it."""
    from calendra import pluginmanager

    saved = pluginmanager._HOST
    yield
    pluginmanager.set_host(saved)


@pytest.fixture
def default_deltat():
    from calendra.deltat import DEFAULT_MODEL, get_model

    return get_model(DEFAULT_MODEL)


@pytest.fixture(scope="session")
def skyfield_tools():
    """skyfield's almanac, a built-in timescale and find_discrete: the reference search of the trade."""
    from skyfield import almanac
    from skyfield.api import load
    from skyfield.searchlib import find_discrete

    return almanac, load.timescale(builtin=True), find_discrete
