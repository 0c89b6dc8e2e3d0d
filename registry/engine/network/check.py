"""docs/rules.md, check 10, the protection path: the public entry points and the cache.

The analysis of a netlist under a set of conditions is cached on (netlist content, mode key,
conditions): the model's key is not part of it, so models that share a front end share their
solves, and a second check of the same plan costs a dictionary look-up.
"""

from __future__ import annotations

import dataclasses
import logging
import math
from dataclasses import dataclass
from functools import lru_cache

from ..findings import CheckName, Compare, Finding
from ..quantity import RESISTANCE, format_quantity
from ..spec import Mode, ModelSpec
from .limits import (SRC_PRACTICE, ElementStress, discharge_limits, impulse_limits, steady_limits)
from .netlist import OPEN_RESISTANCE, Netlist, NetworkError, build_netlist, check_solvable, \
    solve_gaps
from .scenarios import SQRT2, DischargeResult, discharge, impulse, small_signal_resistance, \
    steady

CHECK = CheckName.PROTECTION_PATH
CONSISTENCY = CheckName.INPUT_CONSISTENCY
CONSISTENCY_TOLERANCE = 0.10  # the 10 %: common practice (no source)


@dataclass(frozen=True)
class Conditions:
    """What the plan puts on the front end, in SI floats (see :func:`protection_path_findings`)."""

    working_voltage: float
    waveform: str
    source_impedance: float | None
    impulse_peak: float | None
    generator_impedance: float | None
    capacitance: float | None
    safe_voltage: float
    altitude: float
    duration: float

    def __post_init__(self):
        if self.waveform not in ("ac", "dc"):
            raise ValueError(f"waveform must be ac or dc, not {self.waveform!r}")
        for name in ("working_voltage", "safe_voltage", "altitude", "duration"):
            v = getattr(self, name)
            if not (isinstance(v, (int, float)) and math.isfinite(v) and v >= 0):
                raise ValueError(f"{name} must be a finite non-negative number, not {v!r}")


@dataclass(frozen=True)
class PathReport:
    """Everything the check found on one mode: the stresses and the discharge curve."""

    mode: str
    stresses: tuple[ElementStress, ...]
    discharge: DischargeResult | None = None


# -- the analysis (cached) --------------------------------------------------------------------

def _unknown_for(gaps, scenario: str) -> list[ElementStress]:
    return [ElementStress(id, scenario, "model", "unknown",
                          f"{id}, {scenario}: {text}, so its stress is unknown", SRC_PRACTICE)
            for id, text in gaps]


# What a solve of a described front end may raise: our own SolveFailed (no convergence, a
# singular matrix, no bracket), any other NetworkError, and the numerical errors numpy, scipy
# and math raise (numpy's LinAlgError is a ValueError; OverflowError and ZeroDivisionError are
# ArithmeticErrors). Each becomes an ``unknown`` item for the scenario: the setup is then
# unverified, and every other setup is still judged.
SOLVE_ERRORS = (NetworkError, ArithmeticError, ValueError)
SOLVE = "solve"  # the quantity of an ElementStress that reports a failed solve

_log = logging.getLogger(__name__)


def _solve_failure(scenario: str, exc: Exception) -> ElementStress:
    """The ``unknown`` item for a scenario whose solve failed, naming the scenario and why."""
    if not isinstance(exc, NetworkError):  # a numerical error: keep the trace for the log
        _log.warning("front-end %s solve failed", scenario, exc_info=exc)
    reason = str(exc) or type(exc).__name__
    return ElementStress(None, scenario, SOLVE, "unknown",
                         f"{scenario}: the front end could not be solved ({reason}), so its "
                         "stresses are unknown", SRC_PRACTICE)


def _solved_gaps(net: Netlist) -> set[str]:
    return {id for id, _ in solve_gaps(net)}


def analyse(net: Netlist, mode_key: str, cond: Conditions) -> PathReport:
    """Solve the three scenarios on ``net`` and hold every element against its limits.

    The solve depends on the netlist (elements, terminals, closed switches) and the
    conditions only, so modes that leave the front end in the same state (DC and AC volts,
    say) share one cached solve; ``mode_key`` only names the report."""
    try:
        stresses, dres = _analysed(net, cond)
    except SOLVE_ERRORS as exc:  # outside one scenario's solve (holding it to the limits)
        return PathReport(mode_key, (_solve_failure("analysis", exc),))
    return PathReport(mode_key, stresses, dres)


@lru_cache(maxsize=8192)
def _analysed(net: Netlist, cond: Conditions):
    """(stresses, discharge result) of :func:`analyse`. A netlist that cannot be solved gives
    one ``unknown`` item naming why."""
    try:
        check_solvable(net)
    except NetworkError as exc:
        return (ElementStress(None, "steady", "model", "unknown",
                              f"{exc}; its stresses are unknown", SRC_PRACTICE),), None
    gaps = solve_gaps(net)
    unsolved = _solved_gaps(net)
    items: list[ElementStress] = []
    stiff = cond.source_impedance is None or cond.source_impedance == 0
    note = " (the plan gives no source impedance: solved as a stiff source)" if stiff else ""

    def run(scenario, fn):
        try:
            return fn()
        except SOLVE_ERRORS as exc:
            items.append(_solve_failure(scenario, exc))
            return None

    # 1. steady
    res = run("steady", lambda: steady(net, cond.working_voltage, cond.waveform,
                                       cond.source_impedance, cond.duration))
    if res is not None:
        found = steady_limits(net, res, cond.waveform, cond.altitude, cond.duration)
        items += [dataclasses.replace(s, message=s.message + note) for s in found]
        items += _unknown_for(gaps + res.notes, "steady")
    # 2. impulse
    if cond.impulse_peak is None:
        items.append(ElementStress(None, "impulse", "impulse", "not-run",
                                   "impulse: the plan gives no transient (circuit.transient), so "
                                   "the impulse is not solved", SRC_PRACTICE))
    else:
        gen_note = "" if cond.generator_impedance else \
            " (no generator impedance: solved as a stiff generator)"
        ires = run("impulse", lambda: impulse(net, cond.impulse_peak, cond.generator_impedance))
        if ires is not None:
            found = [s for s in impulse_limits(net, ires, cond.altitude)
                     if s.element not in unsolved]
            items += [dataclasses.replace(s, message=s.message + gen_note) for s in found]
            items += _unknown_for([g for g in gaps if g[0] in unsolved] + ires.notes, "impulse")
    # 3. discharge
    dres = None
    if cond.capacitance:
        v0 = cond.working_voltage * (SQRT2 if cond.waveform == "ac" else 1.0)
        dres = run("discharge", lambda: discharge(net, cond.capacitance, v0,
                                                  cond.source_impedance, cond.safe_voltage,
                                                  cond.duration))
        if dres is not None:
            found = [s for s in discharge_limits(net, dres, cond.altitude)
                     if s.element not in unsolved]
            items += found
            items += _unknown_for([g for g in gaps if g[0] in unsolved] + dres.notes,
                                  "discharge")
    return tuple(items), dres


@lru_cache(maxsize=8192)
def netlist_resistance(net: Netlist) -> float:
    """Small-signal resistance between the mode's terminals (ohm; inf for an open path)."""
    r = small_signal_resistance(net)
    # gmin from every node is the only path left above this: the mode's path is open.
    return math.inf if r > OPEN_RESISTANCE / (2 * len(net.nodes) + 2) else r


# -- public -----------------------------------------------------------------------------------

def protection_path_report(model: ModelSpec, mode: Mode, *, working_voltage: float,
                           waveform: str, source_impedance: float | None,
                           impulse_peak: float | None, generator_impedance: float | None,
                           capacitance: float | None, safe_voltage: float, altitude: float,
                           duration: float) -> PathReport | None:
    """The (cached) analysis of ``model``'s front end in ``mode``; None without a front end.
    A mode whose terminals the front end does not reach gives one ``unknown`` item."""
    if not model.front_end:
        return None
    cond = Conditions(float(working_voltage), waveform,
                      None if source_impedance is None else float(source_impedance),
                      None if impulse_peak is None else float(impulse_peak),
                      None if generator_impedance is None else float(generator_impedance),
                      None if capacitance is None else float(capacitance),
                      float(safe_voltage), float(altitude), float(duration))
    try:
        net = build_netlist(model, mode)
    except NetworkError as exc:
        return PathReport(mode.key, (ElementStress(None, "steady", "model", "unknown",
                                                   f"{exc}: the protection path in this mode "
                                                   "is not described", SRC_PRACTICE),))
    return analyse(net, mode.key, cond)


def _finding(model: ModelSpec, mode: Mode, s: ElementStress, misuse: bool) -> Finding:
    status = s.status
    prefix = f"Mode {mode.key}"
    if misuse:
        prefix = f"Mode {mode.key} (reasonably foreseeable misuse: selected by mistake on this " \
                 "circuit)"
        if status == "fail":
            status = "caution"  # docs/rules.md, check 6: a shortfall in another mode is a caution
    margin = s.margin
    if margin is not None and not math.isfinite(margin):
        margin = None
    subject = f"{model.key} {s.element}" if s.element else model.key
    if s.quantity == SOLVE:
        prefix = f"Model {model.key}, {prefix[0].lower()}{prefix[1:]}"
    numeric = s.unit != "" and (s.seen is not None or s.limit is not None)
    return Finding(s.check, status, subject, f"{prefix}, {s.message}.", s.source,
                   s.required, s.available, margin,
                   required_value=s.seen if numeric else None,
                   available_value=s.limit if numeric else None,
                   unit=s.unit if numeric else "", basis=s.basis if numeric else "")


def consistency_finding(model: ModelSpec, mode: Mode) -> Finding | None:
    """The mode's stated ``input_resistance`` against the netlist's resistance between its
    terminals in that mode: more than 10 % apart is a caution pointing at the data."""
    if mode.input_resistance is None or not model.front_end:
        return None
    try:
        net = build_netlist(model, mode)
        r = netlist_resistance(net)
    except SOLVE_ERRORS:
        return None
    stated = mode.input_resistance
    r_t = "open" if math.isinf(r) else format_quantity(r, RESISTANCE)
    s_t = format_quantity(stated, RESISTANCE)
    apart = math.inf if math.isinf(r) else abs(r - stated) / stated if stated > 0 else math.inf
    src = (f"{SRC_PRACTICE}: the stated input resistance and the front-end data should agree "
           "within 10 %")
    if apart > CONSISTENCY_TOLERANCE:
        gap = "" if math.isinf(apart) else f" ({apart:.0%} apart)"
        return Finding(CONSISTENCY, "caution", model.key,
                       f"Mode {mode.key}: the stated input resistance is {s_t}, but the front "
                       f"end gives {r_t} between {mode.terminals[0]} and {mode.terminals[1]}"
                       f"{gap}: check the model's data", src, s_t, r_t, None,
                       required_value=stated, available_value=r, unit="ohm",
                       compare=Compare.MATCH)
    return Finding(CONSISTENCY, "pass", model.key,
                   f"Mode {mode.key}: the stated input resistance {s_t} and the front end's "
                   f"{r_t} agree within {max(apart, 1e-4):.2%}", src, s_t, r_t, None,
                   required_value=stated, available_value=r, unit="ohm", compare=Compare.MATCH)


def protection_path_findings(model: ModelSpec, mode: Mode, *, working_voltage: float,
                             waveform: str, source_impedance: float | None,
                             impulse_peak: float | None, generator_impedance: float | None,
                             capacitance: float | None, safe_voltage: float, altitude: float,
                             duration: float, misuse: bool = False) -> list[Finding]:
    """docs/rules.md, check 10 for ``model`` in ``mode``: findings with check "protection-path"
    (and one "input-consistency" for the setup's own mode, i.e. ``misuse=False``).

    ``working_voltage`` V (rms for ``waveform`` "ac"), ``source_impedance`` ohm (None: a
    stiff source), ``impulse_peak`` V peak of the expected transient (None: not solved),
    ``generator_impedance`` ohm (12 ohm CAT II, 2 ohm CAT III/IV, IEC 61010-2-030/-033; None:
    stiff), ``capacitance`` F (None: no discharge), ``safe_voltage`` V, ``altitude`` m,
    ``duration`` s. ``misuse``: this mode is another mode on the setup's terminals, checked as
    reasonably foreseeable misuse; its fails become cautions. [] only without a front end."""
    report = protection_path_report(
        model, mode, working_voltage=working_voltage, waveform=waveform,
        source_impedance=source_impedance, impulse_peak=impulse_peak,
        generator_impedance=generator_impedance, capacitance=capacitance,
        safe_voltage=safe_voltage, altitude=altitude, duration=duration)
    if report is None:
        return []
    out = [_finding(model, mode, s, misuse) for s in report.stresses]
    if not misuse:
        c = consistency_finding(model, mode)
        if c is not None:
            out.append(c)
    return out


_RANK = {"fail": 0, "caution": 1, "unknown": 2, "pass": 3, "not-run": 4}


def worst_by_element(report: PathReport) -> dict[str, ElementStress]:
    """The worst stress of each element: failed first, then unknown, then by smallest
    headroom."""
    out: dict[str, ElementStress] = {}

    def key(s: ElementStress):
        m = s.margin
        return (_RANK[s.status], math.inf if m is None else m)

    for s in report.stresses:
        if s.element is None:
            continue
        if s.element not in out or key(s) < key(out[s.element]):
            out[s.element] = s
    return out


def drawing_marks(report: PathReport | None, closest: int = 3) -> dict[str, str]:
    """Marks for :func:`registry.drawing.front_end_svg`: every failed element and the
    ``closest`` others nearest their limits, each with a short label ("fail: 3.96 kV against
    1.5 kV, impulse")."""
    if report is None:
        return {}
    worst = worst_by_element(report)
    marks: dict[str, str] = {}
    near = []
    for id, s in worst.items():
        where = s.scenario.replace("steady", "steady state")
        if s.status == "fail":
            marks[id] = f"fail: {s.required} against {s.available}, {where}"
        elif s.status == "unknown":
            marks[id] = f"unknown: {s.quantity} limit not given"
        elif s.margin is not None and math.isfinite(s.margin):
            near.append((s.margin, id, s, where))
    for m, id, s, where in sorted(near)[:closest]:
        room = f"{max(m, 0.0):.0%} headroom" if m < 1 else f"limit {m + 1:.3g} times"
        marks[id] = f"{room}: {s.required} of {s.available}, {where}"
    return marks


def cache_clear() -> None:
    """Forget every cached solve (for benchmarks and tests of the cold path)."""
    from .solver import _compile, _matrix
    _analysed.cache_clear()
    discharge.cache_clear()
    netlist_resistance.cache_clear()
    _compile.cache_clear()
    _matrix.cache_clear()
