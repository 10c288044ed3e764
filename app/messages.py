"""Messages shown to the user: one place that turns an exception into a short line.

The physics reports a failed solve as `SolverError`, whose ``summary`` field is the
short message (its ``history`` field holds the residuals). Nothing here parses message
text beyond taking the first line.
"""

from __future__ import annotations


def short_error(exc: BaseException) -> str:
    """A one-line message for an exception: its ``summary`` field when it has one (e.g.
    `SolverError`), else the first line of its text (the type name when it has none)."""
    summary = getattr(exc, "summary", None)
    if isinstance(summary, str) and summary.strip():
        return summary.strip()
    text = str(exc).strip()
    return text.splitlines()[0] if text else type(exc).__name__
