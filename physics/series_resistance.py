"""Series resistance of the source and drain accesses, solved self-consistently per bias.

Sign convention (source grounded outside the device, drain current I > 0 flowing into
the drain for V_d > 0): the current raises the internal source node by I R_s and drops
I R_d across the drain access, so the intrinsic device sees

    V_gs' = V_g - I R_s,      V_ds' = V_d - I (R_s + R_d)                         (1)

and the external current is the intrinsic current at those voltages, I = I_int(V_gs',
V_ds') (the usual lumped access-resistance model: Sze & Ng, *Physics of Semiconductor
Devices*, 3rd ed., 2007, sec. 6.2.5; Taur & Ning, *Fundamentals of Modern VLSI Devices*,
2nd ed., 2009, sec. 4.2). Resistances are per width [ohm um], currents per width
[uA/um], so I R [V] = 1e-6 x (I [uA/um]) x (R [ohm um]).

The scalar equation h(I) = I - I_int(V(I)) = 0 is solved on the current: the first
solve is at the external bias (I = 0 in (1)), which gives the intrinsic current
I_0 = I_int(V_g, V_d); the second is at I_0 (or, in a sweep, at the current the
previous points predict); then secant steps on ln|I| - ln|I_int(V(I))| (nearly linear
where the current is exponential in the voltages; the first on the linear form, exact
for a linear device), kept inside the bracket of
the points on either side of the root, with a bisection (geometric once the bracket is
away from zero) whenever a step leaves the bracket or two steps in a row land on the
same side. A point is
converged when the external bias implied by the solved point, V' + I_int(V') R, is within
``tol_V`` of the requested one, i.e. |I_int(V(I)) - I| (R_s + R_d) <= tol_V. In
subthreshold, where I_0 (R_s + R_d) is below ``tol_V``, the first solve is already
converged (no extra solve).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from sub60.physics.design import VD_RANGE_V, VG_RANGE_V

#: [V] per (uA/um x ohm um).
_VOLT_PER_UA_OHM = 1e-6

#: Default tolerance on the external bias a series-resistance point reproduces [V].
SERIES_TOLERANCE_V = 1e-5


@dataclass(frozen=True)
class SeriesSolution:
    """A self-consistent point of eq. (1).

    current_uA_per_um : external (= intrinsic) drain current [uA/um]
    vg_intrinsic_V, vd_intrinsic_V : V_gs', V_ds' of the last solve [V]
    current_at_external_bias_uA_per_um : I_0, the intrinsic current at the external
        voltages (the device without its access resistances) [uA/um]
    solves : intrinsic solves used (1 = no extra solve) [-]
    """

    current_uA_per_um: float
    vg_intrinsic_V: float
    vd_intrinsic_V: float
    current_at_external_bias_uA_per_um: float
    solves: int

    @property
    def extra_solves(self) -> int:
        """Solves beyond the one at the external bias [-]."""
        return self.solves - 1


def intrinsic_bias(vg_V: float, vd_V: float, current_uA_per_um: float, source_resistance_ohm_um: float,
                   drain_resistance_ohm_um: float) -> tuple[float, float]:
    """V_gs', V_ds' of eq. (1) for a current [V], clipped to the solvers' bias ranges.

    Parameters
    ----------
    vg_V, vd_V : float
        external gate and drain voltages (source grounded) [V].
    current_uA_per_um : float
        drain current per width [uA/um].
    source_resistance_ohm_um, drain_resistance_ohm_um : float
        access resistances per width [ohm um].
    """
    drop_s = _VOLT_PER_UA_OHM * current_uA_per_um * source_resistance_ohm_um
    drop_d = _VOLT_PER_UA_OHM * current_uA_per_um * drain_resistance_ohm_um
    vg = min(max(vg_V - drop_s, VG_RANGE_V[0]), VG_RANGE_V[1])
    vd = min(max(vd_V - drop_s - drop_d, VD_RANGE_V[0]), VD_RANGE_V[1])
    return vg, vd


def solve_series_resistance(
    intrinsic: Callable[[float, float], float],
    vg_V: float,
    vd_V: float,
    source_resistance_ohm_um: float,
    drain_resistance_ohm_um: float,
    tol_V: float = SERIES_TOLERANCE_V,
    max_solves: int = 20,
    ratio_guess: float | None = None,
) -> SeriesSolution:
    """Drain current with access resistances, eq. (1), by a bracketed secant on the current.

    Parameters
    ----------
    intrinsic : callable
        ``intrinsic(vg_int_V, vd_int_V) -> current [uA/um]``: one intrinsic solve (the
        caller keeps the solved point of the last call). It must be a function of the
        voltages alone (e.g. every call warm-started from the same anchors, not from the
        previous call): the secant and the bracket assume a reproducible I_int(V').
    vg_V, vd_V : float
        external bias [V].
    source_resistance_ohm_um, drain_resistance_ohm_um : float
        R_s, R_d [ohm um] (non-negative).
    tol_V : float
        tolerance on the external bias the converged point reproduces [V].
    max_solves : int
        intrinsic solves allowed [-].
    ratio_guess : float or None
        predicted I / I_0 (e.g. extrapolated from the previous points of a sweep) [-]:
        the second solve is at I = ratio_guess x I_0 instead of the fixed-point step I_0;
        ignored unless in (0, 1].

    Returns
    -------
    SeriesSolution

    Raises
    ------
    ArithmeticError
        when no point within ``tol_V`` is found in ``max_solves`` solves.
    """
    r_tot = _VOLT_PER_UA_OHM * (source_resistance_ohm_um + drain_resistance_ohm_um)

    def evaluate(current: float) -> tuple[float, float, float]:
        vg, vd = intrinsic_bias(vg_V, vd_V, current, source_resistance_ohm_um, drain_resistance_ohm_um)
        return intrinsic(vg, vd), vg, vd

    i0, vg0, vd0 = evaluate(0.0)
    if abs(i0) * r_tot <= tol_V:
        return SeriesSolution(i0, vg0, vd0, i0, 1)
    # on the magnitude m = |I| (the sign of i0): root of h(m) = ln m - ln|I_int(V(m))|,
    # which rises with m (the current falls as the drops grow) and is nearly linear where
    # the current is exponential in the voltages; bracket [lo, hi] with h(lo) < 0 < h(hi)
    sign = 1.0 if i0 > 0 else -1.0
    m0 = abs(i0)
    lo, hi = 0.0, math.inf
    if vd_V * sign > 0:
        # no current without drain bias: the root keeps V_ds' of the sign of V_d,
        # |I| < |V_d| / (R_s + R_d)
        hi = abs(vd_V) / r_tot
    points: list[tuple[float, float]] = []  # (m, h) with finite h
    trial = m0 * ratio_guess if ratio_guess is not None and 0 < ratio_guess <= 1 else m0
    if trial >= hi:
        trial = 0.5 * hi
    solves, same_side, last_side = 1, 0, None
    while solves < max_solves:
        value, vg, vd = evaluate(sign * trial)
        solves += 1
        if abs(sign * trial - value) * r_tot <= tol_V:
            return SeriesSolution(value, vg, vd, i0, solves)
        device = sign * value
        h = math.log(trial) - math.log(device) if device > 0 else math.inf
        if math.isfinite(h):
            points.append((trial, h))
        above = h > 0
        if above:
            hi = trial
        else:
            lo = trial
        same_side = same_side + 1 if above == last_side else 0
        last_side = above
        if lo == 0.0 and above and len(points) <= 1:
            # one point, above the root: the secant of the linear form through
            # (0, -m0) and (m, m - |I_int|), exact for a linear device
            nxt = m0 * trial / (m0 + trial - device)
        elif len(points) >= 2 and points[-1][1] != points[-2][1]:
            (x1, h1), (x2, h2) = points[-2], points[-1]
            nxt = x2 - h2 * (x2 - x1) / (h2 - h1)
        else:
            nxt = device  # below the root: the device's current there bounds it from above
        upper = hi if math.isfinite(hi) else 4.0 * max(m0, trial)
        stalled = same_side >= 2 and lo > 0 and math.isfinite(hi)  # one end of a bracket kept
        if stalled or not lo < nxt < upper:
            # bisect, geometrically once the bracket is away from zero (decades apart)
            nxt = math.sqrt(lo * upper) if lo > 0 else 0.1 * upper
            same_side = 0
        trial = nxt
    raise ArithmeticError(
        f"series resistance: no self-consistent current within {tol_V:g} V in {max_solves} "
        f"solves at Vg = {vg_V:g} V, Vd = {vd_V:g} V")
