"""The layers of sub60, read from the source: dependencies point down only.

    entry (3)   command line, server, ``python -m``
    views (2)   the explorer page, live plots, export figures, pin and snapshot panes
    model (1)   UI-free state, session jobs, pins, page address, snapshot files, texts
    physics (0) the physics package (its public API is what the app uses)

Every module of ``app/`` and ``physics/`` is parsed with `ast` (nothing is imported), and
every import is counted: at the top, inside functions (lazy imports) and under
``TYPE_CHECKING`` (a model module that names a view, even for typing, knows about it).
The tests fail when a module imports a module of a higher layer, when a model or physics
module imports Panel or Bokeh, when physics imports the app, when a module is in no layer
(a new module must be placed in `LAYERS`), or when app modules import each other in a
cycle; each failure lists the offending imports as ``module:line -> imported module``.

The layering is the project's own architecture rule (no source); the check is the usual
one of import linters: a directed graph of imports, layers as a rank, cycles as strongly
connected components (Tarjan, 1972, "Depth-first search and linear graph algorithms",
SIAM J. Comput. 1(2):146-160).
"""

from __future__ import annotations

import ast
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
PACKAGE_DIRS = {"sub60.app": ROOT / "app", "sub60.physics": ROOT / "physics",
                "sub60": ROOT / "physics" / "_root"}

PHYSICS, MODEL, VIEWS, ENTRY = 0, 1, 2, 3
LAYER_NAMES = {PHYSICS: "physics", MODEL: "model (UI-free)", VIEWS: "views", ENTRY: "entry"}
#: Layer of each app module (``sub60.app.NAME``); every physics module is PHYSICS.
LAYERS: dict[str, int] = {
    "__init__": MODEL,
    # model and I/O: no Panel, no Bokeh, no matplotlib
    "state": MODEL, "jobs": MODEL, "curve_process": MODEL, "pin_jobs": MODEL, "pinning": MODEL,
    "sharing": MODEL,
    "messages": MODEL, "theme": MODEL, "tables": MODEL, "snapshot_fields": MODEL,
    "snapshot_schema": MODEL, "snapshot_measured": MODEL, "snapshot_reader": MODEL, "snapshot_check": MODEL,
    "presets": MODEL, "atomic": MODEL, "sweep_spec": MODEL, "sweep_engine": MODEL,
    "number_rules": MODEL, "sweep_session": MODEL,
    "nonideal": MODEL, "nonideal_view": VIEWS,  # non-idealities
    # views: the page, live plots, export figures and the snapshot bundle that holds them
    "layout": VIEWS, "controls": VIEWS, "results_view": VIEWS, "pin_view": VIEWS,
    "snapshot_view": VIEWS, "compare_panes": VIEWS, "plots": VIEWS, "plots_bias": VIEWS,
    "plots_curves": VIEWS, "plot_style": VIEWS, "metrics_strip": VIEWS, "figures": VIEWS,
    "figures_page": VIEWS, "snapshot_bundle": VIEWS, "session_files": VIEWS,
    "sweep_view": VIEWS, "sweep_plots": VIEWS,
    "material_card": VIEWS, "measured_view": VIEWS, "whatif_bar": VIEWS,
    # entry points
    "cli": ENTRY, "cli_common": ENTRY, "snapshot_cli": ENTRY, "sweep_cli": ENTRY, "server": ENTRY,
    "fit_cli": ENTRY,  # measured curves and fits
    "__main__": ENTRY, "console": ENTRY,
}
#: Top-level packages a model or physics module must not import.
UI_PACKAGES = ("panel", "bokeh", "matplotlib")

#: Known defects of modules being split on another branch: each entry is expected to
#: fail until that work is merged; strict, so the merge that fixes one flips it here.
KNOWN_LAYER_BREAKS: dict[str, str] = {}
KNOWN_CYCLES: dict[frozenset[str], str] = {}


@dataclass(frozen=True)
class Import:
    """One import statement's target, as found in a module."""

    module: str   # the importing module (dotted)
    line: int
    target: str   # the imported module (dotted; the deepest existing module)

    def __str__(self) -> str:
        return f"{self.module}:{self.line} -> {self.target}"


# ---------------------------------------------------------------------- reading the source
def module_files(package_dirs: Mapping[str, Path] = PACKAGE_DIRS) -> dict[str, Path]:
    """Dotted module name -> source file, for every module of the packages (the
    ``sub60`` root package maps to physics/_root, its own folder only)."""
    out: dict[str, Path] = {}
    for package, folder in package_dirs.items():
        files = folder.glob("*.py") if package == "sub60" else folder.rglob("*.py")
        for path in files:
            rel = path.relative_to(folder).with_suffix("")
            if "_root" in rel.parts and package != "sub60":
                continue  # the root package is listed under its own name
            parts = [p for p in rel.parts if p != "__init__"]
            out[".".join([package, *parts])] = path
    return out


def _resolve(name: str, known: Iterable[str]) -> str:
    """The deepest known module that a dotted name lies in (name itself if external)."""
    known = set(known)
    parts = name.split(".")
    for n in range(len(parts), 0, -1):
        candidate = ".".join(parts[:n])
        if candidate in known:
            return candidate
    return name


def imports_of(module: str, source: str, known: Iterable[str], is_package: bool = False
               ) -> list[Import]:
    """Every import of a module's source (top level, in functions, under TYPE_CHECKING),
    resolved to the modules it loads; ``from pkg import name`` counts ``pkg.name`` when
    that is a module, else ``pkg``."""
    known = set(known)
    package = module if is_package else module.rpartition(".")[0]
    found: list[Import] = []
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.Import):
            found += [Import(module, node.lineno, _resolve(a.name, known)) for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:  # relative import
                anchor = package.split(".")
                anchor = anchor[:len(anchor) - (node.level - 1)]
                base = ".".join([*anchor, *([base] if base else [])])
            for alias in node.names:
                sub = f"{base}.{alias.name}"
                target = sub if sub in known else _resolve(base, known)
                found.append(Import(module, node.lineno, target))
    return list(dict.fromkeys(found))  # one per line and target


def import_graph(files: Mapping[str, Path]) -> dict[str, list[Import]]:
    """Module -> its imports (all of them, external ones included)."""
    return {m: imports_of(m, p.read_text(encoding="utf-8"), files, p.name == "__init__.py")
            for m, p in files.items()}


# ---------------------------------------------------------------------- the rules
def layer_of(module: str) -> int | None:
    """The layer of a sub60 module (None: an app module nobody placed yet)."""
    if module == "sub60" or module.startswith("sub60.physics"):
        return PHYSICS
    if module == "sub60.app":
        return LAYERS["__init__"]
    if module.startswith("sub60.app."):
        return LAYERS.get(module.split(".")[2])
    return None


def layer_breaks(module: str, imports: Iterable[Import], layers=layer_of) -> list[str]:
    """What a module must not import, one line each (empty when it is in order)."""
    mine = layers(module)
    if mine is None:
        return [f"{module} is in no layer: add it to LAYERS in tests/app/test_layers.py"]
    problems = []
    for imp in imports:
        top = imp.target.split(".")[0]
        if top in UI_PACKAGES and mine <= MODEL:
            problems.append(f"{imp}: a {LAYER_NAMES[mine]} module imports {top}")
        elif top == "sub60":
            theirs = layers(imp.target)
            if theirs is not None and theirs > mine:
                problems.append(f"{imp}: {LAYER_NAMES[mine]} imports {LAYER_NAMES[theirs]}")
    return problems


def import_cycles(graph: Mapping[str, Iterable[Import]], within: str = "sub60.app"
                  ) -> list[frozenset[str]]:
    """The import cycles among the modules under ``within`` (strongly connected
    components of more than one module, or a module importing itself)."""
    nodes = [m for m in graph if m == within or m.startswith(within + ".")]
    edges = {m: sorted({i.target for i in graph[m] if i.target in nodes}) for m in nodes}
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    cycles: list[frozenset[str]] = []

    def visit(v: str) -> None:  # Tarjan's algorithm
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in edges[v]:
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = set()
            while True:
                w = stack.pop()
                on_stack.discard(w)
                component.add(w)
                if w == v:
                    break
            if len(component) > 1 or v in edges[v]:
                cycles.append(frozenset(component))

    for v in nodes:
        if v not in index:
            visit(v)
    return cycles


def cycle_imports(graph: Mapping[str, Iterable[Import]], cycle: frozenset[str]) -> list[str]:
    """The imports that close a cycle, one line each."""
    return sorted(str(i) for m in sorted(cycle) for i in graph[m] if i.target in cycle)


# ---------------------------------------------------------------------- the tests
FILES = module_files()
GRAPH = import_graph(FILES)


def _module_params():
    for module in sorted(FILES):
        marks = ()
        if module in KNOWN_LAYER_BREAKS:
            marks = pytest.mark.xfail(strict=True, reason=KNOWN_LAYER_BREAKS[module])
        yield pytest.param(module, marks=marks, id=module)


def test_every_module_is_found():
    for name in ("sub60", "sub60.physics.simulate", "sub60.app.layout", "sub60.app.state",
                 "sub60.app.jobs", "sub60.app.server"):
        assert name in FILES, name


@pytest.mark.parametrize("module", _module_params())
def test_module_imports_only_its_layer_and_below(module):
    problems = layer_breaks(module, GRAPH[module])
    if problems:
        pytest.fail("imports against the layers:\n  " + "\n  ".join(problems))


def test_physics_imports_no_app_and_no_ui():
    problems = [str(i) for m, imps in GRAPH.items() if layer_of(m) == PHYSICS for i in imps
                if i.target.startswith("sub60.app") or i.target.split(".")[0] in UI_PACKAGES]
    if problems:
        pytest.fail("physics imports the app or a UI library:\n  " + "\n  ".join(problems))


def test_every_sub60_import_names_an_existing_module():
    """``from sub60.X import ...`` and ``import sub60.X`` name a module that exists (a
    lazy import of a removed module would fail only when its code path runs)."""
    missing = []
    for module, path in FILES.items():
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = ([node.module] if isinstance(node, ast.ImportFrom) and not node.level
                     else [a.name for a in node.names] if isinstance(node, ast.Import) else [])
            missing += [f"{module}:{node.lineno} -> {n}" for n in names
                        if n and n.startswith("sub60") and n not in FILES]
    if missing:
        pytest.fail("imports of modules that do not exist:\n  " + "\n  ".join(missing))


def test_app_uses_the_physics_public_api_only():
    """The app imports `sub60.physics` (its public API), never a physics submodule."""
    problems = [str(i) for m, imps in GRAPH.items() if m.startswith("sub60.app")
                for i in imps if i.target.startswith("sub60.physics.")]
    if problems:
        pytest.fail("app imports physics internals:\n  " + "\n  ".join(problems))


def test_no_unknown_import_cycle_among_app_modules():
    unknown = [c for c in import_cycles(GRAPH) if c not in KNOWN_CYCLES]
    lines = [f"cycle {sorted(c)}: " + "; ".join(cycle_imports(GRAPH, c)) for c in unknown]
    if unknown:
        pytest.fail("import cycles among app modules:\n  " + "\n  ".join(lines))


@pytest.mark.parametrize("cycle", [
    pytest.param(c, marks=pytest.mark.xfail(strict=True, reason=why), id="-".join(sorted(c)))
    for c, why in KNOWN_CYCLES.items()])
def test_known_cycle_is_broken(cycle):
    found = [c for c in import_cycles(GRAPH) if cycle <= c]
    if found:
        pytest.fail("still a cycle: " + "; ".join(cycle_imports(GRAPH, found[0])))


# ---------------------------------------------------------------------- the checker itself
def _graph_of(sources: Mapping[str, str]) -> dict[str, list[Import]]:
    return {m: imports_of(m, s, sources) for m, s in sources.items()}


def test_checker_reports_an_upward_import_and_a_ui_import_with_its_line():
    sources = {
        "sub60.app.state": "import param\n",
        "sub60.app.jobs": "from sub60.app.state import X\n\ndef f():\n"
                          "    from sub60.app.layout import Explorer\n",
        "sub60.app.layout": "import panel as pn\nfrom sub60.app import jobs\n",
        "sub60.app.messages": "from bokeh.models import Div\n",
        "sub60.physics.design": "from sub60.app.state import X\n",
    }
    graph = _graph_of(sources)
    assert layer_breaks("sub60.app.state", graph["sub60.app.state"]) == []
    assert layer_breaks("sub60.app.layout", graph["sub60.app.layout"]) == []
    assert layer_breaks("sub60.app.jobs", graph["sub60.app.jobs"]) == [
        "sub60.app.jobs:4 -> sub60.app.layout: model (UI-free) imports views"]
    assert layer_breaks("sub60.app.messages", graph["sub60.app.messages"]) == [
        "sub60.app.messages:1 -> bokeh.models: a model (UI-free) module imports bokeh"]
    assert layer_breaks("sub60.physics.design", graph["sub60.physics.design"]) == [
        "sub60.physics.design:1 -> sub60.app.state: physics imports model (UI-free)"]
    assert "in no layer" in layer_breaks("sub60.app.newthing", [])[0]


def test_checker_finds_cycles_through_lazy_and_relative_imports():
    sources = {
        "sub60.app.cli": "def main():\n    from sub60.app.snapshot_cli import run\n",
        "sub60.app.snapshot_cli": "from .cli import parse\n",
        "sub60.app.state": "from sub60.physics.design import Design\n",
        "sub60.app.jobs": "from sub60.app import state\n",
    }
    graph = _graph_of(sources)
    assert import_cycles(graph) == [frozenset({"sub60.app.cli", "sub60.app.snapshot_cli"})]
    assert cycle_imports(graph, import_cycles(graph)[0]) == [
        "sub60.app.cli:2 -> sub60.app.snapshot_cli",
        "sub60.app.snapshot_cli:1 -> sub60.app.cli"]
