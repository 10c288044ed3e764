"""`short_error`: the one place that turns an exception into a line for the user."""

from __future__ import annotations

from sub60.app.messages import short_error
from sub60.physics.poisson import SolverError


class _WithSummary(Exception):
    summary = "Newton did not converge at Vg = 0.3 V"


def test_the_summary_field_is_preferred_over_the_text():
    exc = _WithSummary("Newton did not converge at Vg = 0.3 V; history [V]: 1e-1, 1e-2")
    assert short_error(exc) == "Newton did not converge at Vg = 0.3 V"


def test_without_a_summary_the_first_line_is_kept():
    assert short_error(ValueError("gate_length_nm: 0 outside [5, 200]\ndetails")) == \
        "gate_length_nm: 0 outside [5, 200]"
    assert short_error(RuntimeError()) == "RuntimeError"


def test_a_solver_error_gives_one_line_starting_with_its_message():
    text = short_error(SolverError("no convergence", [0.1, 0.01]))
    assert "\n" not in text and text.startswith("no convergence")
