"""Shared pytest set-up: the hypothesis profiles of the property-based (fuzz) tests.

Two profiles (see DEVELOPERS.md):

- ``ci`` (default): 100 examples per property test, which gives each public entry point a few
  hundred generated inputs across the tests that exercise it; derandomised, so CI runs the same
  inputs every time and a failure reproduces; no deadline (the machine is shared and timing
  is not what these tests check).
- ``long``: 10^4 examples per property test, random (a new part of the input space each run),
  for a run by hand: ``pytest tests/test_fuzz_*.py --long`` or
  ``TEAKIT_HYPOTHESIS_PROFILE=long pytest tests/test_fuzz_*.py``. Add
  ``--hypothesis-show-statistics`` to see how many inputs each test tried.

Tests that pass their own ``@settings(max_examples=...)`` keep that number under both profiles.
"""

import os

from hypothesis import HealthCheck, settings

PROFILES = ("ci", "long")

settings.register_profile(
    "ci",
    max_examples=100,
    deadline=None,
    derandomize=True,
    print_blob=True,
    suppress_health_check=[HealthCheck.too_slow],
)
settings.register_profile(
    "long",
    max_examples=10_000,
    deadline=None,
    derandomize=False,
    print_blob=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much],
)


def pytest_addoption(parser):
    parser.addoption(
        "--long",
        action="store_true",
        default=False,
        help="run the property-based tests under the hypothesis 'long' profile (10^4 examples "
        "per test); the environment variable TEAKIT_HYPOTHESIS_PROFILE=long does the same",
    )


def pytest_configure(config):
    name = "long" if config.getoption("--long") else os.environ.get("TEAKIT_HYPOTHESIS_PROFILE", "ci")
    if name not in PROFILES:
        raise ValueError(
            f"TEAKIT_HYPOTHESIS_PROFILE must be one of {', '.join(PROFILES)}, got {name!r}"
        )
    settings.load_profile(name)
