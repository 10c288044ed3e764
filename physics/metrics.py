"""Figures of merit of a transfer curve Id(Vg): point swing, minimum and four-decade swing,
I60, Voff and Ion at a fixed Ioff and supply, a constant-current threshold and the ambipolar
branch current.

The input is one transfer curve of a tunnel FET or of its MOSFET twin: drain current per
width [µA/µm] sampled at strictly increasing gate voltages [V] (the spacing need not be
uniform). The curve is taken to be n-type: its forward (on-state) branch rises towards
positive gate voltage. Samples with Id <= 0 (or not finite) are *missing* for every
operation on log10(Id): a solver that underflows to zero in the deep off-state, or noise that
dips below zero, must not produce a made-up swing.

Every figure of merit is returned as a :class:`Metric`: a value with its unit, or no value
and a sentence saying why it is undefined for this curve.

Figures taken from samples depend on how the curve is sampled (a three-point swing on a
20 mV grid misses a sharp minimum by several mV/dec). :func:`refinement_voltages` names
the gate voltages to add — where log10(Id) changes by more than a decade between
neighbours, and around every sample a figure of merit is read from — and
:func:`refine_curve` adds them by bisection down to a 2.5 mV spacing, so the figures
agree within 1 mV/dec (or 3 %) between a 20 mV and a 2.5 mV base step.

References
----------
.. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley, 2007,
   MOSFET subthreshold section (section number from memory).
.. [2] W. G. Vandenberghe, A. S. Verhulst, B. Sorée, W. Magnus, G. Groeseneken, Q. Smets,
   M. Heyns and M. V. Fischetti, "Figure of merit for and identification of sub-60
   mV/decade devices", Appl. Phys. Lett. 102, 013510 (2013),
   doi:10.1063/1.4773521 (DOI from memory).
.. [3] H. Lu and A. Seabaugh, "Tunnel field-effect transistors: state-of-the-art",
   IEEE J. Electron Devices Soc. 2(4), 44 (2014), doi:10.1109/JEDS.2014.2326622
   (use of the four-decade average swing and the DOI from memory).
.. [4] A. C. Seabaugh and Q. Zhang, "Low-voltage tunnel transistors for beyond CMOS
   logic", Proc. IEEE 98, 2095 (2010).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np
from numpy.typing import ArrayLike

from sub60.physics.constants import BOLTZMANN_J_PER_K, ELEMENTARY_CHARGE_C

#: Default constant-current threshold criterion [µA/µm] (100 nA/µm); common practice, no
#: source.
DEFAULT_ITH_UA_PER_UM = 0.1

#: Number of decades of the average swing, after [3].
_AVG_DECADES = 4

#: The I60 criterion of Vandenberghe et al. [2] [mV/dec].
I60_CRITERION_MV_PER_DEC = 60.0

#: Default SS_min current floor relative to the Ioff target [-] (a setting).
DEFAULT_SS_FLOOR_PER_IOFF = 1e-2

#: Refinement: finest gate-voltage spacing [V] and the largest change of log10(Id) between
#: neighbours above the floor [decades] (choices of this model, no source).
REFINE_MIN_STEP_V = 2.5e-3
REFINE_MAX_DECADES = 1.0

_UNIT_SWING = "mV/dec"
_UNIT_CURRENT = "µA/µm"
_UNIT_VOLTAGE = "V"
_UNIT_RATIO = "1"


def thermionic_limit_mV_per_dec(temperature_K: float) -> float:
    """Thermionic (Boltzmann) limit of the subthreshold swing.

    Parameters
    ----------
    temperature_K : float
        lattice temperature [K]

    Returns
    -------
    float
        (ln 10) k T / q [mV/dec]; 59.526 mV/dec at 300 K

    Notes
    -----
    The swing of a device whose current is set by carriers thermally emitted over a barrier
    that the gate lowers one-to-one is SS = (ln 10) k T / q (1 + Cd/Cox) >= (ln 10) k T / q
    (Sze & Ng [1]). k and q are the exact SI values of scipy.constants (2019 SI).
    """
    if not (math.isfinite(temperature_K) and temperature_K > 0.0):
        raise ValueError(f"temperature must be finite and positive [K], got {temperature_K!r}")
    return math.log(10.0) * BOLTZMANN_J_PER_K * temperature_K / ELEMENTARY_CHARGE_C * 1e3


def _log10_current(id_uA_per_um: np.ndarray) -> np.ndarray:
    """log10 of the current [log10(µA/µm)], NaN where Id <= 0 or Id is not finite."""
    valid = np.isfinite(id_uA_per_um) & (id_uA_per_um > 0.0)
    out = np.full(id_uA_per_um.shape, np.nan)
    out[valid] = np.log10(id_uA_per_um[valid])
    return out


def _second_order_derivative(x: np.ndarray, f: np.ndarray) -> np.ndarray:
    """df/dx on a non-uniform grid of at least 3 points, second order everywhere.

    The three-point formulas of ``np.gradient(f, x, edge_order=2)`` (numpy's documentation,
    after Fornberg, Math. Comp. 51, 699 (1988)), written in differences of f so that a
    constant f gives exactly zero rather than rounding noise.
    """
    h = np.diff(x)
    d = np.diff(f)
    out = np.empty_like(f)
    hl, hr = h[:-1], h[1:]
    out[1:-1] = (hl / (hr * (hl + hr))) * d[1:] + (hr / (hl * (hl + hr))) * d[:-1]
    # One-sided ends: the parabola through the first (last) three samples.
    h1, h2 = h[0], h[1]
    out[0] = ((h1 + h2) / (h1 * h2)) * d[0] - (h1 / (h2 * (h1 + h2))) * (d[0] + d[1])
    h1, h2 = h[-1], h[-2]
    out[-1] = ((h1 + h2) / (h1 * h2)) * d[-1] - (h1 / (h2 * (h1 + h2))) * (d[-1] + d[-2])
    return out


def _log_slope_per_V(vg_V: np.ndarray, log_id: np.ndarray) -> np.ndarray:
    """Local derivative d log10(Id) / dVg [dec/V] on each run of consecutive valid samples.

    Runs of three or more samples use the second-order non-uniform difference of
    ``np.gradient(..., edge_order=2)``; a run of two samples uses their one-sided
    difference; an isolated valid sample and every missing sample get NaN.
    """
    slope = np.full(vg_V.shape, np.nan)
    valid = np.isfinite(log_id)
    edges = np.flatnonzero(np.diff(np.concatenate(([0], valid.astype(np.int8), [0]))))
    for start, stop in zip(edges[::2], edges[1::2], strict=True):
        run = slice(start, stop)
        if stop - start >= 3:
            slope[run] = _second_order_derivative(vg_V[run], log_id[run])
        elif stop - start == 2:
            slope[run] = (log_id[stop - 1] - log_id[start]) / (vg_V[stop - 1] - vg_V[start])
    return slope


def _validated_curve(vg_V: ArrayLike, id_uA_per_um: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    vg = np.asarray(vg_V, dtype=float)
    current = np.asarray(id_uA_per_um, dtype=float)
    if vg.ndim != 1 or current.shape != vg.shape:
        raise ValueError(
            f"vg and Id must be 1-D of the same length, got shapes {vg.shape} and {current.shape}"
        )
    if vg.size < 2:
        raise ValueError(f"a transfer curve needs at least 2 samples, got {vg.size}")
    if not np.all(np.isfinite(vg)):
        raise ValueError("gate voltages must be finite")
    if not np.all(np.diff(vg) > 0.0):
        raise ValueError("gate voltages must be strictly increasing")
    return vg, current


def point_swing_mV_per_dec(vg_V: ArrayLike, id_uA_per_um: ArrayLike) -> np.ndarray:
    """Point subthreshold swing SS = dVg / dlog10(Id) at each sample.

    Parameters
    ----------
    vg_V : array_like
        gate voltages, strictly increasing, not necessarily uniform [V]
    id_uA_per_um : array_like
        drain current per width at each gate voltage [µA/µm]; Id <= 0 is missing

    Returns
    -------
    numpy.ndarray
        point swing [mV/dec]: ``1000 / (d log10 Id / dVg)`` where that slope is positive;
        ``np.inf`` where the slope is <= 0 (current flat or falling: no finite swing);
        ``np.nan`` where Id <= 0 (or not finite) and at an isolated valid sample, whose
        slope is unknown.

    Notes
    -----
    The slope d log10(Id)/dVg is the second-order three-point difference on a non-uniform
    grid of ``np.gradient`` with the gate voltages as coordinates (``edge_order=2``:
    second-order one-sided at the ends), written in differences of log10(Id) so that a
    flat stretch gives a slope of exactly zero, and taken separately on each run of
    consecutive samples with Id > 0 so that a missing sample never enters a stencil. It is
    exact for a pure exponential Id = I0 10^((Vg - V0)/S) on any grid. The definition
    SS = dVg/dlog10(Id) is Sze & Ng's [1].
    """
    vg, current = _validated_curve(vg_V, id_uA_per_um)
    slope = _log_slope_per_V(vg, _log10_current(current))
    swing = np.full(vg.shape, np.nan)
    known = np.isfinite(slope)
    rising = known & (slope > 0.0)
    swing[rising] = 1e3 / slope[rising]
    swing[known & ~rising] = np.inf
    return swing


@dataclass(frozen=True)
class Metric:
    """One figure of merit: a value with its unit, or no value and the reason why.

    Parameters
    ----------
    value : float or None
        the value, finite, in ``unit``; None when the figure is undefined for this curve
    unit : str
        unit of ``value``, e.g. "mV/dec", "µA/µm", "V", "1" for a ratio
    reason : str or None
        why ``value`` is None (required then); may be None when a value is given
    """

    value: float | None
    unit: str
    reason: str | None = None

    def __post_init__(self) -> None:
        if self.value is None:
            if not self.reason:
                raise ValueError("a missing metric needs a reason")
            return
        value = float(self.value)
        if not math.isfinite(value):
            raise ValueError(f"a metric value must be finite, got {self.value!r}")
        object.__setattr__(self, "value", value)

    def __str__(self) -> str:
        return "n/a" if self.value is None else f"{self.value:.4g} {self.unit}"


def _missing(unit: str, reason: str) -> Metric:
    return Metric(None, unit, reason)


@dataclass(frozen=True)
class Metrics:
    """Figures of merit of one transfer curve and the settings used to extract them.

    Parameters
    ----------
    ss_min_mV_per_dec : Metric
        minimum point swing [mV/dec]
    ss_avg4_mV_per_dec : Metric
        average swing over the four decades above Ioff [mV/dec]
    i60_uA_per_um : Metric
        I60, largest current at which the swing rises through the thermionic limit [µA/µm]
    ioff_uA_per_um : Metric
        off-current target Ioff (a setting, repeated for display) [µA/µm]
    voff_V : Metric
        gate voltage at which Id = Ioff on the forward branch [V]
    ion_uA_per_um : Metric
        Id at Vg = Voff + Vdd [µA/µm]
    ion_ioff : Metric
        Ion / Ioff [1]
    vth_V : Metric
        constant-current threshold voltage, Id(Vth) = Ith on the forward branch [V]
    ambipolar_uA_per_um : Metric
        Id at the most negative gate voltage of the sweep [µA/µm]
    ioff_target_uA_per_um : float
        off-current target used [µA/µm]
    vdd_V : float
        supply voltage used [V]
    ith_uA_per_um : float
        threshold current criterion used [µA/µm]
    temperature_K : float
        temperature used for the thermionic limit [K]
    ss_min_current_uA_per_um : Metric
        Id at the sample where SS_min occurs [µA/µm]
    i60_thermal_uA_per_um : Metric
        I60 with the temperature-scaled limit (ln 10) kT/q instead of 60 mV/dec [µA/µm]
    ss_floor_uA_per_um : float
        current floor of SS_min used [µA/µm]
    """

    METRIC_NAMES: ClassVar[tuple[str, ...]] = (
        "ss_min_mV_per_dec",
        "ss_avg4_mV_per_dec",
        "i60_uA_per_um",
        "ioff_uA_per_um",
        "voff_V",
        "ion_uA_per_um",
        "ion_ioff",
        "vth_V",
        "ambipolar_uA_per_um",
    )

    ss_min_mV_per_dec: Metric
    ss_avg4_mV_per_dec: Metric
    i60_uA_per_um: Metric
    ioff_uA_per_um: Metric
    voff_V: Metric
    ion_uA_per_um: Metric
    ion_ioff: Metric
    vth_V: Metric
    ambipolar_uA_per_um: Metric
    ioff_target_uA_per_um: float
    vdd_V: float
    ith_uA_per_um: float
    temperature_K: float
    ss_min_current_uA_per_um: Metric = Metric(None, _UNIT_CURRENT, "not computed")
    i60_thermal_uA_per_um: Metric = Metric(None, _UNIT_CURRENT, "not computed")
    ss_floor_uA_per_um: float = math.nan

    #: figures reported beside METRIC_NAMES (not part of the snapshot record, version 1)
    DETAIL_NAMES: ClassVar[tuple[str, ...]] = ("ss_min_current_uA_per_um",
                                               "i60_thermal_uA_per_um")

    def to_dict(self) -> dict[str, float | None]:
        """Each figure of merit by name: its value in its unit, or None when undefined."""
        return {name: getattr(self, name).value for name in self.METRIC_NAMES}

    def reasons(self) -> dict[str, str | None]:
        """Each figure of merit by name: why it is undefined, or None when it has a value."""
        return {name: getattr(self, name).reason for name in self.METRIC_NAMES}

    #: Names of the extraction settings, in `columns` after the figures of merit.
    SETTING_NAMES: ClassVar[tuple[str, ...]] = (
        "ioff_target_uA_per_um", "vdd_V", "ith_uA_per_um", "temperature_K")

    def columns(self) -> dict[str, np.ndarray]:
        """One row: each figure of merit (`METRIC_NAMES`, NaN when undefined; the reason
        is in `reasons`), then the settings (`SETTING_NAMES`), as 1-element columns."""
        out = {name: np.array([np.nan if v is None else v])
               for name, v in self.to_dict().items()}
        for name in self.SETTING_NAMES:
            out[name] = np.array([float(getattr(self, name))])
        return out

    def to_table(self) -> Any:
        """`columns` as a one-row pandas DataFrame (a dict of numpy columns without
        pandas); tables of several curves concatenate row by row."""
        from sub60.physics.tables import table

        return table(self.columns())

    def summary(self) -> str:
        """SS_min, I60, Voff and Ion in one short line."""
        return (f"SS_min {self.ss_min_mV_per_dec}, I60 {self.i60_uA_per_um}, "
                f"Voff {self.voff_V}, Ion {self.ion_uA_per_um}")

    def __repr__(self) -> str:
        return f"Metrics({self.summary()}; Ioff target {self.ioff_target_uA_per_um:g} uA/um, " \
               f"Vdd {self.vdd_V:g} V, {self.temperature_K:g} K)"


def _fmt(x: float) -> str:
    return f"{x:.3g}"


def _upward_crossing(
    vg: np.ndarray, log_id: np.ndarray, level: float, start: int
) -> tuple[float, int] | None:
    """First Vg at or after sample ``start`` where log10 Id rises to ``level``.

    ``vg`` and ``log_id`` hold the valid samples only, and ``log_id[start] <= level``.
    Linear interpolation of log10(Id) against Vg between the two samples that bracket the
    crossing. Returns the gate voltage [V] and the index of the sample that opens the
    bracketing segment, or None if the curve never reaches ``level`` after ``start``.
    """
    reached = np.flatnonzero(log_id[start:] >= level)
    if reached.size == 0:
        return None
    k = start + int(reached[0])
    if k == start:
        return float(vg[k]), k
    lo, hi = k - 1, k
    frac = (level - log_id[lo]) / (log_id[hi] - log_id[lo])
    return float(vg[lo] + frac * (vg[hi] - vg[lo])), lo


def _forward_branch_crossing(
    vg: np.ndarray, log_id: np.ndarray, level_uA_per_um: float, what: str
) -> tuple[float, int] | str:
    """Gate voltage where Id reaches ``level_uA_per_um`` on the forward branch, or a reason.

    The forward branch starts at the minimum of the curve (the first sample of least Id);
    the crossing is the first upward one after it, so an ambipolar branch at lower Vg,
    which falls through the same current, is never taken.
    """
    if vg.size == 0:
        return "no sample has Id > 0"
    level = math.log10(level_uA_per_um)
    i_min = int(np.argmin(log_id))
    if log_id[i_min] > level:
        return (
            f"Id stays above {what} = {_fmt(level_uA_per_um)} µA/µm over the sweep "
            f"(least Id > 0 is {_fmt(10 ** log_id[i_min])} µA/µm)"
        )
    found = _upward_crossing(vg, log_id, level, i_min)
    if found is None:
        return (
            f"Id never reaches {what} = {_fmt(level_uA_per_um)} µA/µm on the forward branch "
            f"(largest Id beyond the minimum at Vg = {_fmt(vg[i_min])} V is "
            f"{_fmt(10 ** np.max(log_id[i_min:]))} µA/µm)"
        )
    return found


def _i60_crossings(slope: np.ndarray, limit_mV_per_dec: float) -> np.ndarray:
    """Indices j (into the samples with a known slope) where SS goes from below the limit
    at sample j to above it at sample j + 1."""
    s = slope[np.isfinite(slope)]
    below = s > 1e3 / limit_mV_per_dec
    return np.flatnonzero(below[:-1] & ~below[1:])


def _i60(log_id: np.ndarray, slope: np.ndarray, limit: float, label: str) -> Metric:
    """I60 from the samples with a known local slope (see :func:`figures_of_merit`)."""
    limit_slope = 1e3 / limit
    known = np.isfinite(slope)
    u, s = log_id[known], slope[known]
    below = s > limit_slope
    if not np.any(below):
        return _missing(_UNIT_CURRENT, f"SS never below {label}")
    ups = _i60_crossings(slope, limit)
    # The slope d log10 Id / dVg = 1000/SS stays finite where SS is infinite, so it is the
    # quantity interpolated linearly in log10 Id to place the crossing SS = limit.
    frac = (s[ups] - limit_slope) / (s[ups] - s[ups + 1])
    crossings = u[ups] + frac * (u[ups + 1] - u[ups])
    if below[-1]:
        bound = max(float(u[-1]), float(np.max(crossings, initial=-np.inf)))
        return _missing(
            _UNIT_CURRENT,
            f"SS still below the limit at the end of the sweep; I60 is above "
            f"{_fmt(10**bound)} µA/µm ({label})",
        )
    return Metric(float(10 ** np.max(crossings)), _UNIT_CURRENT)


def figures_of_merit(
    vg_V: ArrayLike,
    id_uA_per_um: ArrayLike,
    temperature_K: float = 300.0,
    ioff_target_uA_per_um: float = 1e-3,
    vdd_V: float = 0.3,
    ith_uA_per_um: float | None = None,
    ss_floor_uA_per_um: float | None = None,
) -> Metrics:
    """Figures of merit of a transfer curve.

    Parameters
    ----------
    vg_V : array_like
        gate voltages, strictly increasing, not necessarily uniform [V]
    id_uA_per_um : array_like
        drain current per width at each gate voltage [µA/µm]; Id <= 0 is missing for every
        operation on log10(Id)
    temperature_K : float
        temperature at which the curve was computed, sets the thermionic limit [K]
    ioff_target_uA_per_um : float
        off-current target Ioff [µA/µm]; the default 1e-3 µA/µm = 1 nA/µm is a
        high-performance-logic figure, low-power targets are lower, e.g. 1e-5 µA/µm
        (10 pA/µm) (common practice, no source)
    vdd_V : float
        supply voltage, the gate swing from Voff to the on-state [V]
    ith_uA_per_um : float or None
        constant-current threshold criterion [µA/µm]; None takes 0.1 µA/µm = 100 nA/µm
        (common practice, no source)
    ss_floor_uA_per_um : float or None
        SS_min is taken only over samples with Id >= this floor [µA/µm]; None takes
        Ioff target / 100 (a choice of this model, no source): a swing far below Ioff
        is not a switching figure, and a deep off-state is where numerical noise lives

    Returns
    -------
    Metrics
        each figure of merit as a :class:`Metric` (value, or None and a reason) and the
        settings used

    Notes
    -----
    Interpolation is linear in log10(Id) against Vg between neighbouring samples with
    Id > 0; missing samples (Id <= 0) are skipped. The forward branch is the part of the
    curve from its minimum (first sample of least Id) towards higher Vg; an ambipolar branch
    lies at lower Vg than the minimum.

    - **SS_min** [mV/dec]: least point swing (:func:`point_swing_mV_per_dec`) over the
      samples with Id >= the floor and a finite positive swing (common practice, no
      source); **ss_min_current** is Id at that sample. Missing when no sample above the
      floor has a rising current.
    - **Voff** [V]: Vg at which Id = Ioff, the first upward crossing after the minimum
      (Seabaugh & Zhang [4] benchmark TFETs at a fixed Ioff). Missing when Id stays above
      Ioff over the sweep or never reaches it on the forward branch.
    - **Ion** [µA/µm]: Id at Vg = Voff + Vdd; missing when Voff is, or when Voff + Vdd lies
      beyond the sweep. **Ion/Ioff** [1] = Ion / Ioff target.
    - **SS_avg4** [mV/dec]: [Vg(10^4 I0) - Vg(I0)] / 4 with I0 = Ioff target, Vg(10^4 I0)
      the first upward crossing after Voff (average swing over four decades, as used by
      Lu & Seabaugh [3]). Missing when Voff is, or when 10^4 I0 is not reached.
    - **I60** [µA/µm]: the largest current at which the point swing goes from below to above
      60 mV/dec, the definition of Vandenberghe et al. [2]; the crossing is placed by
      linear interpolation, in log10(Id), of the local slope d log10(Id)/dVg = 1000/SS
      between the two samples that bracket it. Missing when SS is never below 60 mV/dec,
      and when SS is still below it at the end of the sweep: I60 then lies beyond the
      sweep, and the reason gives the lower bound (a lower bound is not a value).
      **i60_thermal** is the same crossing at the temperature-scaled limit (ln 10) kT/q
      (59.53 mV/dec at 300 K, 39.7 at 200 K), a separately named figure of this model.
    - **Vth** [V]: constant-current threshold, Vg at which Id = Ith on the forward branch
      (common practice, no source). Missing when not crossed.
    - **Ambipolar current** [µA/µm]: Id at the most negative Vg of the sweep (its first
      sample), as sampled. In a p+/i/n+ tunnel FET a negative gate opens a second tunnel
      junction at the drain, whose current rises again towards negative Vg; this value is
      that branch's current only if the sweep starts deep enough to reach it. Missing only
      when that sample is not finite.
    """
    vg, current = _validated_curve(vg_V, id_uA_per_um)
    _check_settings(temperature_K, ioff_target_uA_per_um, vdd_V)
    ith = DEFAULT_ITH_UA_PER_UM if ith_uA_per_um is None else float(ith_uA_per_um)
    if not (math.isfinite(ith) and ith > 0.0):
        raise ValueError(f"ith_uA_per_um must be finite and positive, got {ith_uA_per_um!r}")
    floor = _ss_floor(ioff_target_uA_per_um, ss_floor_uA_per_um)

    log_all = _log10_current(current)
    slope_all = _log_slope_per_V(vg, log_all)
    valid = np.isfinite(log_all)
    vg_ok, log_ok = vg[valid], log_all[valid]

    # SS_min above the current floor
    i_ss = _ss_min_index(current, slope_all, floor)
    if i_ss is not None:
        ss_min = Metric(1e3 / float(slope_all[i_ss]), _UNIT_SWING)
        ss_min_at = Metric(float(current[i_ss]), _UNIT_CURRENT)
    else:
        rising = np.isfinite(slope_all) & (slope_all > 0.0)
        why = (f"Id rises with Vg nowhere above the floor {_fmt(floor)} µA/µm"
               if np.any(rising) else "Id rises with Vg nowhere on the sweep")
        ss_min = _missing(_UNIT_SWING, f"{why}: no finite swing")
        ss_min_at = _missing(_UNIT_CURRENT, f"SS_min is missing: {why}")

    # Voff, Ion, Ion/Ioff, SS_avg4
    off = _forward_branch_crossing(vg_ok, log_ok, ioff_target_uA_per_um, "Ioff")
    if isinstance(off, str):
        voff = _missing(_UNIT_VOLTAGE, off)
        why = f"Voff is missing: {off}"
        ion = _missing(_UNIT_CURRENT, why)
        ion_ioff = _missing(_UNIT_RATIO, why)
        ss_avg4 = _missing(_UNIT_SWING, why)
    else:
        v_off, seg = off
        voff = Metric(v_off, _UNIT_VOLTAGE)
        v_on = v_off + vdd_V
        if v_on > vg_ok[-1]:
            why = (
                f"Voff + Vdd = {_fmt(v_on)} V lies beyond the end of the sweep "
                f"(last sample with Id > 0 at Vg = {_fmt(vg_ok[-1])} V)"
            )
            ion = _missing(_UNIT_CURRENT, why)
            ion_ioff = _missing(_UNIT_RATIO, f"Ion is missing: {why}")
        else:
            ion_value = float(10 ** np.interp(v_on, vg_ok, log_ok))
            ion = Metric(ion_value, _UNIT_CURRENT)
            ion_ioff = Metric(ion_value / ioff_target_uA_per_um, _UNIT_RATIO)
        i_top = ioff_target_uA_per_um * 10.0**_AVG_DECADES
        top = _upward_crossing(vg_ok, log_ok, math.log10(i_top), seg)
        if top is None:
            ss_avg4 = _missing(
                _UNIT_SWING,
                f"Id never reaches 10^{_AVG_DECADES} Ioff = {_fmt(i_top)} µA/µm after Voff "
                f"(largest Id there is {_fmt(10 ** np.max(log_ok[seg:]))} µA/µm)",
            )
        else:
            ss_avg4 = Metric(1e3 * (top[0] - v_off) / _AVG_DECADES, _UNIT_SWING)

    # Vth
    th = _forward_branch_crossing(vg_ok, log_ok, ith, "Ith")
    vth = _missing(_UNIT_VOLTAGE, th) if isinstance(th, str) else Metric(th[0], _UNIT_VOLTAGE)

    # Ambipolar branch
    if math.isfinite(current[0]):
        ambipolar = Metric(float(current[0]), _UNIT_CURRENT)
    else:
        ambipolar = _missing(_UNIT_CURRENT, f"Id at the first sample is {current[0]!r}")

    thermal = thermionic_limit_mV_per_dec(temperature_K)
    return Metrics(
        ss_min_mV_per_dec=ss_min,
        ss_avg4_mV_per_dec=ss_avg4,
        i60_uA_per_um=_i60(log_all, slope_all, I60_CRITERION_MV_PER_DEC,
                           f"{I60_CRITERION_MV_PER_DEC:g} mV/dec"),
        ioff_uA_per_um=Metric(float(ioff_target_uA_per_um), _UNIT_CURRENT),
        voff_V=voff,
        ion_uA_per_um=ion,
        ion_ioff=ion_ioff,
        vth_V=vth,
        ambipolar_uA_per_um=ambipolar,
        ioff_target_uA_per_um=float(ioff_target_uA_per_um),
        vdd_V=float(vdd_V),
        ith_uA_per_um=ith,
        temperature_K=float(temperature_K),
        ss_min_current_uA_per_um=ss_min_at,
        i60_thermal_uA_per_um=_i60(
            log_all, slope_all, thermal,
            f"the thermionic limit (ln 10) kT/q = {thermal:.2f} mV/dec at {temperature_K:g} K"),
        ss_floor_uA_per_um=floor,
    )


def _check_settings(temperature_K: float, ioff_target_uA_per_um: float, vdd_V: float) -> None:
    for name, value in (
        ("temperature_K", temperature_K),
        ("ioff_target_uA_per_um", ioff_target_uA_per_um),
        ("vdd_V", vdd_V),
    ):
        if not (math.isfinite(value) and value > 0.0):
            raise ValueError(f"{name} must be finite and positive, got {value!r}")


def _ss_floor(ioff_target_uA_per_um: float, ss_floor_uA_per_um: float | None) -> float:
    floor = (DEFAULT_SS_FLOOR_PER_IOFF * ioff_target_uA_per_um if ss_floor_uA_per_um is None
             else float(ss_floor_uA_per_um))
    if not (math.isfinite(floor) and floor >= 0.0):
        raise ValueError(f"ss_floor_uA_per_um must be finite and >= 0, got {ss_floor_uA_per_um!r}")
    return floor


def _ss_min_index(current: np.ndarray, slope: np.ndarray, floor: float) -> int | None:
    """Index of the sample with the steepest rise (least swing) among those with
    Id >= floor, or None."""
    ok = np.isfinite(slope) & (slope > 0.0) & np.isfinite(current) & (current >= floor)
    if not np.any(ok):
        return None
    idx = np.flatnonzero(ok)
    return int(idx[np.argmax(slope[idx])])


def refinement_voltages(
    vg_V: ArrayLike,
    id_uA_per_um: ArrayLike,
    temperature_K: float = 300.0,
    ioff_target_uA_per_um: float = 1e-3,
    vdd_V: float = 0.3,
    ss_floor_uA_per_um: float | None = None,
    min_step_V: float = REFINE_MIN_STEP_V,
    max_decades: float = REFINE_MAX_DECADES,
) -> np.ndarray:
    """Gate voltages to add to a sampled transfer curve so that its figures of merit no
    longer depend on the sampling [V] (empty when none is needed).

    Midpoints of the intervals wider than ``min_step_V`` (bisection stops at a spacing
    between ``min_step_V`` / 2 and ``min_step_V``)

    - where log10(Id) changes by more than ``max_decades`` and the larger end is above the
      SS_min floor (where log Id changes fastest);
    - on both sides of the SS_min sample (the three-point swing there then uses close
      neighbours);
    - around the I60 crossings at 60 mV/dec and at (ln 10) kT/q: the bracketing interval
      and its two neighbours (the slopes at the bracket's ends use those neighbours);
    - bracketing Id = Ioff, Id = 10^4 Ioff (Voff, SS_avg4) and Vg = Voff + Vdd (Ion).

    Parameters
    ----------
    vg_V, id_uA_per_um : the curve as sampled so far [V], [µA/µm]
    temperature_K, ioff_target_uA_per_um, vdd_V, ss_floor_uA_per_um : as in
        :func:`figures_of_merit`
    min_step_V : finest spacing [V]; max_decades : largest change of log10(Id) between
        neighbours above the floor [decades]

    Notes
    -----
    On a uniform base grid bisection produces points of the finer uniform grids, so a
    20 mV sweep refined to 2.5 mV near each figure reads that figure from the same samples
    as a 2.5 mV sweep. Adaptive refinement of a sampled function where its error
    indicator is largest is common practice (no source).
    """
    vg, current = _validated_curve(vg_V, id_uA_per_um)
    _check_settings(temperature_K, ioff_target_uA_per_um, vdd_V)
    floor = _ss_floor(ioff_target_uA_per_um, ss_floor_uA_per_um)
    log_all = _log10_current(current)
    slope = _log_slope_per_V(vg, log_all)
    n = vg.size
    wide = np.diff(vg) > min_step_V * (1 + 1e-6)
    split = np.zeros(n - 1, bool)

    def mark(i: int) -> None:
        if 0 <= i < n - 1:
            split[i] = True

    # where log Id changes fastest
    dlog = np.abs(np.diff(log_all))
    top = np.fmax(log_all[:-1], log_all[1:])
    above = top >= math.log10(floor) if floor > 0 else np.isfinite(top)
    split |= (dlog > max_decades) & above  # NaN (missing samples) compares False
    # around the SS_min sample
    i_ss = _ss_min_index(current, slope, floor)
    if i_ss is not None:
        mark(i_ss - 1)
        mark(i_ss)
    # around the I60 crossings (largest crossing of each criterion)
    known = np.flatnonzero(np.isfinite(slope))
    for limit in (I60_CRITERION_MV_PER_DEC, thermionic_limit_mV_per_dec(temperature_K)):
        ups = _i60_crossings(slope, limit)
        if ups.size:
            j, j1 = int(known[ups[-1]]), int(known[ups[-1] + 1])
            for i in range(j - 1, j1 + 1):
                mark(i)
    # Voff, 10^4 Ioff and Voff + Vdd
    valid = np.flatnonzero(np.isfinite(log_all))
    off = _forward_branch_crossing(vg[valid], log_all[valid], ioff_target_uA_per_um, "Ioff")
    if not isinstance(off, str):
        mark(int(valid[off[1]]))
        top4 = _upward_crossing(vg[valid], log_all[valid],
                                math.log10(ioff_target_uA_per_um) + _AVG_DECADES, off[1])
        if top4 is not None:
            mark(int(valid[top4[1]]))
        v_on = off[0] + vdd_V
        if vg[0] < v_on < vg[-1]:
            mark(int(np.searchsorted(vg, v_on)) - 1)
    split &= wide
    return 0.5 * (vg[:-1] + vg[1:])[split]


def refine_curve(
    vg_V: ArrayLike,
    id_uA_per_um: ArrayLike,
    evaluate: Callable[[np.ndarray], np.ndarray],
    max_rounds: int = 12,
    **settings: float | None,
) -> tuple[np.ndarray, np.ndarray]:
    """Refine a sampled transfer curve with :func:`refinement_voltages` until no point is
    asked for (or ``max_rounds``).

    Parameters
    ----------
    vg_V, id_uA_per_um : base samples [V], [µA/µm]
    evaluate : callable taking the new gate voltages [V] and returning Id there [µA/µm]
    max_rounds : bisection rounds at most [-]
    **settings : keyword arguments of :func:`refinement_voltages`

    Returns
    -------
    (vg, id) : the merged, sorted samples [V], [µA/µm]
    """
    vg, current = _validated_curve(vg_V, id_uA_per_um)
    for _ in range(max_rounds):
        new = refinement_voltages(vg, current, **settings)
        if new.size == 0:
            break
        got = np.asarray(evaluate(new), float)
        vg = np.concatenate([vg, new])
        current = np.concatenate([current, got])
        order = np.argsort(vg)
        vg, current = vg[order], current[order]
    return vg, current
