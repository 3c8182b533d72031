"""The public front door and the project's own set-up promises."""

import doctest
import pathlib

import calendra.api

ROOT = pathlib.Path(__file__).resolve().parent.parent


def test_api_doctests():
    result = doctest.testmod(calendra.api)
    assert result.attempted > 0 and result.failed == 0


def test_api_names_exist():
    for name in calendra.api.__all__:
        assert hasattr(calendra.api, name), name


def test_ci_runs_the_readme_test_command():
    # The README promises that CI runs exactly its test command.
    ci = (ROOT / ".ci" / "run").read_text().strip().splitlines()[-1].strip()
    readme = (ROOT / "README.md").read_text()
    assert ci in readme, ci
