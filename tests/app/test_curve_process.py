"""The server's curve process: the twin's transfer curve computed beside the tunnel FET's.

Real processes (spawned, as the server starts them) and the real solver. The checks are
the controller's own rules (no source): the curve from the process equals, bit for bit,
the one the session's simulator computes alone (the same continuation from a cold start);
a cancelled task stops; a killed process costs no result (the curve is computed in the
server) and is replaced at the next request.
"""

from __future__ import annotations

import logging
import os
import signal
import threading
import time
from concurrent.futures import CancelledError
from concurrent.futures.process import BrokenProcessPool

import numpy as np
import pytest

from sub60.app import jobs as jobs_module
from sub60.app.curve_process import CurveProcess
from sub60.app.jobs import SessionJobs
from sub60.app.state import ExplorerState
from sub60.physics import Simulator
from sub60.physics.design import check_bias
from tests.app.test_jobs import Recorder

TIMEOUT_S = 120.0


def _curves(listener: Recorder) -> dict:
    """The transfer curves delivered, by key ('tfet', 'twin')."""
    return {e[1]: e[2] for e in listener.named("transfer_solved")}


@pytest.fixture(scope="module")
def process():
    proc = CurveProcess()
    proc.start()
    assert proc.pid() is not None  # started and ready (kernels loaded)
    yield proc
    proc.close()


def _same_curve(a, b) -> None:
    for name in ("vg_V", "id_uA_per_um", "btbt_uA_per_um", "ss_mV_per_dec", "vg_refined_V",
                 "id_refined_uA_per_um"):
        np.testing.assert_array_equal(getattr(a, name), getattr(b, name))
    assert a.metrics == b.metrics


def _state(body_nm: float) -> ExplorerState:
    state = ExplorerState(vg_points=11)
    state.body_thickness_nm = body_nm
    return state


def _held(sim, design, vg, vd) -> bool:
    return sim._cache.get((design, *check_bias(float(vg), float(vd)))) is not None


def _serial_curves(state, design):
    alone = Simulator()
    out = {}
    for key, device in (("tfet", design), ("twin", design.twin())):
        out[key] = alone.transfer_curve(device, state.sweep_gate_voltages(), float(state.vd_V),
                                        ioff_target_uA_per_um=state.ioff_target_uA_per_um,
                                        vdd_V=float(state.vdd_V))
    return alone, out


@pytest.mark.parametrize(("tail_meV", "remote"), [(0.0, "tfet"), (0.0, "twin"), (8.0, "tfet")],
                         ids=["ideal-tfet-there", "ideal-twin-there", "band-tails"])
def test_curves_from_there_equal_the_serial_ones(process, monkeypatch, tail_meV, remote):
    monkeypatch.setattr(jobs_module, "REMOTE_CURVE", remote)
    state = _state(6.5 + tail_meV / 16 + (0.25 if remote == "twin" else 0.0))
    state.tail_energy_source_meV = tail_meV
    sim, listener = Simulator(), Recorder()
    jobs = SessionJobs(state, sim, listener, background=False, curve_process=process)
    design = state.design()
    assert design.is_ideal == (tail_meV == 0)
    there = "twin" if tail_meV else remote  # non-idealities: the tunnel FET stays here
    here = "tfet" if there == "twin" else "twin"
    jobs.request_sweeps(design)
    curves = _curves(listener)
    assert set(curves) == {"tfet", "twin"}
    alone, ref = _serial_curves(state, design)
    for key in ("tfet", "twin"):
        _same_curve(curves[key], ref[key])
    # shown in order: the tunnel FET first, then its twin
    assert [e[1] for e in listener.events if e[0] == "transfer_solved"] == ["tfet", "twin"]
    assert bool([e for e in listener.events if e[0] == "nonideal_solved" and e[1] is not None]
                ) == (tail_meV > 0)
    # what was solved there is not in the session's simulator, what was solved here is
    devices = {"tfet": design, "twin": design.twin()}
    vd = float(state.vd_V)
    vgs, vds = state.output_gate_voltages(), state.output_drain_voltages()
    n_remote = vgs.size if tail_meV else (vgs.size - 1 if remote == "twin" else vgs.size // 2)
    here_outputs = {round(float(v), 6) for v in vgs[n_remote:]}  # their points hold Vd too
    assert all(_held(sim, devices[here], v, vd) for v in state.sweep_gate_voltages())
    assert not any(_held(sim, devices[there], v, vd) for v in state.sweep_gate_voltages()
                   if there == "twin" or round(float(v), 6) not in here_outputs)
    assert not any(_held(sim, design, v, vds[1]) for v in vgs[:n_remote])
    assert all(_held(sim, design, v, vds[1]) for v in vgs[n_remote:])
    # the output curves arrive complete and in gate-voltage order
    outs = [e for e in listener.events if e[0] == "outputs_solved"]
    assert len(outs) == 1 and outs[0][2] is True
    assert [c.vg_V for c in outs[0][1]] == list(vgs)
    # output curves there start cold (no earlier point of the design there), the serial
    # path's from the transfer sweep's last point: equal to Newton's tolerance (1e-8 V)
    for curve in outs[0][1]:
        ref_out = alone.output_curve(design, curve.vg_V, vds)
        np.testing.assert_allclose(curve.id_uA_per_um, ref_out.id_uA_per_um, rtol=1e-6,
                                   atol=1e-12)


def test_a_cancelled_task_stops_and_the_process_serves_the_next(process):
    state = _state(7.5)
    sim = Simulator()
    design = state.design().twin()
    remote = process.transfer_curve(sim, design, np.linspace(-0.4, 0.6, 81), 0.3, 1e-3, 0.3)
    time.sleep(0.3)
    remote.cancel()
    t0 = time.perf_counter()
    with pytest.raises((InterruptedError, CancelledError)):  # stopped, or never started
        remote.future.result(timeout=TIMEOUT_S)
    assert time.perf_counter() - t0 < 10.0  # an 81-point curve alone takes longer
    nxt = process.transfer_curve(sim, design, np.linspace(-0.2, 0.4, 7), 0.3, 1e-3, 0.3)
    assert nxt.future.result(timeout=TIMEOUT_S).vg_V.size == 7


def test_a_process_killed_under_a_task_costs_no_curve_and_is_replaced(caplog):
    proc = CurveProcess()
    proc.start()
    try:
        pid = proc.pid()
        state = ExplorerState(vg_points=81)  # a long twin curve (~0.5 s), killed under way
        state.body_thickness_nm = 8.0
        sim, listener = Simulator(), Recorder()
        jobs = SessionJobs(state, sim, listener, background=False, curve_process=proc)
        design = state.design()
        timer = threading.Timer(0.15, os.kill, (pid, signal.SIGKILL))
        timer.start()
        with caplog.at_level(logging.WARNING, logger="sub60.app"):
            jobs.request_sweeps(design)
        timer.join()
        assert "the curve process died" in caplog.text  # killed under the task
        curves = _curves(listener)
        _, ref = _serial_curves(state, design)
        for key in ("tfet", "twin"):  # computed in the server instead
            _same_curve(curves[key], ref[key])
        new_pid = proc.pid()  # a new process, serving again
        assert new_pid is not None and new_pid != pid
        again = proc.transfer_curve(sim, design.twin(), np.linspace(-0.2, 0.4, 7), 0.3, 1e-3,
                                    0.3)
        assert again.future.result(timeout=TIMEOUT_S).vg_V.size == 7
    finally:
        proc.close()


def _gone(pid: int) -> bool:
    """Whether process ``pid`` has ended (no longer running; a zombie counts as ended)."""
    try:
        with open(f"/proc/{pid}/stat") as f:
            return f.read().rsplit(")", 1)[1].split()[0] in ("Z", "X")
    except OSError:
        return True


def test_a_process_that_hangs_costs_no_curve_and_is_replaced(caplog, monkeypatch):
    """A process that stops answering (here frozen with SIGSTOP) is given the sweep
    thread's own time several times over, at least `REMOTE_MIN_WAIT_S`; then it is killed,
    the curve is computed in the server (the serial numbers), and a new process serves
    the next request."""
    if not hasattr(signal, "SIGSTOP"):
        pytest.skip("no SIGSTOP on this platform")
    monkeypatch.setattr(jobs_module, "REMOTE_MIN_WAIT_S", 1.0)
    proc = CurveProcess()
    proc.start()
    try:
        pid = proc.pid()
        state = _state(9.5)
        sim, listener = Simulator(), Recorder()
        jobs = SessionJobs(state, sim, listener, background=False, curve_process=proc)
        design = state.design()
        os.kill(pid, signal.SIGSTOP)
        with caplog.at_level(logging.WARNING, logger="sub60.app"):
            sweep = threading.Thread(target=jobs.request_sweeps, args=(design,), daemon=True)
            sweep.start()
            sweep.join(TIMEOUT_S)
        assert not sweep.is_alive(), "the sweep still waits for the frozen process"
        assert "the curve process did not answer" in caplog.text
        curves = _curves(listener)
        _, ref = _serial_curves(state, design)
        for key in ("tfet", "twin"):
            _same_curve(curves[key], ref[key])
        outs = [e for e in listener.events if e[0] == "outputs_solved"]
        assert outs[-1][2] is True  # the output curves complete too
        end = time.monotonic() + 30
        while not _gone(pid) and time.monotonic() < end:
            time.sleep(0.05)  # polling a condition (the process's end), not a fixed wait
        assert _gone(pid)  # the hung process was killed, not left behind
        new_pid = proc.pid()
        assert new_pid is not None and new_pid != pid
        assert proc.failures == 1
    finally:
        try:
            os.kill(pid, signal.SIGCONT)
        except OSError:
            pass
        proc.close()


def test_a_process_that_cannot_live_is_given_up_after_three_deaths(caplog):
    """Every new process is killed at once: after `MAX_FAILURES` deaths the server stops
    starting processes and computes every curve itself (still the serial numbers)."""
    from sub60.app import curve_process

    proc = CurveProcess()
    proc.start()
    try:
        state = _state(8.5)
        sim = Simulator()
        with caplog.at_level(logging.WARNING, logger="sub60.app"):
            for _ in range(2 * curve_process.MAX_FAILURES):
                pid = proc.pid()
                if pid is None:  # given up
                    break
                os.kill(pid, signal.SIGKILL)
                time.sleep(0.3)
                remote = proc.transfer_curve(sim, state.design().twin(),
                                             np.linspace(-0.2, 0.4, 7), 0.3, 1e-3, 0.3)
                if remote is not None:  # the dead pool is found at submission or under it
                    try:
                        remote.future.result(timeout=TIMEOUT_S)
                    except BrokenProcessPool:
                        proc.broken(remote)
        assert proc.closed and proc.failures == curve_process.MAX_FAILURES
        assert "every curve is computed in the server" in caplog.text
        listener = Recorder()
        SessionJobs(state, sim, listener, background=False,
                    curve_process=proc).request_sweeps(state.design())
        _, ref = _serial_curves(state, state.design())
        for key in ("tfet", "twin"):
            _same_curve(_curves(listener)[key], ref[key])
    finally:
        proc.close()


def test_a_killed_server_leaves_no_curve_process():
    """`sub60 serve` killed (SIGKILL: no clean-up runs) right after it listens, while its
    curve process may still be starting: the process ends by itself within seconds
    (it watches the server's id, given by the server; a process that read its parent's
    id itself after the server had died would wait for good). Stated rule of the app."""
    from tests.app.conftest import free_port, start_server, stop_server

    port = free_port()
    proc = start_server(port)
    try:
        children: list[int] = []
        end = time.monotonic() + 60
        while not children and time.monotonic() < end:
            for task in os.listdir(f"/proc/{proc.pid}/task"):
                with open(f"/proc/{proc.pid}/task/{task}/children") as f:
                    children += [int(k) for k in f.read().split()
                                 if "spawn_main" in _cmdline(int(k))]
            time.sleep(0.01)  # polling a condition (the child's start), not a fixed wait
        assert children, "the server started no curve process"
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(timeout=30)
        end = time.monotonic() + 30
        while not all(_gone(c) for c in children) and time.monotonic() < end:
            time.sleep(0.05)
        assert all(_gone(c) for c in children), "the curve process outlived its server"
    finally:
        for c in children:
            if not _gone(c):
                os.kill(c, signal.SIGKILL)
        stop_server(proc)


def _cmdline(pid: int) -> str:
    try:
        with open(f"/proc/{pid}/cmdline", "rb") as f:
            return f.read().replace(b"\0", b" ").decode(errors="replace")
    except OSError:
        return ""
