"""Latency benchmark of the served explorer, measured in the browser (a script, not a test).

    python tests/bench_app.py [--moves 20] [--designs 10] [--toggles 6] [--opens 4]
                              [--port PORT | --url http://127.0.0.1:PORT/]

Without --url it serves the app itself on a free 127.0.0.1 port (subprocess, one BLAS
thread) and stops it at the end. In headless Chromium it then

1. sets the gate-voltage slider's value through its Bokeh model (as a slider release
   does: value and value_throttled) to 20 fresh values and times, with performance.now()
   in the page, until the band diagram's data source holds the new bias point (polled
   every ~1 ms) and until the next animation frame after it (the redraw);
2. sets the body-thickness slider to fresh values and times until the band diagram, the
   tunnel FET's transfer curve, both complete transfer curves with their metrics, and
   the output curves have arrived.

3. clicks "Presentation mode" on and off and times, from just before the click, until the
   controls are hidden (shown), the header has its presentation class, and every figure's
   drawn width and height have stayed the same over three animation frames (the time is
   that of the first of those frames);
4. opens the page afresh (new browser page, new session) and times until the first
   band diagram, both transfer curves with their metrics, and the output curves are
   complete (`open_app`), with the server's CPU seconds per open.

It prints the median and 95th percentile of each.
"""

from __future__ import annotations

import argparse
import statistics
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from tests.app.conftest import (  # noqa: E402
    CHROMIUM,
    CHROMIUM_ARGS,
    free_port,
    open_app,
    start_server,
    stop_server,
)

BENCH_JS = """
window.sub60bench = {
  poll(test) {                       // resolves with performance.now() when test() holds
    return new Promise((resolve, reject) => {
      const t_end = performance.now() + 60000;
      const step = () => {
        if (test()) { resolve(performance.now()); }
        else if (performance.now() > t_end) { reject(new Error('timeout')); }
        else { setTimeout(step, 1); }
      };
      step();
    });
  },
  widths() {                         // every live figure's drawn width and height [px]
    return ['band_plot', 'spectrum_plot', 'transmission_plot', 'transfer_plot', 'map_plot',
            'output_plot', 'swing_plot'].map(n => {
      const b = Bokeh.index.find_one(sub60.model(n)).bbox; return [b.width, b.height]; });
  },
  async looks(on) {                  // resolves at the first frame of the toggle's settled
    // looks: controls hidden or shown, header class, and every figure's width and height
    // unchanged over three frames (figures that follow the window are re-laid out by the
    // browser)
    await this.poll(() => (on ? sub60.presenting() : sub60.desk()));
    let t = await this.frame();
    let last = JSON.stringify(this.widths());
    let same = 0;
    while (same < 3) {
      const t2 = await this.frame();
      const now = JSON.stringify(this.widths());
      if (now === last) { same += 1; } else { same = 0; t = t2; last = now; }
    }
    return t;
  },
  frame() { return new Promise(r => requestAnimationFrame(() => r(performance.now()))); },
  release(cls, v) {                  // what a slider release sends
    const s = sub60.sliderOf(cls);
    s.value = v;
    s.value_throttled = v;
  },
  async bandMove(v) {
    const src = sub60.model('band_source');
    const marker = sub60.model('vg_marker_source');
    const old = src.data;
    const t0 = performance.now();
    this.release('ctl-vg_V', v);
    const t1 = await this.poll(() => src.data !== old && Math.abs(marker.data.vg[0] - v) < 1e-9);
    const t2 = await this.frame();
    return [t1 - t0, t2 - t0];
  },
  async designChange(t_nm, n) {
    const map = sub60.model('map_source');
    const tfet = sub60.model('transfer_tfet_source');
    const oldTfet = tfet.data;
    const out0 = sub60.model('output_source_0');
    const oldOut = out0.data;
    const height = (t) => Math.abs(map.data.dh[0] - (t + 4)) < 1e-9;  // 2 nm oxide each side
    const t0 = performance.now();
    this.release('ctl-body_thickness_nm', t_nm);
    const t1 = await this.poll(() => height(t_nm));
    const t2 = await this.poll(() => tfet.data !== oldTfet && tfet.data.vg.length === n &&
      Array.from(tfet.data.ss).some(Number.isFinite));
    const t3 = await this.poll(() => sub60.curvesDone(n));
    const t4 = await this.poll(() => out0.data !== oldOut && sub60.outputsDone());
    return [t1 - t0, t2 - t0, t3 - t0, t4 - t0];
  },
};
"""


def _stats(samples: list[float]) -> str:
    if not samples:
        return "not measured"
    s = sorted(samples)
    p95 = s[min(len(s) - 1, max(0, round(0.95 * (len(s) - 1))))]
    return (f"median {statistics.median(s):7.1f} ms   p95 {p95:7.1f} ms   "
            f"min {s[0]:7.1f}   max {s[-1]:7.1f}   (n = {len(s)})")


def _cpu_s(pid: int | None) -> float:
    """User + system CPU seconds so far of a process and its live children (the server's
    curve process; Linux /proc), NaN if unknown."""
    if pid is None:
        return float("nan")
    import os

    def one(p: int) -> float:
        try:
            fields = open(f"/proc/{p}/stat").read().rsplit(")", 1)[1].split()
        except OSError:  # gone meanwhile
            return 0.0
        return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")

    total = one(pid)
    for task in os.listdir(f"/proc/{pid}/task"):
        try:
            kids = open(f"/proc/{pid}/task/{task}/children").read().split()
        except OSError:
            continue
        total += sum(one(int(k)) for k in kids)
    return total


def run(url: str, moves: int, designs: int, toggles: int = 6, opens: int = 4,
        server_pid: int | None = None) -> None:
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, headless=True, args=CHROMIUM_ARGS)
        page, _, errors = open_app(browser, url)
        page.evaluate(BENCH_JS)
        band, band_frame = [], []
        for k in range(moves):
            vg = round(0.305 + 0.01 * k, 4)  # off the 0.02 V sweep grid: every point is new
            t_data, t_frame = page.evaluate("(v) => sub60bench.bandMove(v)", vg)
            band.append(t_data)
            band_frame.append(t_frame)
        if moves:
            page.wait_for_function("() => sub60.allDone(41)", timeout=120_000)
        d_band, d_tfet, d_all, d_out = [], [], [], []
        for k in range(designs):
            t_nm = round(7.5 + 0.5 * k, 3)
            a, b, c, d = page.evaluate("(t) => sub60bench.designChange(t, 41)", t_nm)
            d_out.append(d)
            d_band.append(a)
            d_tfet.append(b)
            d_all.append(c)
            page.wait_for_function("() => sub60.allDone(41)", timeout=120_000)
        toggle = []
        button = page.get_by_role("button", name="Presentation mode")
        for k in range(toggles):
            t0 = page.evaluate("() => performance.now()")
            button.click()  # as a user does (the button is inside Bokeh's shadow DOM)
            toggle.append(page.evaluate("(on) => sub60bench.looks(on)", k % 2 == 0) - t0)
        page.close()
        import time

        open_s, open_cpu = [], []
        for _k in range(opens):
            time.sleep(10)  # the last page's session has ended (8 s without a connection)
            c0, t0 = _cpu_s(server_pid), time.perf_counter()
            p2, _, errs = open_app(browser, url)
            open_s.append(1000 * (time.perf_counter() - t0))
            open_cpu.append(1000 * (_cpu_s(server_pid) - c0))
            errors += errs
            p2.close()
        browser.close()
    print("sub60 explorer latency, measured in headless Chromium (performance.now())")
    print(f"  Vg slider release -> band data in page : {_stats(band)}")
    print(f"  Vg slider release -> next frame drawn  : {_stats(band_frame)}")
    print(f"  design change -> band diagram          : {_stats(d_band)}")
    print(f"  design change -> tunnel FET curve      : {_stats(d_tfet)}")
    print(f"  design change -> both curves + metrics : {_stats(d_all)}")
    print(f"  design change -> output curves too     : {_stats(d_out)}")
    print(f"  presentation toggle -> frame drawn     : {_stats(toggle)}")
    print(f"  page open -> all curves done           : {_stats(open_s)}")
    if server_pid is not None:
        print(f"  page open: server CPU                  : {_stats(open_cpu)}")
    if errors:
        print("page errors:", *errors, sep="\n  ")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--url", help="an already served explorer (default: serve one here)")
    ap.add_argument("--moves", type=int, default=20, help="gate-voltage moves [-]")
    ap.add_argument("--designs", type=int, default=10, help="design changes [-]")
    ap.add_argument("--toggles", type=int, default=6, help="presentation toggles [-]")
    ap.add_argument("--opens", type=int, default=4, help="fresh page opens [-]")
    ap.add_argument("--port", type=int, default=0, help="port of the served app (default: free)")
    a = ap.parse_args()
    if a.url:
        run(a.url, a.moves, a.designs, a.toggles, a.opens)
        return 0
    port = a.port or free_port()
    proc = start_server(port)
    try:
        run(f"http://127.0.0.1:{port}/", a.moves, a.designs, a.toggles, a.opens, proc.pid)
    finally:
        stop_server(proc)
    return 0


if __name__ == "__main__":
    sys.exit(main())
