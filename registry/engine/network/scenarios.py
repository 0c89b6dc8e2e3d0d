"""The three scenarios of docs/rules.md, check 10 on one netlist: steady, impulse, discharge.

Each returns the solves it made, labelled by the state of the elements (PTCs cold or tripped,
fuses intact or open, gas tubes fired or not), and what happened on the way (trips, their
times). The limits are held against these in :mod:`registry.engine.network.limits`.
"""

from __future__ import annotations

import dataclasses
import json
import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np
# scipy is imported where a solve first needs it (half a second, the most of any import in
# the package): a command or a server start that solves nothing does not pay for it.

from ..spec import Element
from .devices import ptc_trip_energy, ptc_trip_time
from .netlist import OPEN_RESISTANCE, Netlist, NetworkError, SolveFailed
from .solver import COLD, Solution, State, solve

SQRT2 = math.sqrt(2.0)


@dataclass
class Snapshot:
    """One solve in one state: ``heat`` at the working voltage (rms for ac), ``peak`` at its
    peak (the same solve for dc)."""

    label: str
    state: State
    heat: Solution
    peak: Solution


@dataclass
class Event:
    element: str
    text: str  # what happened, with numbers
    time: float | None = None  # s
    current: float | None = None  # A through it when it happened
    cold_powers: dict[str, float] = field(default_factory=dict)  # W per element before it


@dataclass
class SteadyResult:
    snapshots: list[Snapshot]
    events: list[Event]
    notes: list[tuple[str, str]]  # (element id, assumption)

    @property
    def final(self) -> Snapshot:
        return self.snapshots[-1]


# -- PTC in the tripped state -------------------------------------------------------------------

SCAN_PER_DECADE = 8  # grid points per decade of R in the tripped-state scan (our choice)


def _bracketed_root(f, a: float, b: float, what: str) -> float:
    """The root of ``f`` in [a, b] (f(a), f(b) of opposite signs) by scipy's brentq; scipy's
    complaints (no sign change, no convergence) become :class:`SolveFailed`."""
    from scipy.optimize import brentq
    try:
        return brentq(f, a, b, xtol=1e-12, rtol=1e-12)
    except (ValueError, RuntimeError) as exc:
        raise SolveFailed(f"{what}: {exc}") from None


def tripped_resistance(net: Netlist, state: State, ptc_id: str, vs: float, rs: float | None,
                       power: float | None, cold: float | None) -> tuple[float, str]:
    """The resistance at which a tripped PTC takes ``power`` (W), its datasheet
    ``tripped_power``, from the circuit around it: the largest R with V(R)**2 / R = P (the
    high-resistance branch, where a tripped PTC sits). Without a tripped power it is taken as
    open, which gives it the whole voltage the rest of the circuit leaves (conservative for its
    own voltage). Returns (R, remark).

    The search: with V_open its voltage when it is open, V(R) <= V_open at every R (the voltage
    across an element of a passive network rises with its resistance: V = Vth R / (R + Rth) by
    Thevenin's theorem for the linear part, and likewise with monotone clamps), so
    f(R) = ln(V(R)**2 / (R P)) <= ln(R_hi / R) with R_hi = V_open**2 / P: no root lies above
    R_hi, and R_hi itself is the root when the PTC alone takes V_open (straight across a stiff
    source, where f(R_hi) is zero to rounding). Below R_hi, f is scanned down in log R
    (:data:`SCAN_PER_DECADE` points a decade) to the cold resistance; the first point where f
    turns positive brackets the largest root, which brentq then finds. f need not be monotonic
    (other PTCs and clamps share the current): only the bracket matters. Without a positive
    point on the grid, a bounded maximisation around the grid's largest f looks for a hump
    narrower than a grid step before it concludes that the circuit cannot hold the PTC
    tripped."""
    if power is None or power <= 0:
        return OPEN_RESISTANCE, "tripped_power not given: taken as open"
    if cold is None:  # as the solver says of a PTC without its resistance
        raise NetworkError(f"{ptc_id} has no resistance: the front end cannot be solved")
    open_sol = solve(net, vs, rs, state.with_ptc(ptc_id, OPEN_RESISTANCE))
    v_open = abs(open_sol.voltage[ptc_id])
    r_hi = v_open ** 2 / power
    if not r_hi > cold:
        return cold, (f"the circuit cannot hold it tripped ({v_open:.4g} V open-circuit gives "
                      "less than its tripped power): it resets and cycles; taken as cold")
    log_p = math.log(power)

    def f(log_r: float) -> float:
        v = abs(solve(net, vs, rs, state.with_ptc(ptc_id, math.exp(log_r))).voltage[ptc_id])
        return 2.0 * math.log(max(v, 1e-300)) - log_r - log_p

    what = f"the tripped resistance of {ptc_id}"
    top, bottom = math.log(r_hi), math.log(cold)
    f_top = f(top)
    if f_top >= 0:
        return r_hi, ""
    n = max(2, math.ceil((top - bottom) / math.log(10.0) * SCAN_PER_DECADE))
    grid = [top + (bottom - top) * k / n for k in range(n + 1)]
    values = [f_top]
    for k in range(1, n + 1):
        fx = f(grid[k])
        if fx > 0:
            return math.exp(_bracketed_root(f, grid[k], grid[k - 1], what)), ""
        values.append(fx)
    k = max(range(n + 1), key=values.__getitem__)
    lo, hi = grid[min(k + 1, n)], grid[max(k - 1, 0)]
    from scipy.optimize import minimize_scalar
    try:
        hump = minimize_scalar(lambda x: -f(x), bounds=(lo, hi), method="bounded",
                               options={"xatol": 1e-6})
    except (ValueError, RuntimeError) as exc:
        raise SolveFailed(f"{what}: {exc}") from None
    if hump.success and -hump.fun > 0:
        # f(hi) <= 0 (a grid point), f(hump.x) > 0: the largest root lies between them
        return math.exp(_bracketed_root(f, float(hump.x), hi, what)), ""
    return cold, ("the circuit cannot deliver its tripped power at any resistance above "
                  "the cold one: it resets and cycles; taken as cold")


SETTLE_TOL = 1e-6  # relative change of every tripped resistance between two sweeps
SETTLE_SWEEPS = 60


def settle_tripped(net: Netlist, state: State, vs: float, rs: float | None,
                   events: list | None = None) -> State:
    """Tripped PTCs that share the source's current, each at the resistance that takes its
    tripped power with the others as they are: a Gauss-Seidel sweep of
    :func:`tripped_resistance` over the tripped PTCs until no resistance moves by more than
    :data:`SETTLE_TOL` (relative). One PTC tripping changes what the others see (a PTC in a
    side branch gets more voltage when the one in the main path trips), so resistances found
    one after the other do not hold together. (Nonlinear Gauss-Seidel: Ortega and Rheinboldt,
    Iterative Solution of Nonlinear Equations in Several Variables, 1970, from memory.) A PTC
    the others leave unable to hold its
    tripped power goes back to cold (noted in ``events``). Raises :class:`SolveFailed` if the
    sweeps do not settle."""
    tripped = [id for id, r in state.ptc
               if r < OPEN_RESISTANCE and (net.element(id).get("tripped_power") or 0) > 0]
    if len(tripped) < 2:
        return state
    for _ in range(SETTLE_SWEEPS):
        moved = 0.0
        for id in tripped:
            p = net.element(id)
            old = state.ptc_resistance(id)
            assert old is not None  # tripped holds only PTCs in state.ptc
            r, remark = tripped_resistance(net, state, id, vs, rs, p.get("tripped_power"),
                                           p.get("resistance"))
            if remark and r == p.get("resistance") and old != r and events is not None:
                events.append(Event(id, "with the other PTCs tripped as well, " + remark))
            moved = max(moved, abs(r - old) / max(r, old))
            state = state.with_ptc(id, r)
        if moved <= SETTLE_TOL:
            return state
    raise SolveFailed(f"the tripped states of {', '.join(tripped)} do not settle together "
                      f"(after {SETTLE_SWEEPS} sweeps)")


def _settle_tubes(net: Netlist, state: State, vs: float, rs, key: str, notes) -> State:
    """Fire each gas tube whose voltage exceeds its sparkover (``key``), as an arc voltage
    source with the sign of that voltage; put out a fired one that carries no current the arc
    voltage can hold (follow current of the wrong sign)."""
    tubes = net.of_type("gas-tube")
    if not tubes:
        return state
    for _ in range(2 * len(tubes) + 1):
        sol = solve(net, vs, rs, state)
        changed = False
        for t in tubes:
            spark = t.get(key)
            if t.id in state.fired:
                arc = dict(state.arcs)[t.id]
                if sol.current[t.id] * arc <= 0:
                    state = state.with_arc(t.id, None)
                    changed = True
            elif spark is not None and abs(sol.voltage[t.id]) > spark:
                state = state.with_arc(t.id, math.copysign(t.get("arc_voltage") or 0.0,
                                                           sol.voltage[t.id]))
                changed = True
        if not changed:
            return state
    return state


def _tube_notes(net: Netlist, key: str) -> list[tuple[str, str]]:
    out = []
    for t in net.of_type("gas-tube"):
        if t.get(key) is None:
            out.append((t.id, f"no {key}: assumed not to fire (the rest of the front end then "
                              "takes the whole stress)"))
        elif t.get("arc_voltage") is None:
            out.append((t.id, "no arc_voltage: taken as 0 V when fired"))
    return out


# -- kept solves: the results as JSON text and back (floats by repr, so exact) -------------

def _state_doc(st: State) -> dict:
    return {"ptc": [list(p) for p in st.ptc], "arcs": [list(a) for a in st.arcs],
            "blown": sorted(st.blown)}


def _state_of(d: dict) -> State:
    return State(tuple((str(i), float(r)) for i, r in d["ptc"]),
                 tuple((str(i), float(v)) for i, v in d["arcs"]), frozenset(d["blown"]))


def _solution_doc(sol: Solution) -> dict:
    """A solve without its warm-start data (``raw``), which only a solve's next step reads."""
    return {"node_voltage": sol.node_voltage, "voltage": sol.voltage, "current": sol.current,
            "source_current": sol.source_current, "iterations": sol.iterations}


def _solution_of(d: dict) -> Solution:
    return Solution(dict(d["node_voltage"]), dict(d["voltage"]), dict(d["current"]),
                    float(d["source_current"]), int(d["iterations"]))


def _event_of(d: dict) -> Event:
    return Event(d["element"], d["text"], d["time"], d["current"], dict(d["cold_powers"]))


def _dump_steady(res: SteadyResult) -> str:
    snaps = [{"label": s.label, "state": _state_doc(s.state), "heat": _solution_doc(s.heat),
              "peak": None if s.peak is s.heat else _solution_doc(s.peak)}
             for s in res.snapshots]
    return json.dumps({"snapshots": snaps, "events": [dataclasses.asdict(e) for e in res.events],
                       "notes": res.notes})


def _load_steady(text: str) -> SteadyResult:
    d = json.loads(text)
    snaps = []
    for s in d["snapshots"]:
        heat = _solution_of(s["heat"])
        peak = heat if s["peak"] is None else _solution_of(s["peak"])
        snaps.append(Snapshot(str(s["label"]), _state_of(s["state"]), heat, peak))
    return SteadyResult(snaps, [_event_of(e) for e in d["events"]],
                        [(str(i), str(t)) for i, t in d["notes"]])


def _dump_impulse(res: ImpulseResult) -> str:
    return json.dumps({"solution": _solution_doc(res.solution), "state": _state_doc(res.state),
                       "notes": res.notes})


def _load_impulse(text: str) -> ImpulseResult:
    d = json.loads(text)
    return ImpulseResult(_solution_of(d["solution"]), _state_of(d["state"]),
                         [(str(i), str(t)) for i, t in d["notes"]])


# -- 1. steady --------------------------------------------------------------------------------

def steady(net: Netlist, voltage: float, waveform: str, rs: float | None,
           duration: float) -> SteadyResult:
    """:func:`solve_steady`, or the same solve kept by a plugged-in store (:mod:`.cache`),
    keyed by the netlist (its switches closed in the mode included) and these values."""
    from .cache import stored
    return stored("steady", net, (voltage, waveform, rs, duration),
                  lambda: solve_steady(net, voltage, waveform, rs, duration),
                  _dump_steady, _load_steady)


def solve_steady(net: Netlist, voltage: float, waveform: str, rs: float | None,
                 duration: float) -> SteadyResult:
    """The working voltage behind the source impedance: PTCs cold first; a PTC whose current
    exceeds its trip current trips after the adiabatic trip time (if within ``duration``), a
    fuse whose current exceeds its rating opens; solve again until nothing changes."""
    v_heat = voltage
    v_peak = voltage * SQRT2 if waveform == "ac" else voltage
    notes = _tube_notes(net, "sparkover_dc")
    state = _settle_tubes(net, COLD, v_peak, rs, "sparkover_dc", notes)

    def snap(label, st):
        heat = solve(net, v_heat, rs, st)
        peak = solve(net, v_peak, rs, st) if v_peak != v_heat else heat
        return Snapshot(label, st, heat, peak)

    snapshots = [snap("cold", state)]
    events: list[Event] = []
    ptcs = net.of_type("ptc")
    fuses = net.of_type("fuse")
    considered: set[str] = set()
    for _ in range(len(ptcs) + len(fuses) + 1):
        now = snapshots[-1]
        changes: list[tuple[str, Element, float, float | None]] = []
        for f in fuses:
            if f.id in now.state.blown or f.id in considered:
                continue
            i = abs(now.heat.current[f.id])
            rated = f.get("current")
            if rated is not None and i > rated:
                changes.append(("fuse", f, i, None))
        for p in ptcs:
            if p.id in considered or now.state.ptc_resistance(p.id) is not None:
                continue
            i = abs(now.heat.current[p.id])
            threshold = p.get("trip_current") or p.get("hold_current")
            if threshold is None or i <= threshold:
                continue
            r = p.get("resistance")
            assert r is not None  # the cold solve above raises NetworkError without it
            t_trip = None
            t_t, i_t = p.get("trip_time"), p.get("trip_time_current")
            if t_t is not None and i_t is not None:
                t_trip = ptc_trip_time(i, r, ptc_trip_energy(r, t_t, i_t))
            if t_trip is not None and t_trip > duration:
                considered.add(p.id)
                events.append(Event(p.id, f"carries {i:.4g} A, above its trip current, but "
                                          f"would take {t_trip:.3g} s to trip, longer than the "
                                          f"{duration:.3g} s connected: stays cold", t_trip, i))
                continue
            changes.append(("ptc", p, i, t_trip))
        if not changes:
            break
        state = now.state
        labels = []
        cold_powers = {e.id: now.heat.power(e.id) for e in net.elements}
        for kind, e, i, t in changes:
            considered.add(e.id)
            if kind == "fuse":
                state = state.with_blown(e.id)
                events.append(Event(e.id, f"carries {i:.4g} A, above its {e.get('current'):.4g}"
                                          " A rating: opens", None, i, cold_powers))
                labels.append(f"{e.id} open")
            else:
                r_t, remark = tripped_resistance(net, state, e.id, v_heat, rs,
                                                 e.get("tripped_power"), e.get("resistance"))
                if r_t == e.get("resistance"):
                    events.append(Event(e.id, remark, t, i, cold_powers))
                    continue
                state = state.with_ptc(e.id, r_t)
                when = f" after about {t:.3g} s" if t is not None else \
                    " (no trip point given: trip time unknown)"
                events.append(Event(e.id, f"carries {i:.4g} A, above its trip current: trips"
                                          f"{when}" + (f"; {remark}" if remark else ""),
                                    t, i, cold_powers))
                labels.append(f"{e.id} tripped")
        if state == now.state:
            break
        state = settle_tripped(net, state, v_heat, rs, events)
        state = _settle_tubes(net, state, v_peak, rs, "sparkover_dc", notes)
        snapshots.append(snap(", ".join(labels), state))
    return SteadyResult(snapshots, events, notes)


# -- 2. impulse -------------------------------------------------------------------------------

@dataclass
class ImpulseResult:
    solution: Solution
    state: State
    notes: list[tuple[str, str]]


def impulse(net: Netlist, peak: float, rg: float | None) -> ImpulseResult:
    """:func:`solve_impulse`, or the same solve kept by a plugged-in store (:mod:`.cache`)."""
    from .cache import stored
    return stored("impulse", net, (peak, rg), lambda: solve_impulse(net, peak, rg),
                  _dump_impulse, _load_impulse)


def solve_impulse(net: Netlist, peak: float, rg: float | None) -> ImpulseResult:
    """The expected transient's peak behind the generator impedance, PTCs cold, solved at the
    peak (the elements are taken as resistive at the 1.2/50 us wave's time scale)."""
    notes = _tube_notes(net, "sparkover_impulse")
    state = _settle_tubes(net, COLD, peak, rg, "sparkover_impulse", notes)
    return ImpulseResult(solve(net, peak, rg, state), state, notes)


# -- 3. discharge -----------------------------------------------------------------------------

@dataclass
class DischargeResult:
    """A capacitor C charged to V0 discharged through the mode's path (V, A, J, s)."""

    v0: float
    capacitance: float
    times: tuple[float, ...]
    voltages: tuple[float, ...]  # capacitor voltage at ``times``
    peak_current: float
    time_to_safe: float | None  # None: not at the safe level within the duration
    end_time: float
    energy: dict[str, float]  # J per element over the discharge
    peak_voltage: dict[str, float]  # largest |V| across each element
    peak_element_current: dict[str, float]
    peak_power: dict[str, float]
    events: list[Event]
    notes: list[tuple[str, str]]


def _dump_discharge(res: DischargeResult) -> str:
    return json.dumps(dataclasses.asdict(res))


def _load_discharge(text: str) -> DischargeResult:
    d = json.loads(text)
    d["times"], d["voltages"] = tuple(d["times"]), tuple(d["voltages"])
    d["events"] = [Event(**e) for e in d["events"]]
    d["notes"] = [tuple(n) for n in d["notes"]]
    return DischargeResult(**d)


@lru_cache(maxsize=1024)  # check 9, check 10, the plot and the job card ask for the same solve
def discharge(net: Netlist, capacitance: float, v0: float, rs: float | None, v_safe: float,
              duration: float) -> DischargeResult:
    """:func:`integrate_discharge`, or the same solve kept by a plugged-in store
    (:mod:`.cache`): the integration is what costs, so it is what is kept across processes."""
    from .cache import stored
    return stored("discharge", net, (capacitance, v0, rs, v_safe, duration),
                  lambda: integrate_discharge(net, capacitance, v0, rs, v_safe, duration),
                  _dump_discharge, _load_discharge)


def integrate_discharge(net: Netlist, capacitance: float, v0: float, rs: float | None,
                        v_safe: float, duration: float) -> DischargeResult:
    """Integrate C dV/dt = -I(V) in time with scipy's LSODA, the network solved at each step,
    with each PTC heating adiabatically (its I**2 R integrated) until it reaches its trip energy
    (I**2 R t at its datasheet trip point), then held at the resistance that takes its tripped
    power at that moment (it cools far more slowly than a discharge lasts). Stops at the safe
    level or at the end of ``duration`` (the setup is not connected longer)."""
    ids = [e.id for e in net.elements]
    ptcs = [p for p in net.of_type("ptc")]
    trip_energy = {}
    notes: list[tuple[str, str]] = []
    for p in ptcs:
        r, t_t, i_t = p.get("resistance"), p.get("trip_time"), p.get("trip_time_current")
        if t_t is not None and i_t is not None:
            if r is None:  # as the solver says of a PTC without its resistance
                raise NetworkError(f"{p.id} has no resistance: the front end cannot be solved")
            trip_energy[p.id] = ptc_trip_energy(r, t_t, i_t)
        else:
            notes.append((p.id, "no trip point (trip_time at trip_time_current): assumed not "
                                "to trip during the discharge"))
    heating = [p.id for p in ptcs if p.id in trip_energy]
    n_e = len(ids)
    state = COLD
    last: list[Solution | None] = [None]

    def network(v: float) -> Solution:
        sol = solve(net, v, rs, state, guess=last[0])
        last[0] = sol
        return sol

    def rhs(t, y):
        sol = network(float(y[0]))
        d = np.empty_like(y)
        d[0] = -sol.source_current / capacitance
        for k, id in enumerate(ids):
            d[1 + k] = sol.power(id)
        for k, id in enumerate(heating):
            d[1 + n_e + k] = sol.power(id)
        return d

    def safe_event(t, y):
        return y[0] - v_safe
    safe_event.terminal = True  # type: ignore[attr-defined]  # solve_ivp reads these
    safe_event.direction = -1  # type: ignore[attr-defined]

    def trip_event_for(k, id):
        def ev(t, y):
            return y[1 + n_e + k] - trip_energy[id]
        ev.terminal = True  # type: ignore[attr-defined]
        ev.direction = 1  # type: ignore[attr-defined]
        return ev

    y = np.zeros(1 + n_e + len(heating))
    y[0] = v0
    t0 = 0.0
    times, volts = [0.0], [v0]
    peak_v = {id: 0.0 for id in ids}
    peak_i = {id: 0.0 for id in ids}
    peak_p = {id: 0.0 for id in ids}
    peak_current = 0.0
    events: list[Event] = []
    tripped: set[str] = set()
    time_to_safe = None

    def sample(v):
        nonlocal peak_current
        sol = solve(net, v, rs, state)
        peak_current = max(peak_current, abs(sol.source_current))
        for id in ids:
            peak_v[id] = max(peak_v[id], abs(sol.voltage[id]))
            peak_i[id] = max(peak_i[id], abs(sol.current[id]))
            peak_p[id] = max(peak_p[id], sol.power(id))

    if v0 <= v_safe:
        return DischargeResult(v0, capacitance, (0.0,), (v0,), 0.0, 0.0, 0.0,
                               {id: 0.0 for id in ids}, peak_v, peak_i, peak_p, [], notes)
    while t0 < duration:
        sample(float(y[0]))  # the largest stresses of a segment are at its start
        evs = [safe_event] + [trip_event_for(k, id) if id not in tripped else None
                              for k, id in enumerate(heating)]
        live = [e for e in evs if e is not None]
        scale = np.maximum(np.abs(y), 1.0)
        from scipy.integrate import solve_ivp
        res = solve_ivp(rhs, (t0, duration), y, method="LSODA", events=live, rtol=1e-7,
                        atol=np.concatenate(([1e-7 * v0], 1e-9 * scale[1:])))
        if res.status == -1:
            raise NetworkError(f"the discharge integration failed: {res.message}")
        times.extend(float(t) for t in res.t[1:])
        volts.extend(float(v) for v in res.y[0, 1:])
        y = res.y[:, -1].copy()
        t0 = float(res.t[-1])
        if res.status != 1:
            break  # reached the end of the duration
        if res.t_events[0].size:
            time_to_safe = float(res.t_events[0][0])
            break
        # a PTC reached its trip energy
        for ev_k, ev in enumerate(live[1:], start=1):
            if res.t_events[ev_k].size:
                k = next(k for k, e in enumerate(evs) if e is ev) - 1
                id = heating[k]
                tripped.add(id)
                p = net.element(id)
                sol = solve(net, float(y[0]), rs, state)
                i = abs(sol.current[id])
                r_t, remark = tripped_resistance(net, state, id, float(y[0]), rs,
                                                 p.get("tripped_power"), p.get("resistance"))
                state = state.with_ptc(id, r_t)
                last[0] = None
                events.append(Event(id, f"trips after {t0:.3g} s of the discharge at "
                                        f"{y[0]:.4g} V ({i:.4g} A)" +
                                        (f"; {remark}" if remark else ""), t0, i))
    energy = {id: float(y[1 + k]) for k, id in enumerate(ids)}
    return DischargeResult(v0, capacitance, tuple(times), tuple(volts), peak_current,
                           time_to_safe, t0, energy, peak_v, peak_i, peak_p, events, notes)


def small_signal_resistance(net: Netlist) -> float:
    """Resistance (ohm) between the mode's terminals at a 1 V stiff test source, clamps
    not conducting, PTCs cold, switches as the mode sets them: R = 1 V / I."""
    sol = solve(net, 1.0, None, COLD)
    i = sol.source_current
    return math.inf if i <= 0 else 1.0 / i
