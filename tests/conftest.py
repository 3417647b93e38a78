"""Shared test fixtures.

``seed``: tests that take a ``seed`` argument run once with seed 42 by default.  Set the environment
variable ``NULLSPEC_TEST_SEEDS`` to ``all`` (seeds 0-99), to one integer, or to a comma-separated list
(``0,7,13``) to check that a test does not depend on a lucky seed while staying deterministic.
"""

import os

import pytest

_DEFAULT_SEEDS = (42,)
_ALL_SEEDS = tuple(range(100))


def _test_seeds():
    raw = os.environ.get("NULLSPEC_TEST_SEEDS", "").strip()
    if not raw:
        return _DEFAULT_SEEDS
    if raw == "all":
        return _ALL_SEEDS
    try:
        return tuple(int(part) for part in raw.split(","))
    except ValueError:
        raise pytest.UsageError(
            f"NULLSPEC_TEST_SEEDS must be 'all', an integer or a comma-separated list of integers; got {raw!r}."
        ) from None


def pytest_generate_tests(metafunc):
    if "seed" in metafunc.fixturenames:
        metafunc.parametrize("seed", _test_seeds())
