"""The built wheel works on its own (CI's install smoke test).

A wheel is built from a copy of the checkout (`pip wheel --no-deps`), installed with its
dependencies into a fresh virtual environment in a temporary folder outside the checkout,
and the `sub60` command is run there from a folder holding a user's own decoy `app/` and
`physics.py` (both raise ImportError when imported): `--help`, a snapshot export of a
preset, a transfer curve of a preset's design, and `serve`, whose page answers 200 and
whose session document carries the packaged stylesheet. Nothing named `app` or `physics`
may land at the top of site-packages. Common practice for Python packaging, no source.

Dependencies come from pip's configured indexes (on the development machine a fresh
install takes ~30 s); the whole module takes about a minute.
"""

from __future__ import annotations

import http.client
import json
import os
import shutil
import subprocess
import sys
import time
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
PRESET = "low-power-switch"
#: A rule found only in assets/style.css (the metrics table's tunnel-FET heading colour).
STYLE_RULE = "table.metrics th.device.tfet"
DECOY = 'raise ImportError("decoy: a user\'s own module was imported instead of sub60\'s")\n'


def _run(cmd: list[str], cwd: Path, env: dict[str, str], timeout: float = 300.0
         ) -> subprocess.CompletedProcess:
    proc = subprocess.run(cmd, cwd=cwd, env=env, capture_output=True, text=True, timeout=timeout)
    assert proc.returncode == 0, (f"{' '.join(map(str, cmd))} exited with {proc.returncode}\n"
                                  f"stdout:\n{proc.stdout[-3000:]}\nstderr:\n{proc.stderr[-3000:]}")
    return proc


def _clean_env(venv: Path) -> dict[str, str]:
    """The environment of a user who activated the fresh venv: no checkout on any path."""
    env = {k: v for k, v in os.environ.items()
           if k not in {"PYTHONPATH", "PYTHONHOME", "VIRTUAL_ENV", "PYTHONSTARTUP"}}
    bindir = venv / ("Scripts" if os.name == "nt" else "bin")
    env.update(PATH=str(bindir) + os.pathsep + env.get("PATH", ""), VIRTUAL_ENV=str(venv),
               PYTHONNOUSERSITE="1", OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1",
               PYTHONDONTWRITEBYTECODE="1")
    return env


@pytest.fixture(scope="module")
def installed(tmp_path_factory) -> dict:
    """Wheel built, fresh venv made and the wheel installed; the folders and timings."""
    base = tmp_path_factory.mktemp("wheel-smoke")
    assert ROOT not in base.parents
    timings: dict[str, float] = {}
    # build from a copy, so no build/ or *.egg-info (and no stale build/lib) is involved
    src = base / "src"
    shutil.copytree(ROOT, src, ignore=shutil.ignore_patterns(
        ".git", "build", "dist", "*.egg-info", "__pycache__", ".pytest_cache", ".ruff_cache",
        ".hypothesis", "out"))
    wheels = base / "wheels"
    t0 = time.monotonic()
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(wheels), str(src)],
         cwd=base, env=dict(os.environ))
    timings["build wheel"] = time.monotonic() - t0
    (wheel,) = wheels.glob("sub60-*.whl")

    venv = base / "venv"
    t0 = time.monotonic()
    _run([sys.executable, "-m", "venv", str(venv)], cwd=base, env=dict(os.environ))
    env = _clean_env(venv)
    python = venv / "bin" / "python"
    _run([str(python), "-m", "pip", "install", "-q", "--disable-pip-version-check", "--no-compile",
          str(wheel)],
         cwd=base, env=env, timeout=900)
    timings["fresh venv + install"] = time.monotonic() - t0

    work = base / "work"                    # the user's folder, with decoys
    (work / "app").mkdir(parents=True)
    (work / "app" / "__init__.py").write_text(DECOY)
    (work / "physics.py").write_text(DECOY)
    site = Path(_run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                     cwd=work, env=env).stdout.strip())
    print("wheel smoke timings [s]:", {k: round(v, 1) for k, v in timings.items()})
    return {"wheel": wheel, "venv": venv, "python": python, "sub60": venv / "bin" / "sub60",
            "env": env, "work": work, "site": site}


def test_wheel_holds_one_package_and_the_assets(installed):
    names = zipfile.ZipFile(installed["wheel"]).namelist()
    tops = {n.split("/")[0] for n in names}
    assert {t for t in tops if not t.endswith(".dist-info")} == {"sub60"}, tops
    assert "sub60/assets/style.css" in names
    assert f"sub60/assets/presets/{PRESET}.json" in names
    assert "sub60/assets/measured/demo-tfet-transfer.csv" in names  # the fit's demo curve


def test_site_packages_has_no_top_level_app_or_physics(installed):
    site = installed["site"]
    for name in ("app", "physics", "assets"):
        assert not (site / name).exists() and not (site / f"{name}.py").exists(), name
    assert (site / "sub60" / "assets" / "style.css").is_file()


def test_sub60_is_imported_from_the_venv_not_the_checkout_or_cwd(installed):
    code = ("import sub60, sub60.app.cli, sub60.physics.simulate, sub60.assets as a, sys\n"
            "from importlib.resources import files\n"
            "print(sub60.__file__); print(sub60.app.cli.__file__);"
            " print(sub60.physics.simulate.__file__)\n"
            "print(len(files(a).joinpath('style.css').read_text()))\n"
            "print('app' in sys.modules, 'physics' in sys.modules)")
    out = _run([str(installed["python"]), "-c", code], cwd=installed["work"],
               env=installed["env"]).stdout.split("\n")
    site = str(installed["site"])
    for path in out[:3]:
        assert path.startswith(site + os.sep), (path, site)
        assert str(ROOT) not in path
    assert int(out[3]) > 500                 # the packaged stylesheet is not empty
    assert out[4] == "False False"           # the decoys in cwd were never imported


def test_cli_help(installed):
    out = _run([str(installed["sub60"]), "--help"], cwd=installed["work"], env=installed["env"])
    for command in ("serve", "transfer", "snapshot"):
        assert command in out.stdout


def test_snapshot_export_of_a_preset(installed):
    out = installed["work"] / "preset.zip"
    _run([str(installed["sub60"]), "snapshot", "export", "--preset", PRESET, "--out", str(out)],
         cwd=installed["work"], env=installed["env"])
    with zipfile.ZipFile(out) as z:
        assert z.testzip() is None and len(z.namelist()) > 1
    check = _run([str(installed["sub60"]), "snapshot", "check", str(out)],
                 cwd=installed["work"], env=installed["env"])
    assert check.returncode == 0


def test_transfer_on_a_preset_design(installed):
    preset = json.loads((ROOT / "assets" / "presets" / f"{PRESET}.json").read_text())
    design = installed["work"] / "design.json"
    design.write_text(json.dumps(preset["design"]))
    out = _run([str(installed["sub60"]), "transfer", "--design", str(design),
                "--vg", "-0.1:0.3:5", "--vd", "0.3"], cwd=installed["work"], env=installed["env"])
    result = json.loads(out.stdout)
    assert result["design"]["material"] == preset["design"]["material"]
    assert len(result["vg_V"]) == 5


_STYLESHEET_PROBE = """
import json, sys
from playwright.sync_api import sync_playwright
chromium, args, url, rule = sys.argv[1], json.loads(sys.argv[2]), sys.argv[3], sys.argv[4]
with sync_playwright() as p:
    browser = p.chromium.launch(executable_path=chromium, headless=True, args=args)
    try:
        tab = browser.new_page()
        tab.goto(url, wait_until="domcontentloaded", timeout=90_000)
        tab.wait_for_function("() => window.Bokeh && Bokeh.documents.length > 0",
                              timeout=90_000)
        print(tab.evaluate('''rule => [...Bokeh.documents[0]._all_models.values()]
            .some(m => (m.stylesheets || []).some(
                s => (typeof s === 'string' ? s : (s.css || '')).includes(rule)))''', rule))
    finally:
        browser.close()
"""


def test_serve_answers_with_the_packaged_stylesheet(installed):
    """`sub60 serve` answers 200, and the page it builds in Chromium carries the packaged
    stylesheet (the session document comes over the websocket, so a browser is needed;
    skipped without one unless SUB60_REQUIRE_BROWSER=1)."""
    from tests.app.conftest import (
        CHROMIUM,
        CHROMIUM_ARGS,
        browser_or_skip,
        free_port,
        stop_server,
        wait_for_port,
    )

    port = free_port()
    proc = subprocess.Popen([str(installed["sub60"]), "serve", "--port", str(port)],
                            cwd=installed["work"], env=installed["env"],
                            stdout=subprocess.PIPE, stderr=subprocess.STDOUT)
    try:
        wait_for_port(port, proc)
        conn = http.client.HTTPConnection("127.0.0.1", port, timeout=60)
        conn.request("GET", "/")
        response = conn.getresponse()
        page = response.read().decode()
        conn.close()
        assert response.status == 200
        assert "sub60" in page and "static/js/bokeh" in page
        browser_or_skip()
        # in its own process: the app tests' session-wide Playwright may be running here
        probe = subprocess.run([sys.executable, "-c", _STYLESHEET_PROBE, CHROMIUM,
                                json.dumps(CHROMIUM_ARGS), f"http://127.0.0.1:{port}/",
                                STYLE_RULE], capture_output=True, text=True, timeout=300)
        assert probe.returncode == 0, probe.stderr[-3000:]
        found = probe.stdout.strip().splitlines()[-1] == "True"
        assert found, "the packaged stylesheet is not in the page"
    finally:
        stop_server(proc)
