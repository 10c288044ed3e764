"""Shared pytest configuration: the ``--long`` option and the hypothesis profiles.

- ``--long`` runs the tests marked ``@pytest.mark.slow`` (skipped otherwise) and loads the
  hypothesis profile "long" (500 examples per property); without it the profile is "ci"
  (40 examples), unless ``--hypothesis-profile NAME`` picks another one.
- Both profiles have no per-example deadline: one example of the physics fuzz solves a
  2D Poisson problem, whose time depends on the random design (the slowest case is
  reported by ``tests/bench_fuzz.py`` and in the fuzz summary below, not asserted).
- Tests append one record per solved case to the ``fuzz_log`` fixture; the terminal
  summary prints what happened (converged, solver errors, fallbacks, timings).

Tests that set their own ``max_examples`` keep it under either profile.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, settings

CI_EXAMPLES = 40
LONG_EXAMPLES = 500

settings.register_profile("ci", max_examples=CI_EXAMPLES, deadline=None, print_blob=True,
                          suppress_health_check=[HealthCheck.too_slow])
settings.register_profile("long", max_examples=LONG_EXAMPLES, deadline=None, print_blob=True,
                          suppress_health_check=[HealthCheck.too_slow])

FUZZ_LOG = pytest.StashKey[list]()


def pytest_addoption(parser: pytest.Parser) -> None:
    parser.addoption("--long", action="store_true", default=False,
                     help="run the tests marked slow and the hypothesis profile 'long' "
                          f"({LONG_EXAMPLES} examples per property)")


@pytest.hookimpl(trylast=True)  # after hypothesis' own plugin: --long wins over --hypothesis-profile
def pytest_configure(config: pytest.Config) -> None:
    config.stash[FUZZ_LOG] = FuzzLog()
    if config.getoption("--long"):
        settings.load_profile("long")
    elif not config.getoption("--hypothesis-profile", default=None):
        settings.load_profile("ci")


def pytest_collection_modifyitems(config: pytest.Config, items: list[pytest.Item]) -> None:
    if config.getoption("--long"):
        return
    skip = pytest.mark.skip(reason="slow: runs only with --long")
    for item in items:
        if "slow" in item.keywords:
            item.add_marker(skip)


class FuzzLog(list):
    """A list of case records with a short repr (hypothesis prints its arguments)."""

    def __repr__(self) -> str:
        return f"<fuzz log of {len(self)} cases>"


@pytest.fixture(scope="session")
def fuzz_log(pytestconfig: pytest.Config) -> FuzzLog:
    """Records of the fuzzed cases: dicts with at least "outcome" ("converged" or
    "solver error"), "seconds", "design" (a dict), "vg_V", "vd_V", "notes" and "open_bugs" (invariant tags of
    reported bugs that the case breaks)."""
    return pytestconfig.stash[FUZZ_LOG]


def pytest_terminal_summary(terminalreporter, exitstatus: int, config: pytest.Config) -> None:
    records = config.stash.get(FUZZ_LOG, [])
    if not records:
        return
    tr = terminalreporter
    tr.section("physics fuzz summary")
    times = np.array([r["seconds"] for r in records])
    converged = [r for r in records if r["outcome"] == "converged"]
    errors = [r for r in records if r["outcome"] == "solver error"]
    fallbacks = [r for r in converged if r["notes"]]
    tr.write_line(f"profile {settings.get_current_profile_name()!r}: {len(records)} cases solved "
                  "(shrinking replays included)")
    tr.write_line(f"converged {len(converged)} ({len(converged) / len(records):.1%}), of which "
                  f"{len(fallbacks)} needed a fallback; SolverError {len(errors)}")
    tr.write_line(f"time per case: median {np.median(times):.3f} s, "
                  f"p95 {np.percentile(times, 95):.3f} s, max {times.max():.3f} s")
    slowest = records[int(np.argmax(times))]
    tr.write_line(f"slowest: {slowest['seconds']:.3f} s at Vg = {slowest['vg_V']!r} V, "
                  f"Vd = {slowest['vd_V']!r} V, {slowest['outcome']}, design {slowest['design']}")
    open_bugs: dict[str, int] = {}
    for r in converged:
        for tag in r.get("open_bugs", ()):
            open_bugs[tag] = open_bugs.get(tag, 0) + 1
    if open_bugs:
        tr.write_line(f"cases breaking invariants of reported open bugs (not failed): {open_bugs}")
    for r in fallbacks[:10]:
        tr.write_line(f"fallback: {'; '.join(r['notes'])} | Vg = {r['vg_V']!r}, Vd = {r['vd_V']!r}, "
                      f"design {r['design']}")
    for r in errors[:10]:
        tr.write_line(f"SolverError: {r['message']} | design {r['design']}")
