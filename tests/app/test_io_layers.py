"""Layers of the app's I/O and figure modules: no import cycles, and the UI-free model/I-O
modules load no UI library.

The import graph is read from the source (every ``import``/``from ... import`` of a
``sub60.app`` module, also those inside functions), so a cycle hidden in a function body
counts too. The rule itself is the project's own (issue 9: dependencies point down only;
common practice, no source).
"""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

import pytest

APP = Path(__file__).resolve().parents[2] / "app"

#: The UI-free model and I/O modules of the app (no Panel, Bokeh or matplotlib).
UI_FREE = ("messages", "theme", "tables", "snapshot_fields", "snapshot_schema", "snapshot_check",
           "snapshot_reader", "presets", "metrics_strip", "pinning", "cli_common")
UI_LIBRARIES = ("panel", "bokeh", "matplotlib")


def app_imports(module: str) -> set[str]:
    """Names of the sub60.app modules a module imports anywhere in its source."""
    tree = ast.parse((APP / f"{module}.py").read_text(encoding="utf-8"))
    out: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module:
            if node.module.startswith("sub60.app."):
                out.add(node.module.split(".")[2])
            elif node.module == "sub60.app":
                out.update(a.name for a in node.names)
        elif isinstance(node, ast.Import):
            out.update(a.name.split(".")[2] for a in node.names
                       if a.name.startswith("sub60.app."))
    return out - {module}


def graph() -> dict[str, set[str]]:
    return {p.stem: app_imports(p.stem) for p in APP.glob("*.py")}


def reachable(edges: dict[str, set[str]], start: str) -> set[str]:
    seen: set[str] = set()
    todo = list(edges.get(start, ()))
    while todo:
        m = todo.pop()
        if m not in seen:
            seen.add(m)
            todo.extend(edges.get(m, ()))
    return seen


def test_the_app_has_no_import_cycle():
    edges = graph()
    cycles = sorted(m for m in edges if m in reachable(edges, m))
    assert not cycles, f"modules on an import cycle: {cycles}"


@pytest.mark.parametrize(("lower", "upper"), [
    ("figures", "snapshot_bundle"), ("figures", "snapshot"), ("snapshot_cli", "cli"),
    ("pinning", "plots"), ("tables", "snapshot_bundle")])
def test_a_lower_module_does_not_reach_the_one_above(lower, upper):
    assert upper not in reachable(graph(), lower) | {lower}


def test_ui_free_modules_reach_only_ui_free_modules():
    edges = graph()
    for m in UI_FREE:
        beyond = reachable(edges, m) - set(UI_FREE)
        assert not beyond, f"{m} reaches {sorted(beyond)}"


def test_ui_free_modules_load_no_ui_library():
    code = ("import sys\n"
            + "".join(f"import sub60.app.{m}\n" for m in UI_FREE)
            + f"print(sorted({{n.split('.')[0] for n in sys.modules}} & {set(UI_LIBRARIES)!r}))")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=120)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip() == "[]"
