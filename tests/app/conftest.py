"""Fixtures of the app tests: a served explorer on a free loopback port and a headless
Chromium page on it (browser tests skip when /usr/bin/chromium is missing, unless
SUB60_REQUIRE_BROWSER=1, then they fail).

The helpers here are also used by ``tests/bench_app.py``.
"""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import tempfile
import time
from collections.abc import Iterator
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update",
                 "--disable-sync"]
VIEWPORT = {"width": 1600, "height": 1000}

# JavaScript run in the page: find Bokeh models by name or css class, read their data.
JS_HELPERS = """
window.sub60 = {
  doc() { return Bokeh.documents[0]; },
  model(name) { return this.doc().get_model_by_name(name); },
  byClass(cls) {
    return [...this.doc()._all_models.values()].find(
      m => Array.isArray(m.css_classes) && m.css_classes.includes(cls));
  },
  data(name) {
    const d = this.model(name).data; const out = {};
    for (const k of Object.keys(d)) { out[k] = Array.from(d[k], v => (v === null ? NaN : v)); }
    return out;
  },
  sliderOf(cls) {            // the Bokeh slider inside a control (editable or plain)
    const root = this.byClass(cls);
    if (root.start !== undefined) { return root; }
    const stack = [root];
    while (stack.length) {
      const m = stack.shift();
      if (m.type && m.type.endsWith('Slider') && m.start !== undefined) { return m; }
      for (const c of (m.children || [])) { stack.push(Array.isArray(c) ? c[0] : c); }
    }
    return null;
  },
  metricsHTML() {
    const t = document.createElement('textarea');
    t.innerHTML = this.byClass('metrics-strip').text;
    return t.value;
  },
  metrics() {                 // {device: {metric: value|null}}, null while stale
    const html = this.metricsHTML();
    if (!html.includes('class="fresh"')) { return null; }
    const doc = new DOMParser().parseFromString(html, 'text/html');
    const out = {};
    for (const td of doc.querySelectorAll('td[data-metric]')) {
      const dev = td.dataset.device; out[dev] = out[dev] || {};
      out[dev][td.dataset.metric] = td.dataset.value === '' ? null : Number(td.dataset.value);
    }
    return out;
  },
  curvesDone(n) {
    const f = this.model('transfer_plot');
    return this.model('transfer_tfet_source').data.vg.length === n &&
      this.model('transfer_twin_source').data.vg.length === n &&
      f.title.text === 'Transfer curve' && this.metrics() !== null;
  },
  cards() {                   // the sidebar's cards (css class control-group)
    return [...this.doc()._all_models.values()].filter(
      m => Array.isArray(m.css_classes) && m.css_classes.includes('control-group'));
  },
  openCards() {               // open every card, as clicking each header does
    for (const c of this.cards()) { if (c.collapsed) { c.collapsed = false; } }
  },
  cardsFilled() {             // a card that started collapsed gets its controls when opened
    return this.cards().every(c => !c.collapsed && c.children.length > 1);
  },
  outputsDone() {             // output title complete and every listed curve's data in
    // (the data arrive in a binary message of their own, which may follow the title's)
    const items = this.model('output_legend').items;
    return !this.model('output_plot').title.text.includes('updating') &&
      items.every((item, k) =>
        !item.visible || this.model('output_source_' + k).data.vd.length > 0);
  },
  titleSize() {               // the header's title as drawn [px] (grows in presentation)
    const el = Bokeh.index.find_one(this.byClass('sub60-header')).el;
    const title = el.shadowRoot.querySelector('.title');
    return parseFloat(getComputedStyle(title).fontSize);
  },
  presenting() {              // presentation look: controls not shown, header enlarged
    const side = Bokeh.index.find_one(this.byClass('sub60-sidebar'));
    return this.byClass('sub60-page').css_classes.includes('presenting') &&
      this.titleSize() > 24 && side.el.getBoundingClientRect().width === 0;
  },
  desk() {                    // desk look: controls shown, header as usual
    const side = Bokeh.index.find_one(this.byClass('sub60-sidebar'));
    return !this.byClass('sub60-page').css_classes.includes('presenting') &&
      this.titleSize() < 24 && side.el.getBoundingClientRect().width > 0;
  },
  allDone(n) {
    return this.curvesDone(n) && this.outputsDone();
  },
};
"""


def free_port() -> int:
    """A TCP port free on 127.0.0.1 at the time of the call."""
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def wait_for_port(port: int, proc: subprocess.Popen, timeout_s: float = 90.0) -> None:
    """Block until the server accepts connections (or its process dies)."""
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise RuntimeError(f"sub60 serve exited with {proc.returncode}:\n{server_log(proc)}")
        try:
            with socket.create_connection(("127.0.0.1", port), timeout=0.5):
                return
        except OSError:
            time.sleep(0.05)  # polling a condition (the port), not a fixed wait
    raise TimeoutError(f"sub60 serve did not listen on port {port} within {timeout_s} s")


def server_log(proc: subprocess.Popen, tail_chars: int = 4000) -> str:
    """The end of what a server started by `start_server` printed ('' if unknown)."""
    path = getattr(proc, "log_path", None)
    if path is None or not os.path.exists(path):
        return ""
    with open(path, "rb") as f:
        return f.read().decode(errors="replace")[-tail_chars:]


def start_server(port: int) -> subprocess.Popen:
    """`python -m sub60.app serve` on 127.0.0.1:port, one BLAS thread, its output in a
    log file (``proc.log_path``, see `server_log`). Never a pipe: a pipe nobody reads
    fills after 64 KiB of log lines and then blocks the server in the middle of a run."""
    env = dict(os.environ, OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1",
               PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    fd, log_path = tempfile.mkstemp(prefix="sub60-serve-", suffix=".log")
    with os.fdopen(fd, "wb") as log:
        proc = subprocess.Popen([sys.executable, "-m", "sub60.app", "serve", "--port",
                                 str(port), "--host", "127.0.0.1"], cwd=ROOT, env=env,
                                stdout=log, stderr=subprocess.STDOUT)
    proc.log_path = log_path
    try:
        wait_for_port(port, proc)
    except Exception:
        proc.kill()
        raise
    return proc


def stop_server(proc: subprocess.Popen) -> None:
    """Stop the server process started by `start_server` (by its own handle); its log
    file goes with it."""
    if proc.poll() is None:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait(timeout=10)
    path = getattr(proc, "log_path", None)
    if path is not None and os.path.exists(path):
        os.unlink(path)


#: How long a page may take to open in a test [ms]: a generous guard against a hang, not
#: a speed check (a page opens in about 10 s on a quiet 2-core machine; CI machines are
#: shared and slower). SUB60_PAGE_TIMEOUT_S overrides it.
PAGE_TIMEOUT_MS = 1000 * float(os.environ.get("SUB60_PAGE_TIMEOUT_S", "240"))

PAGE_STATE_JS = """() => { try { return {
  transfer: sub60.model('transfer_plot').title.text,
  output: sub60.model('output_plot').title.text,
  points: [sub60.model('transfer_tfet_source').data.vg.length,
           sub60.model('transfer_twin_source').data.vg.length],
  fresh: sub60.metrics() !== null }; } catch (e) { return String(e); } }"""


def open_app(browser, url: str, timeout_ms: float = PAGE_TIMEOUT_MS):
    """A new page on the served app, its Bokeh document loaded and the first transfer
    and output curves complete; returns (page, requests, errors). A page that does not
    get there fails with what it showed."""
    page = browser.new_page(viewport=VIEWPORT)
    requests: list[str] = []
    errors: list[str] = []
    page.on("request", lambda r: requests.append(r.url))
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
    page.goto(url, wait_until="domcontentloaded", timeout=timeout_ms)
    page.wait_for_function("() => window.Bokeh && Bokeh.documents.length > 0 && "
                           "Bokeh.documents[0].get_model_by_name('band_source') != null",
                           timeout=timeout_ms)
    page.evaluate(JS_HELPERS)
    try:
        page.wait_for_function("() => sub60.allDone(41)", timeout=timeout_ms)
    except Exception as exc:
        shown = page.evaluate(PAGE_STATE_JS)
        raise AssertionError(f"the page did not complete its first curves: {shown}; "
                             f"page errors: {errors}") from exc
    return page, requests, errors


def open_cards(page, timeout_ms: float = PAGE_TIMEOUT_MS) -> None:
    """Open every card of the sidebar and wait for their controls (cards that start
    collapsed are filled by the server when first opened: `app.controls.folded_card`)."""
    page.evaluate("() => sub60.openCards()")
    page.wait_for_function("() => sub60.cardsFilled()", timeout=timeout_ms)


#: The page's error banner text ('' while hidden).
ERROR_TEXT = "() => { const a = sub60.byClass('sub60-error'); return a.visible ? a.text : ''; }"


def type_into(page, css: str, text: str) -> None:
    """Type ``text`` into the box of the widget with CSS class ``css`` as a user does
    (click, select all, type key by key) and confirm with Enter."""
    entry = page.locator(f".{css} input")
    entry.click()
    entry.press("Control+a")
    entry.type(text)
    entry.press("Enter")


def url_query(page) -> dict[str, str]:
    """The page address's query fields (first value of each)."""
    from urllib.parse import parse_qs, urlsplit

    return {k: v[0] for k, v in parse_qs(urlsplit(page.url).query).items()}


def browser_or_skip():
    """The Playwright Chromium launcher, or skip (fail with SUB60_REQUIRE_BROWSER=1)."""
    required = os.environ.get("SUB60_REQUIRE_BROWSER") == "1"
    reason = None
    if not os.path.exists(CHROMIUM):
        reason = f"headless Chromium not found at {CHROMIUM} (apt-get install chromium)"
    else:
        try:
            import playwright.sync_api  # noqa: F401
        except ImportError:
            reason = "the playwright package is not installed (pip install playwright)"
    if reason:
        if required:
            pytest.fail(f"SUB60_REQUIRE_BROWSER=1 but {reason}")
        pytest.skip(reason)


@pytest.fixture(scope="session")
def browser() -> Iterator[object]:
    browser_or_skip()
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, headless=True, args=CHROMIUM_ARGS)
        yield b
        b.close()


@pytest.fixture(scope="session")
def app_url(browser) -> Iterator[str]:
    port = free_port()
    proc = start_server(port)
    try:
        yield f"http://127.0.0.1:{port}/"
    finally:
        stop_server(proc)
