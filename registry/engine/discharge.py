"""How the plan's capacitance drains through a setup's path: the one answer that check 9, check
10, the discharge plot and the job card all read, so they give the same numbers.

Two laws, chosen by the instrument's data:

- the instrument's model has a front end (and no divider stands in front of it): the network
  discharge scenario of :mod:`registry.engine.network.scenarios` (C dV/dt = -I(V) integrated
  with the front end solved at each step, PTCs heating until they trip). A PTC that trips in
  the path turns seconds into minutes or hours, which the plain formula cannot show;
- otherwise the first-order RC law through the path's resistance (the divider's, the tool's or
  the mode's input resistance): V(t) = V0 exp(-t/(RC)), t = RC ln(V0/Vs) (circuit theory).

Units: V, F, ohm, s, J, W. The front-end solve is cached in the network package, keyed on the
same conditions check 10 solves, so a setup is integrated once for both checks.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

from .quantity import ENERGY, TIME, VOLTAGE, format_quantity as qtext
from .setups import SetupContext

# How far the front-end solve looks for the time to the safe level when the plan's hold time
# does not reach it (s). Beyond it the time needed is stated as "more than a day".
HORIZON = 86400.0

SRC_RC = "RC discharge: V(t) = V0 exp(-t/RC), t = RC ln(V0/Vs), E = C V**2/2 (circuit theory)"
SRC_FRONT_END = ("front-end discharge: C dV/dt = -I(V) with the front end solved at each step "
                 "(scipy LSODA), PTCs tripping at their adiabatic trip energy; E = C V**2/2")


def discharge_time(resistance: float, capacitance: float, v0: float, v_safe: float) -> float:
    """t = R*C*ln(V0/Vsafe) (s) for a capacitance to fall from ``v0`` to ``v_safe`` through
    ``resistance``; 0 when it is already at or below the safe level, ``inf`` for a safe level
    of 0 V. The one statement of the rule: check 9, the plot and the job card all reach it
    through :func:`discharge_profile`."""
    if v0 <= v_safe:
        return 0.0
    if v_safe <= 0:
        return math.inf
    return resistance * capacitance * math.log(v0 / v_safe)


def absorbed_to(capacitance: float, v0: float, v_safe: float) -> float:
    """E = C*(V0**2 - Vsafe**2)/2 (J) taken by the discharge path to reach ``v_safe``."""
    return 0.5 * capacitance * max(v0 * v0 - v_safe * v_safe, 0.0)


def absorbed_in(capacitance: float, v0: float, resistance: float, duration: float) -> float:
    """E = C*V0**2/2 * (1 - exp(-2t/(RC))) (J) taken by ``resistance`` in ``duration``."""
    tau = resistance * capacitance
    return 0.5 * capacitance * v0 * v0 * (1.0 - math.exp(-2.0 * duration / tau))


def time_text(t: float) -> str:
    """A time (s) as the discharge texts show it: four significant figures, with minutes or
    hours beside a long one ("2132 s (about 36 min)")."""
    text = qtext(float(f"{t:.4g}"), TIME)
    if t >= 7200:
        return f"{text} (about {t / 3600:.1f} h)"
    if t >= 120:
        return f"{text} (about {t / 60:.0f} min)"
    return text


class DischargeUnsolved(Exception):
    """The front end's discharge could not be solved; the text says why."""


@dataclass(frozen=True)
class DischargeProfile:
    """The capacitance ``capacitance`` charged to ``v0`` draining through one path for the
    plan's ``duration`` (how long the path is held on), down to the safe level ``v_safe``.

    ``time_to_safe`` is None when the safe level is not reached within ``duration``;
    ``time_needed`` is the time to the safe level however long it takes (``inf``: not within
    :data:`HORIZON`), or None where it was not looked for (a front end, not a discharge task).
    ``end_voltage`` is the voltage at the end of the hold or at the safe level, whichever comes
    first. ``times``/``voltages`` are the solver's samples (front end only; the RC law is
    evaluated exactly)."""

    method: str  # "front-end" or "rc"
    capacitance: float
    v0: float
    v_safe: float
    duration: float
    resistance: float  # ohm the path shows at the start, V0 / I0
    peak_current: float  # A
    peak_power: float  # W, V0 * peak current (V0**2/R for the RC law)
    time_to_safe: float | None
    time_needed: float | None
    end_voltage: float
    times: tuple[float, ...] = ()
    voltages: tuple[float, ...] = ()
    events: tuple[str, ...] = ()  # what happened on the way ("PT1 trips after 0.220 s ...")

    @property
    def reached(self) -> bool:
        return self.time_to_safe is not None

    @property
    def end_time(self) -> float:
        return self.time_to_safe if self.time_to_safe is not None else self.duration

    @property
    def tau(self) -> float:
        """R*C (s) at the start of the discharge."""
        return self.resistance * self.capacitance

    @property
    def energy_left(self) -> float:
        """E = C*V**2/2 (J) left in the capacitance at :attr:`end_time`."""
        return 0.5 * self.capacitance * self.end_voltage ** 2

    @property
    def absorbed_to_end(self) -> float:
        """E = C*(V0**2 - V_end**2)/2 (J) taken from the capacitance up to :attr:`end_time`."""
        return 0.5 * self.capacitance * max(self.v0 ** 2 - self.end_voltage ** 2, 0.0)

    def absorbed_in_hold(self) -> tuple[float, bool]:
        """(E, bound): the energy (J) the path takes in the whole hold. The RC law gives it
        exactly, C*V0**2/2*(1 - exp(-2T/RC)); a front-end solve stops at the safe level, so
        past it the rest is bounded by all that was stored, C*V0**2/2 (``bound`` True)."""
        if self.method == "rc":
            return absorbed_in(self.capacitance, self.v0, self.resistance, self.duration), False
        if self.time_to_safe is not None and self.time_to_safe < self.duration:
            return 0.5 * self.capacitance * self.v0 ** 2, True
        return self.absorbed_to_end, False

    def voltage_at(self, t: float) -> float:
        """V (V) at ``t`` s: the RC law exactly, or the front-end samples interpolated
        log-linearly (exact for an exponential between two samples)."""
        if self.method == "rc":
            return self.v0 * math.exp(-t / self.tau)
        ts, vs = self.times, self.voltages
        if t <= ts[0]:
            return vs[0]
        if t >= ts[-1]:
            return vs[-1]
        lo, hi = 0, len(ts) - 1
        while hi - lo > 1:
            mid = (lo + hi) // 2
            if ts[mid] <= t:
                lo = mid
            else:
                hi = mid
        t0, t1, v0, v1 = ts[lo], ts[hi], vs[lo], vs[hi]
        if t1 == t0:
            return v1
        f = (t - t0) / (t1 - t0)
        if v0 > 0 and v1 > 0:
            return v0 * (v1 / v0) ** f
        return v0 + (v1 - v0) * f

    @property
    def source(self) -> str:
        return SRC_FRONT_END if self.method == "front-end" else SRC_RC

    def needed_text(self) -> str:
        """The time to the safe level as text, the one form every caller shows."""
        if self.time_needed is None:
            return f"more than {time_text(self.duration)}"
        if math.isinf(self.time_needed):
            if self.v_safe <= 0:
                return "forever (a discharge through a resistance never reaches 0 V)"
            return f"more than {time_text(HORIZON)}"
        return time_text(self.time_needed)

    def outcome(self) -> str:
        """What the hold achieves, in words: "reaches 50 V after 5.545 s", or "is still at
        710.3 V (504.5 J) after 60 s; it needs 2132 s to reach 50 V"."""
        if self.time_to_safe is not None:
            return f"reaches {qtext(self.v_safe, VOLTAGE)} after {time_text(self.time_to_safe)}"
        text = (f"is still at {qtext(self.end_voltage, VOLTAGE)} "
                f"({qtext(self.energy_left, ENERGY)}) after {time_text(self.duration)}")
        if self.time_needed is None:
            return text
        return text + f"; it needs {self.needed_text()} to reach {qtext(self.v_safe, VOLTAGE)}"


def path_resistance(ctx: SetupContext) -> float | None:
    """The resistance (ohm) the capacitance drains through under the RC law: the divider's,
    else the mode's input resistance (a discharge tool's mode carries the tool's)."""
    if ctx.divider is not None:
        return ctx.divider.resistance
    return ctx.mode.input_resistance


def uses_front_end(ctx: SetupContext) -> bool:
    """Whether the discharge goes through the instrument's front end as a circuit: it has one,
    the mode is not a clamp jaw, and no divider stands between it and the capacitance."""
    return (bool(ctx.instrument.front_end) and ctx.divider is None and not ctx.mode.clamp
            and ctx.current_clamp is None)


def rc_profile(resistance: float, capacitance: float, v0: float, v_safe: float,
               duration: float) -> DischargeProfile:
    """The RC law through ``resistance``: t = RC ln(V0/Vs) (0 at or below the safe level,
    ``inf`` for a zero safe level), V(T) = V0 exp(-T/RC), peak I = V0/R, peak P = V0**2/R."""
    tau = resistance * capacitance
    needed = discharge_time(resistance, capacitance, v0, v_safe)
    within = needed if needed <= duration else None
    if within is None:
        end_v = v0 * math.exp(-duration / tau)
    else:
        end_v = v_safe if needed > 0 else v0
    return DischargeProfile("rc", capacitance, v0, v_safe, duration, resistance,
                            v0 / resistance, v0 * v0 / resistance, within, needed, end_v)


def _front_end_profile(ctx: SetupContext, find_needed: bool) -> DischargeProfile:
    from ..errors import WithstandError
    from .network import NetworkError, build_netlist
    from .network.scenarios import SQRT2, discharge
    c = ctx.plan.circuit
    # the conditions exactly as check 10 solves them, so the cached solve is shared
    v0 = float(c.voltage) * (SQRT2 if c.waveform == "ac" else 1.0)
    rs = None if ctx.source_impedance is None else float(ctx.source_impedance)
    capacitance = ctx.capacitance
    assert capacitance is not None  # discharge_profile returns None without a capacitance
    cap, vs, hold = float(capacitance), float(ctx.safe_level), float(ctx.plan.duration)
    try:
        net = build_netlist(ctx.instrument, ctx.mode)
        res = discharge(net, cap, v0, rs, vs, hold)
        longer = None
        if find_needed and res.time_to_safe is None and HORIZON > hold and vs > 0:
            longer = discharge(net, cap, v0, rs, vs, HORIZON)
    except (NetworkError, WithstandError, ArithmeticError, ValueError) as exc:
        raise DischargeUnsolved(str(exc)) from exc
    if vs <= 0:
        # an exponential tail never reaches 0 V: a crossing the integrator reports is its
        # rounding, not a time
        res = dataclasses.replace(res, time_to_safe=None)
        longer = None
        needed = math.inf if find_needed else None
    elif res.time_to_safe is not None:
        needed = res.time_to_safe
    elif longer is not None:
        needed = longer.time_to_safe if longer.time_to_safe is not None else math.inf
    else:
        needed = None
    shown = longer if longer is not None else res
    i0 = res.peak_current
    if i0 > 0:
        r0 = v0 / i0
    else:  # already at the safe level: nothing was solved, take the small-signal resistance
        from .network import netlist_resistance
        r0 = netlist_resistance(net)
    events = tuple(f"{e.element} {e.text}" for e in res.events)
    return DischargeProfile("front-end", cap, v0, vs, hold, r0, i0, v0 * i0, res.time_to_safe,
                            needed, res.voltages[-1], shown.times, shown.voltages, events)


def discharge_profile(ctx: SetupContext) -> DischargeProfile | None:
    """The discharge of the plan's capacitance through the setup's path: the front-end solve
    when :func:`uses_front_end`, else the RC law. None when there is no capacitance or (RC law)
    no resistance recorded. Raises :class:`DischargeUnsolved` when the front end cannot be
    solved. The time needed beyond the hold is looked for on discharge tasks (and always
    given by the RC law)."""
    if not ctx.capacitance:
        return None
    if uses_front_end(ctx):
        return _front_end_profile(ctx, ctx.plan.task == "discharge")
    r = path_resistance(ctx)
    if r is None or r <= 0:
        return None
    return rc_profile(r, ctx.capacitance, ctx.derived.peak_voltage, ctx.safe_level,
                      ctx.plan.duration)
