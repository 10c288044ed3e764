"""Fit a few process knobs of a design to measured transfer curves.

The knobs (`FIT_KNOBS`) are the non-idealities a designer suspects behind a measured
swing: a shift of the gate work function, the interface-trap density, the band-tail
(Urbach) energies, the lifetime of trap-assisted generation, the access resistances and
the junction abruptness. `fit_transfer` adjusts the free ones by bounded least squares
on log10(I_d) (scipy.optimize.least_squares, trust-region reflective [1]_):

    minimise  sum_i r_i^2,   r_i = log10 I_model(V_g,i; p) - log10 I_meas,i          (1)

over the measured points of every transfer curve (I_meas > 0 and above an optional
floor). A log-normal measurement error of constant relative size gives r_i of constant
variance, so the points are weighted alike.

Uncertainty. At the optimum, with J = dr/dp (m points, n knobs) and s^2 = sum r^2 /
(m - n), the covariance of the knobs is

    C = s^2 (J^T J)^-1                                                              (2)

(the Gauss-Newton approximation of the inverse Hessian; e.g. Press et al., Numerical
Recipes, 3rd ed., sec. 15.5, from memory; scipy's least_squares documentation states that
J^T J is the Gauss-Newton approximation of the Hessian of the cost). Standard
uncertainties are sqrt(C_jj), correlations C_jk / sqrt(C_jj C_kk). Log-scaled knobs
(trap density, lifetime) are fitted as log10 of the value; their uncertainty is in
decades. The inverse is taken through the singular values of J with scaled columns:
a pair of knobs with |correlation| > `CORRELATION_LIMIT`, a knob with no effect on the
curves, or a knob whose uncertainty spans its allowed range is reported as not
determined, instead of a value that means nothing.

Speed. Only V_g - Phi_m enters the gate's boundary condition
(`sub60.physics.structure.problem_at_bias`), so a work-function shift dPhi is an exact
shift of the gate-voltage axis, I(V_g; Phi + dPhi) = I(V_g - dPhi; Phi): the model is
solved once on a lattice of gate voltages (`model_step_V`, continuation from point to
point, points kept in the `Simulator` cache), log10 I is interpolated by a cubic
spline (smooth first derivative, which the Jacobian uses), and the shift and its
derivative cost no solve; the fit also starts from the best shift for the start values
of the other knobs (a scan on the spline). The Jacobian of the other knobs is a
one-sided difference, one curve per knob. A curve whose design differs from one already
solved only in band tails or trap-assisted lifetime (the tail column of the Jacobian)
takes that design's electrostatics as they are (these knobs act on the current alone in
this model, `sub60.physics.simulate.CURRENT_ONLY_FIELDS`), and any other new design
starts each point's Newton iteration from the last design's solution at the same bias.
The fit stops once the Gauss-Newton step from the present point, dp = -J^+ r, would
move every solved knob by less than `SETTLED` (0.1) of its standard uncertainty (eq. 2);
the shift then takes its own Gauss-Newton steps on the splines (no solve). Nothing runs
in parallel inside a fit: the
solver's threads contend for the same cores (two curves on two threads took far longer
than one after the other, measured in this work).

References
----------
.. [1] M. A. Branch, T. F. Coleman and Y. Li, "A subspace, interior, and conjugate
   gradient method for large-scale bound-constrained minimization problems", SIAM J.
   Sci. Comput. 21, 1 (1999) (the method of scipy's ``least_squares(method='trf')``, as
   its documentation cites).
"""

from __future__ import annotations

import math
import time
from collections import OrderedDict
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from sub60.physics.design import FIELD_RANGES, VG_RANGE_V, Design
from sub60.physics.measured import MeasuredData, MeasuredTransfer
from sub60.physics.metrics import Metrics, figures_of_merit
from sub60.physics.tables import table

#: |correlation| above which two knobs are reported as not separately identifiable
#: (common practice puts the alarm between 0.95 and 0.99; no source).
CORRELATION_LIMIT = 0.95
#: Step of the one-sided differences of the Jacobian, as a fraction of each knob's range
#: (internal units: decades for log knobs) [-] (a choice of this model: well above the
#: solver's round-off, well below the curvature of log I in the knobs).
FD_STEP = 2e-3
#: The fit stops when the next Gauss-Newton step would move every knob by less than this
#: fraction of its standard uncertainty (a choice of this model: the remaining change is
#: far inside the reported uncertainty, and every further step costs one model curve per
#: solved knob plus one).
SETTLED = 0.1
#: Smallest current of the model lattice kept in log10 [µA/µm] (a current below it is
#: numerical underflow, not a prediction).
_LOG_FLOOR_UA_PER_UM = 1e-30


@dataclass(frozen=True)
class FitKnob:
    """One adjustable knob of a fit.

    Parameters
    ----------
    name : str
        the knob's name (a key of `FIT_KNOBS`)
    fields : tuple of str
        design fields it sets (all to the same value)
    unit : str
        unit of the value
    low, high : float
        default bounds of the value (of the shift, for an offset knob)
    log : bool
        fitted as log10 of the value (uncertainty in decades)
    offset : bool
        the value is a shift from the design's own value (the work function)
    start : float
        starting value when the design's own is outside the bounds
    help : str
        one line for the command line and the page
    """

    name: str
    fields: tuple[str, ...]
    unit: str
    low: float
    high: float
    log: bool = False
    offset: bool = False
    start: float = 0.0
    help: str = ""

    def to_internal(self, value: float) -> float:
        return math.log10(value) if self.log else float(value)

    def from_internal(self, u: float) -> float:
        return 10.0 ** u if self.log else float(u)


#: The knobs a fit can free, by name. Bounds: inside the design's allowed ranges
#: (`FIELD_RANGES`), wide enough for processed III-V and Si devices (engineering choice).
FIT_KNOBS: dict[str, FitKnob] = {k.name: k for k in (
    FitKnob("workfunction_shift", ("gate_workfunction_eV",), "eV", -0.4, 0.4, offset=True,
            help="shift of the gate work function from the design's (exact shift of the "
                 "gate-voltage axis; no re-solve)"),
    FitKnob("trap_density", ("interface_trap_density_cm2eV",), "cm^-2 eV^-1", 1e10, 1e14,
            log=True, start=1e12, help="interface-trap density (log-scaled)"),
    FitKnob("tail_energy", ("tail_energy_source_meV", "tail_energy_channel_meV"), "meV",
            1.0, 100.0, start=20.0, help="Urbach energy of both band tails (source and "
                                         "channel set equal)"),
    FitKnob("tail_source", ("tail_energy_source_meV",), "meV", 1.0, 100.0, start=20.0,
            help="Urbach energy of the source valence-band tail"),
    FitKnob("tail_channel", ("tail_energy_channel_meV",), "meV", 1.0, 100.0, start=20.0,
            help="Urbach energy of the channel conduction-band tail"),
    FitKnob("tat_lifetime", ("tat_lifetime_ns",), "ns", 1e-2, 1e5, log=True, start=10.0,
            help="lifetime of trap-assisted generation (log-scaled)"),
    FitKnob("series_resistance", ("source_resistance_ohm_um", "drain_resistance_ohm_um"),
            "ohm um", 0.0, 2000.0, start=100.0,
            help="access resistance of the source and of the drain (each this value)"),
    FitKnob("doping_gradient", ("doping_gradient_nm_per_dec",), "nm/dec", 0.0, 6.0, start=1.0,
            help="junction abruptness of source and drain"),
)}


@dataclass(frozen=True)
class FittedKnob:
    """A knob after the fit.

    value : the fitted value, in ``unit`` (for ``workfunction_shift`` the shift [eV]);
    uncertainty : its standard uncertainty in ``unit`` (linear knobs) or in decades of the
    value (log knobs, ``log`` True); None when the knob is not determined; start : the
    starting value; low, high : the bounds; at_bound : the value sits on a bound (its
    uncertainty is then not a confidence interval); determined : False when the data do
    not fix it (see `FitResult.problems`).
    """

    name: str
    unit: str
    value: float
    uncertainty: float | None
    log: bool
    start: float
    low: float
    high: float
    at_bound: bool
    determined: bool

    def text(self) -> str:
        """'1.2e+12 cm^-2 eV^-1 (x/÷ 10^0.05)', '0.051 ± 0.003 eV', or 'not determined'."""
        if not self.determined or self.uncertainty is None:
            return f"{self.value:.4g} {self.unit} (not determined by these data)"
        bound = " (at its bound)" if self.at_bound else ""
        if self.log:
            return (f"{self.value:.4g} {self.unit} (×/÷ {10 ** self.uncertainty:.3g}, "
                    f"± {self.uncertainty:.2g} decades){bound}")
        return f"{self.value:.4g} ± {self.uncertainty:.2g} {self.unit}{bound}"


@dataclass(frozen=True)
class FittedCurve:
    """One measured transfer curve beside the fitted model: vd_V [V]; vg_V [V];
    measured_uA_per_um and fit_uA_per_um [µA/µm]; used: points that entered the fit;
    residual_decades: log10(fit / measured), NaN where unused [decades]."""

    vd_V: float
    vg_V: np.ndarray
    measured_uA_per_um: np.ndarray
    fit_uA_per_um: np.ndarray
    used: np.ndarray
    residual_decades: np.ndarray

    def metrics(self, which: str = "measured", **settings: Any) -> Metrics:
        """Figures of merit of the measured or the fitted curve at the measured gate
        voltages, by the one `figures_of_merit` (settings: temperature_K,
        ioff_target_uA_per_um, vdd_V, ss_floor_uA_per_um)."""
        current = self.measured_uA_per_um if which == "measured" else self.fit_uA_per_um
        return figures_of_merit(self.vg_V, current, **settings)


@dataclass(frozen=True)
class FitResult:
    """The outcome of `fit_transfer`.

    design : the fitted design; start_design : the one the fit started from; knobs :
    the free knobs, fitted; correlation : (n, n) correlation matrix of the knobs (NaN
    where undefined); curves : data, fit and residual of each transfer curve;
    rms_decades : root-mean-square residual [decades]; problems : why some knobs are not
    determined (empty when all are); converged, message : the optimiser's verdict;
    curve_evaluations : model transfer curves that needed new solves (each on the lattice);
    bias_points : bias points solved (cache misses); elapsed_s : wall time [s].
    """

    design: Design
    start_design: Design
    knobs: tuple[FittedKnob, ...]
    correlation: np.ndarray
    curves: tuple[FittedCurve, ...]
    rms_decades: float
    problems: tuple[str, ...]
    converged: bool
    message: str
    curve_evaluations: int
    bias_points: int
    elapsed_s: float
    settings: dict[str, Any] = field(default_factory=dict)

    @property
    def identifiable(self) -> bool:
        """True when every free knob is determined by the data."""
        return all(k.determined for k in self.knobs)

    def values(self) -> dict[str, float]:
        """Fitted value of each knob by name (in its unit)."""
        return {k.name: k.value for k in self.knobs}

    def columns(self) -> dict[str, np.ndarray]:
        """Every curve's points: vd_V, vg_V, measured_id_uA_per_um, fit_id_uA_per_um,
        residual_decades (NaN where unused), used (1/0)."""
        cols: dict[str, list[np.ndarray]] = {k: [] for k in (
            "vd_V", "vg_V", "measured_id_uA_per_um", "fit_id_uA_per_um", "residual_decades",
            "used")}
        for c in self.curves:
            cols["vd_V"].append(np.full(c.vg_V.size, c.vd_V))
            cols["vg_V"].append(c.vg_V)
            cols["measured_id_uA_per_um"].append(c.measured_uA_per_um)
            cols["fit_id_uA_per_um"].append(c.fit_uA_per_um)
            cols["residual_decades"].append(c.residual_decades)
            cols["used"].append(c.used.astype(float))
        return {k: np.concatenate(v) for k, v in cols.items()}

    def to_table(self) -> Any:
        """`columns` as a pandas DataFrame (a dict of numpy columns without pandas)."""
        return table(self.columns())

    def __repr__(self) -> str:
        knobs = "; ".join(f"{k.name} {k.text()}" for k in self.knobs)
        return (f"FitResult({knobs}; rms {self.rms_decades:.3g} dec, "
                f"{self.curve_evaluations} curve evaluations)")


class _Model:
    """log10 I of the design at the knobs' values, at the measured gate voltages."""

    def __init__(self, design: Design, curves: Sequence[MeasuredTransfer],
                 knobs: Sequence[FitKnob], simulator: Any, step_V: float,
                 cancel: Any, progress: Callable[[int, float], None] | None):
        self.design, self.curves, self.knobs = design, list(curves), list(knobs)
        self.sim, self.step, self.cancel, self.progress = simulator, step_V, cancel, progress
        self.evaluations = 0
        # the last few evaluations by knob values: the optimiser asks again for the point
        # it accepted (its Jacobian, the final curves)
        self._recent: OrderedDict[tuple[float, ...], list[tuple[np.ndarray, np.ndarray]]] = \
            OrderedDict()
        self.shift_index = next((i for i, k in enumerate(knobs) if k.offset), None)
        # designs evaluated lately (newest last): one that differs only in current-only
        # fields (band tails, trap-assisted lifetime) lends its electrostatics
        self.reuse = True
        self._designs: list[tuple[Design, np.ndarray]] = []  # with their knobs (shift 0)
        self.fd_steps = np.zeros(len(knobs))  # the Jacobian's difference steps (internal)

    def design_at(self, u: np.ndarray, with_shift: bool = True) -> Design:
        changes: dict[str, Any] = {}
        for k, value in zip(self.knobs, u, strict=True):
            if k.offset:
                if with_shift:
                    changes[k.fields[0]] = getattr(self.design, k.fields[0]) + float(value)
                continue
            for name in k.fields:
                changes[name] = k.from_internal(float(value))
        return self.design.replace(**changes)

    def _cancelled(self) -> bool:
        return self.cancel is not None and self.cancel.is_set()

    def splines(self, u: np.ndarray) -> list[Any]:
        """Cubic spline of log10 I along V_g of each curve for the non-shift knobs of u."""
        from scipy.interpolate import CubicSpline

        from sub60.physics.simulate import same_electrostatics

        shift = 0.0 if self.shift_index is None else float(u[self.shift_index])
        design = self.design_at(u, with_shift=False)
        lender = warm = None
        if self.reuse:
            lender = next((d for d, _ in reversed(self._designs) if d != design
                           and same_electrostatics(design, d)), None)
            # a neighbour one difference step away (a Jacobian column) starts Newton
            # closer than the extrapolation along the curve; after an optimiser's step
            # (much longer) it does not (measured: 86 against 96 Newton steps for a
            # 43-point curve one step of the trap density away, 100 against 95 after a
            # step of 0.2 decades)
            near = [d for d, v in reversed(self._designs)
                    if np.all(np.abs(v - u) <= 2.0 * self.fd_steps)]
            warm = near[0] if near and lender is None else None
        misses = self.sim.cache_info().misses
        out = []
        for c in self.curves:
            lo = math.floor((c.vg_V[0] - shift) / self.step) - 1
            hi = math.ceil((c.vg_V[-1] - shift) / self.step) + 1
            lattice = np.round(np.arange(lo, hi + 1) * self.step, 12)
            lattice = lattice[(lattice >= VG_RANGE_V[0]) & (lattice <= VG_RANGE_V[1])]
            if self._cancelled():
                raise InterruptedError("fit cancelled")
            tc = self.sim.transfer_curve(design, lattice, c.vd_V, refine=False,
                                         cancelled=self._cancelled, electrostatics_from=lender,
                                         warm_from=warm)
            log_i = np.log10(np.maximum(tc.id_uA_per_um, _LOG_FLOOR_UA_PER_UM))
            out.append(CubicSpline(lattice, log_i, extrapolate=True))
        if self.sim.cache_info().misses > misses:  # a curve that needed solves
            self.evaluations += 1
        ucopy = np.where(np.array([k.offset for k in self.knobs]), 0.0, np.asarray(u, float))
        self._designs = [*[(d, v) for d, v in self._designs if d != design][-7:],
                         (design, ucopy)]
        return out

    def evaluate(self, u: np.ndarray) -> list[tuple[np.ndarray, np.ndarray]]:
        """(log10 I, dlog10 I / dV_g) of each curve at its measured gate voltages."""
        key = tuple(float(x) for x in u)
        if key in self._recent:
            return self._recent[key]
        shift = 0.0 if self.shift_index is None else float(u[self.shift_index])
        out = []
        for c, s in zip(self.curves, self.splines(u), strict=True):
            v = c.vg_V - shift
            out.append((s(v), s.derivative()(v)))
        self._recent[key] = out
        while len(self._recent) > 8:
            self._recent.popitem(last=False)
        return out


def _check_knobs(design: Design, free: Sequence[str], bounds: Mapping[str, Any] | None,
                 start: Mapping[str, float] | None) -> tuple[list[FitKnob], np.ndarray,
                                                             np.ndarray, np.ndarray]:
    if isinstance(free, str):
        free = [free]
    free = list(free)
    if not free:
        raise ValueError("free: choose at least one knob to fit; known: " + ", ".join(FIT_KNOBS))
    knobs: list[FitKnob] = []
    for name in free:
        if name not in FIT_KNOBS:
            raise ValueError(f"free: unknown knob {name!r}; known: " + ", ".join(FIT_KNOBS))
        if FIT_KNOBS[name] in knobs:
            raise ValueError(f"free: knob {name!r} given twice")
        knobs.append(FIT_KNOBS[name])
    fields = [f for k in knobs for f in k.fields]
    if len(set(fields)) != len(fields):
        raise ValueError("free: " + ", ".join(free) + " set the same design field twice "
                         "(tail_energy sets both tails; free it or the single tails)")
    for name in list(bounds or {}) + list(start or {}):
        if name not in free:
            raise ValueError(f"bounds/start: {name!r} is not a free knob ({', '.join(free)})")
    lo, hi, u0 = [], [], []
    for k in knobs:
        low, high = k.low, k.high
        if bounds and k.name in bounds:
            try:
                low, high = (float(b) for b in bounds[k.name])
            except (TypeError, ValueError):
                raise ValueError(f"bounds: {k.name}: expected (low, high), got "
                                 f"{bounds[k.name]!r}") from None
            if not (math.isfinite(low) and math.isfinite(high) and k.low <= low < high <= k.high):
                raise ValueError(f"bounds: {k.name}: ({low:g}, {high:g}) {k.unit}; allowed "
                                 f"low < high within [{k.low:g}, {k.high:g}] {k.unit}")
        if k.offset:  # keep the shifted work function inside the design's range
            spec = FIELD_RANGES[k.fields[0]]
            base = getattr(design, k.fields[0])
            low, high = max(low, spec.low - base), min(high, spec.high - base)
        own = 0.0 if k.offset else getattr(design, k.fields[0])
        value = own if low <= own <= high and not (k.log and own <= 0) else min(max(k.start, low), high)
        if start and k.name in start:
            value = float(start[k.name])
            if not (math.isfinite(value) and low <= value <= high):
                raise ValueError(f"start: {k.name}: {value!r} {k.unit} outside its bounds "
                                 f"[{low:g}, {high:g}] {k.unit}")
        lo.append(k.to_internal(low) if not (k.log and low <= 0) else -math.inf)
        hi.append(k.to_internal(high))
        u0.append(k.to_internal(value))
    lo_a, hi_a, u0_a = np.array(lo), np.array(hi), np.array(u0)
    # least_squares needs a strictly interior start
    span = hi_a - lo_a
    u0_a = np.clip(u0_a, lo_a + 1e-6 * span, hi_a - 1e-6 * span)
    return knobs, lo_a, hi_a, u0_a


def fit_transfer(
    data: MeasuredData | Sequence[MeasuredTransfer],
    design: Design,
    free: Sequence[str],
    *,
    bounds: Mapping[str, tuple[float, float]] | None = None,
    start: Mapping[str, float] | None = None,
    simulator: Any = None,
    floor_uA_per_um: float = 0.0,
    model_step_V: float = 0.02,
    max_evaluations: int = 40,
    progress: Callable[[int, float], None] | None = None,
    cancel: Any = None,
    reuse_electrostatics: bool = True,
    stop_when_settled: bool = True,
) -> FitResult:
    """Fit free knobs of a design to measured transfer curves by least squares on log10 I.

    Parameters
    ----------
    data : MeasuredData or sequence of MeasuredTransfer
        the measured transfer curves (all are fitted together)
    design : Design
        the device; its other fields stay fixed, its values of the free knobs are the start
    free : sequence of str
        names of the knobs to fit (`FIT_KNOBS`)
    bounds : mapping, optional
        (low, high) of a knob, inside its allowed range [knob unit]
    start : mapping, optional
        starting value of a knob [knob unit]
    simulator : sub60.physics.Simulator, optional
        the simulator to use (its cache keeps the solved points); a new one by default
    floor_uA_per_um : float
        measured points at or below this current are left out (instrument floor) [µA/µm]
    model_step_V : float
        gate-voltage step of the model lattice, interpolated at the measured voltages [V]
    max_evaluations : int
        most evaluations of the residuals by the optimiser (each: one model curve per
        drain voltage, plus one per non-shift knob for the Jacobian) [-]
    progress : callable, optional
        progress(curve_evaluations, rms_decades) after each new model evaluation
    cancel : threading.Event, optional
        set it to stop the fit (raises InterruptedError at the next model point)
    reuse_electrostatics : bool
        a model curve whose design differs from one already solved only in band tails or
        trap-assisted lifetime takes that design's electrostatics (no Poisson solve;
        `sub60.physics.simulate.CURRENT_ONLY_FIELDS`), and any other starts each point's
        Newton from the last solved design's point at the same bias; False solves every
        curve anew (each point started by extrapolation along its curve)
    stop_when_settled : bool
        stop as soon as the next Gauss-Newton step would move every knob by less than
        `SETTLED` (0.1) of its standard uncertainty; False: only the optimiser's own
        tolerances below end the fit

    Returns
    -------
    FitResult

    Notes
    -----
    Residuals, covariance and the exact shift of the work function: module docstring,
    eqs. (1)-(2). The optimiser stops when the cost changes by less than 1e-3 of itself
    or the step by less than 1e-4 of the knobs (``ftol``, ``xtol`` of least_squares).
    """
    from scipy.optimize import least_squares

    t_start = time.perf_counter()
    if not isinstance(design, Design):
        raise ValueError(f"design: expected a Design, got {type(design).__name__}")
    curves = list(data.transfer) if isinstance(data, MeasuredData) else list(data)
    if not curves:
        raise ValueError("data: no transfer curve to fit (an output-curve file cannot be "
                         "fitted yet)")
    if not (isinstance(model_step_V, (int, float)) and 1e-3 <= model_step_V <= 0.1):
        raise ValueError(f"model_step_V: {model_step_V!r} V; allowed [0.001, 0.1] V")
    if not (isinstance(floor_uA_per_um, (int, float)) and math.isfinite(floor_uA_per_um)
            and floor_uA_per_um >= 0):
        raise ValueError(f"floor_uA_per_um: {floor_uA_per_um!r}; allowed a current >= 0 µA/µm")
    if not (isinstance(max_evaluations, int) and 2 <= max_evaluations <= 1000):
        raise ValueError(f"max_evaluations: {max_evaluations!r}; allowed [2, 1000]")
    knobs, lo, hi, u0 = _check_knobs(design, free, bounds, start)
    used = [(c.id_uA_per_um > floor_uA_per_um) & np.isfinite(c.id_uA_per_um) for c in curves]
    m = int(sum(u.sum() for u in used))
    if m <= len(knobs):
        raise ValueError(f"data: {m} usable points (current above {floor_uA_per_um:g} µA/µm) "
                         f"for {len(knobs)} knobs; more points than knobs are needed")
    target = np.concatenate([np.log10(c.id_uA_per_um[u]) for c, u in zip(curves, used, strict=True)])
    if simulator is None:
        from sub60.physics.simulate import Simulator

        simulator = Simulator()
    misses0 = simulator.cache_info().misses
    model = _Model(design, curves, knobs, simulator, float(model_step_V), cancel, progress)
    model.reuse = bool(reuse_electrostatics)
    steps = FD_STEP * (hi - np.where(np.isfinite(lo), lo, hi - 4.0))
    model.fd_steps = np.where([k.offset for k in knobs], np.inf, steps)

    reported = [0]

    def residuals(u: np.ndarray) -> np.ndarray:
        ev = model.evaluate(u)
        r = np.concatenate([lg[w] for (lg, _), w in zip(ev, used, strict=True)]) - target
        if progress is not None and model.evaluations > reported[0]:  # once per new curve
            reported[0] = model.evaluations
            progress(model.evaluations, float(np.sqrt(np.mean(r * r))))
        return r

    def jacobian(u: np.ndarray) -> np.ndarray:
        jac = _difference_jacobian(u)
        if stop_when_settled:
            _stop_if_settled(u, residuals(u), jac, knobs, lo, hi)
        return jac

    def _difference_jacobian(u: np.ndarray) -> np.ndarray:
        ev0 = model.evaluate(u)
        base = residuals(u)
        jac = np.empty((base.size, len(knobs)))
        for j, k in enumerate(knobs):
            if k.offset:  # exact: d/d(shift) of log I(V_g - shift) = -dlog I/dV_g
                jac[:, j] = -np.concatenate([d[w] for (_, d), w in zip(ev0, used, strict=True)])
                continue
            h = steps[j] if u[j] + steps[j] <= hi[j] else -steps[j]
            up = u.copy()
            up[j] += h
            jac[:, j] = (residuals(up) - base) / h
        return jac

    if model.shift_index is not None:  # align the start on the gate axis: free of solves
        u0 = _align_shift(model, u0, lo, hi, used, target)
    try:
        sol = least_squares(residuals, u0, jac=jacobian, bounds=(lo, hi), method="trf",
                            x_scale=np.abs(steps) * 10.0, ftol=1e-3, xtol=1e-4, gtol=1e-8,
                            max_nfev=max_evaluations)
        u, r, jac = sol.x, sol.fun, sol.jac  # least_squares' own residuals and Jacobian at u
        converged, message = bool(sol.status > 0), str(sol.message)
    except _Settled as done:  # the next step would move every knob by < SETTLED of sigma
        u, r, jac = done.u, done.r, done.jac
        converged, message = True, (f"every solved knob's next Gauss-Newton step is below "
                                    f"{SETTLED:g} of its standard uncertainty")
        j = model.shift_index
        if j is not None:  # the shift costs no solve: its own Gauss-Newton steps at once
            for _ in range(3):
                col = jac[:, j]
                du = -float(col @ r) / max(float(col @ col), 1e-300)
                new = u.copy()
                new[j] = min(max(u[j] + du, lo[j]), hi[j])
                r_new = residuals(new)
                if float(r_new @ r_new) >= float(r @ r):
                    break
                u, r = new, r_new
                jac = _difference_jacobian(u)
    fitted_design = model.design_at(u)
    sigma, corr, problems = _uncertainty(jac, r, knobs, lo, hi)
    out_knobs = []
    for j, k in enumerate(knobs):
        span = hi[j] - lo[j]
        at_bound = bool(u[j] - lo[j] <= 1e-3 * span or hi[j] - u[j] <= 1e-3 * span)
        determined = sigma[j] is not None
        out_knobs.append(FittedKnob(
            k.name, k.unit, k.from_internal(u[j]), sigma[j] if determined else None, k.log,
            k.from_internal(u0[j]), k.from_internal(lo[j]) if np.isfinite(lo[j]) else 0.0,
            k.from_internal(hi[j]), at_bound, determined))
    ev = model.evaluate(u)
    fitted_curves = []
    for c, (lg, _), w in zip(curves, ev, used, strict=True):
        fit_i = 10.0 ** lg
        res = np.where(w, lg - np.log10(np.where(c.id_uA_per_um > 0, c.id_uA_per_um, 1.0)), np.nan)
        fitted_curves.append(FittedCurve(c.vd_V, c.vg_V, c.id_uA_per_um, fit_i, w, res))
    return FitResult(
        design=fitted_design, start_design=model.design_at(u0), knobs=tuple(out_knobs),
        correlation=corr, curves=tuple(fitted_curves),
        rms_decades=float(np.sqrt(np.mean(r * r))), problems=tuple(problems),
        converged=converged, message=message,
        curve_evaluations=model.evaluations,
        bias_points=simulator.cache_info().misses - misses0,
        elapsed_s=time.perf_counter() - t_start,
        settings={"free": [k.name for k in knobs], "floor_uA_per_um": float(floor_uA_per_um),
                  "model_step_V": float(model_step_V), "max_evaluations": max_evaluations,
                  "bounds": {k.name: (k.from_internal(lo[j]) if np.isfinite(lo[j]) else 0.0,
                                      k.from_internal(hi[j])) for j, k in enumerate(knobs)}})


class _Settled(Exception):  # noqa: N818 (not an error: the fit is done)
    """Raised from the Jacobian when the fit has settled (`_stop_if_settled`)."""

    def __init__(self, u: np.ndarray, r: np.ndarray, jac: np.ndarray) -> None:
        super().__init__("settled")
        self.u, self.r, self.jac = u.copy(), r.copy(), jac.copy()


def _stop_if_settled(u: np.ndarray, r: np.ndarray, jac: np.ndarray, knobs: Sequence[FitKnob],
                     lo: np.ndarray, hi: np.ndarray) -> None:
    """Raise `_Settled` when the Gauss-Newton step from u, dp = -J^+ r (a knob on a bound
    kept there), moves every knob by less than `SETTLED` of its standard uncertainty
    (eq. 2): further steps change the result by far less than its own uncertainty and
    each costs a curve per knob."""
    sigma, _, problems = _uncertainty(jac, r, knobs, lo, hi)
    if problems or any(s is None or not s > 0 for s in sigma):
        return
    step = -np.linalg.lstsq(jac, r, rcond=None)[0]
    span = np.where(np.isfinite(lo), hi - lo, 4.0)
    at_low = (u - lo <= 1e-3 * span) & (step < 0)
    at_high = (hi - u <= 1e-3 * span) & (step > 0)
    step = np.where(at_low | at_high, 0.0, step)
    solved = np.array([not k.offset for k in knobs])  # the shift is polished afterwards
    if np.all(np.abs(step[solved]) < SETTLED * np.asarray(sigma, float)[solved]):
        raise _Settled(u, r, jac)


def _align_shift(model: _Model, u0: np.ndarray, lo: np.ndarray, hi: np.ndarray,
                 used: list[np.ndarray], target: np.ndarray) -> np.ndarray:
    """The start with its work-function shift set to the best one for the other knobs'
    start values: a scan of the shift on the interpolated curves (one model evaluation,
    the shift itself needs no solve), on a 5 mV grid."""
    j = model.shift_index
    splines = model.splines(u0)
    best, best_cost = u0[j], math.inf
    for shift in np.arange(lo[j], hi[j] + 1e-12, 0.005):
        r = np.concatenate([s(c.vg_V[w] - shift) for s, c, w in
                            zip(splines, model.curves, used, strict=True)]) - target
        cost = float(r @ r)
        if cost < best_cost:
            best, best_cost = shift, cost
    out = u0.copy()
    span = hi[j] - lo[j]
    out[j] = min(max(best, lo[j] + 1e-6 * span), hi[j] - 1e-6 * span)
    return out


def _uncertainty(jac: np.ndarray, r: np.ndarray, knobs: Sequence[FitKnob], lo: np.ndarray,
                 hi: np.ndarray, corr_limit: float = CORRELATION_LIMIT
                 ) -> tuple[list[float | None], np.ndarray, list[str]]:
    """Standard uncertainties (internal units), correlations and identifiability problems
    from the Jacobian at the optimum: C = s^2 (J^T J)^-1 (module docstring, eq. 2)."""
    return knob_uncertainty(jac, r, [k.name for k in knobs],
                            np.where(np.isfinite(lo), hi - lo, 4.0), corr_limit)


def knob_uncertainty(jac: np.ndarray, residual: np.ndarray, names: Sequence[str],
                     spans: np.ndarray, corr_limit: float = CORRELATION_LIMIT
                     ) -> tuple[list[float | None], np.ndarray, list[str]]:
    """Covariance of least-squares parameters from the Jacobian, and what it cannot fix.

    Parameters
    ----------
    jac : (m, n) ndarray
        d residual / d parameter at the optimum [residual unit / parameter unit]
    residual : (m,) ndarray
        residuals at the optimum [residual unit]
    names : sequence of str
        the parameters' names, for the messages
    spans : (n,) ndarray
        each parameter's allowed range (high - low) [parameter unit]
    corr_limit : float
        |correlation| above which a pair is reported as not separately identifiable [-]

    Returns
    -------
    sigma : list of float or None
        standard uncertainty of each parameter, None when it is not determined
        [parameter unit]
    correlation : (n, n) ndarray
        correlation matrix (NaN where undefined) [-]
    problems : list of str
        one sentence per knob without effect, correlated pair or unbounded uncertainty

    Notes
    -----
    C = s^2 (J^T J)^-1, s^2 = sum r^2 / (m - n) (Gauss-Newton covariance; Press et al.,
    Numerical Recipes 3rd ed. sec. 15.5, from memory), computed through the singular
    values of J with unit-norm columns, so that the test for a near-singular J^T J
    (smallest relative singular value below 1e-8) does not depend on the units.
    """
    jac = np.asarray(jac, float)
    m, n = jac.shape
    s2 = float(residual @ residual) / max(m - n, 1)
    norms = np.linalg.norm(jac, axis=0)
    problems: list[str] = []
    dead = norms <= 1e-12 * max(float(norms.max()), 1e-300)
    for j in np.flatnonzero(dead):
        problems.append(f"{names[j]} has no effect on these curves: not determined")
    live = np.flatnonzero(~dead)
    sigma: list[float | None] = [None] * n
    corr = np.full((n, n), np.nan)
    if live.size:
        scaled = jac[:, live] / norms[live]
        _, sv, vt = np.linalg.svd(scaled, full_matrices=False)
        tiny = sv < 1e-8 * sv[0]
        inv = np.where(tiny, 0.0, 1.0 / np.where(tiny, 1.0, sv) ** 2)
        cov_scaled = (vt.T * inv) @ vt
        cov = s2 * cov_scaled / np.outer(norms[live], norms[live])
        sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
        with np.errstate(invalid="ignore", divide="ignore"):
            c = cov / np.outer(sd, sd)
        if tiny.any():  # exactly degenerate: name the knobs of the null direction
            null = vt[tiny][0]
            involved = [names[live[k]] for k in np.flatnonzero(np.abs(null) > 0.1)]
            problems.append(" and ".join(involved) + " change the curves in the same way: "
                            "not separately determined")
            bad = set(np.flatnonzero(np.abs(null) > 0.1))
        else:
            bad = set()
        for a in range(live.size):
            for b in range(a + 1, live.size):
                if np.isfinite(c[a, b]) and abs(c[a, b]) > corr_limit and not tiny.any():
                    problems.append(f"{names[live[a]]} and {names[live[b]]} are not separately "
                                    f"determined by these curves (correlation {c[a, b]:+.3f}); "
                                    "fix one of them")
                    bad.update((a, b))
        for k, j in enumerate(live):
            corr[j, live] = c[k]
            if k in bad:
                continue
            if sd[k] > 0.5 * spans[j]:
                problems.append(f"{names[j]}: uncertainty ({sd[k]:.3g}) spans its allowed range; "
                                "not determined by these curves")
                continue
            sigma[j] = float(sd[k])
    return sigma, corr, problems
