"""Every element's stress in each scenario held against its limit (SPEC §5 check 10).

One :class:`ElementStress` per element, scenario and limit: what the element sees, what it
may take and where that limit comes from. A missing limit is ``unknown``; an element the
scenario does not stress at all (no current, no voltage: off the mode's path) gets no item.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from ...standards import clearance
from ..findings import CheckName, Status, StatusText, headroom
from ..quantity import CURRENT, ENERGY, POWER, VOLTAGE, format_quantity
from .devices import (I_REF, K_8_20, T2_8_20, impulse_clamp_energy, impulse_resistor_energy)
from .netlist import Netlist
from .scenarios import DischargeResult, ImpulseResult, SteadyResult

# Stresses below these are "not in this mode's path" (gmin-level leakage of the solver).
V_FLOOR = 1e-3  # V
I_FLOOR = 1e-9  # A

SRC_DATASHEET = "the element's datasheet rating (front-end data)"
SRC_VARISTOR = ("varistor datasheet rating; surge energy E = K*Vc*Ip*t2 with K = "
                f"{K_8_20:.3f} for the 8/20 us wave, t2 = 20 us (varistor makers' application "
                "notes)")
SRC_TVS = ("TVS datasheet peak pulse power (commonly rated for a 10/1000 us wave, longer than "
           "the 8/20 us wave here: conservative)")
SRC_RESISTOR_PULSE = ("resistor datasheet pulse energy; impulse energy Vp^2/R times the square "
                      "integral of the 1.2/50 us wave (IEC 60060-1 wave shape)")
SRC_GAP = f"{clearance.SOURCE}, altitude corrected by {clearance.ALTITUDE_SOURCE}"
SRC_STATED_GAP = (f"the switch's stated withstand, altitude corrected by "
                  f"{clearance.ALTITUDE_SOURCE}")
SRC_STEADY_GAP = f"{clearance.STEADY_SOURCE}, altitude corrected by {clearance.ALTITUDE_SOURCE}"
SRC_STEADY_STATED_GAP = (f"the switch's stated impulse withstand read as a gap in "
                         f"{clearance.SOURCE}, then {SRC_STEADY_GAP} (common practice, no "
                         "source)")
SRC_FUSE = "fuse datasheet rating (IEC 60127 / IEC 60269 breaking capacity and rated voltage)"
SRC_PRACTICE = "common practice (no source)"

SCENARIO_TEXT = {"steady": "steady state", "impulse": "impulse", "discharge": "discharge"}


@dataclass(frozen=True)
class ElementStress:
    """One element's stress against one limit in one scenario (SI floats)."""

    element: str | None  # None: about the mode as a whole
    scenario: str  # steady | impulse | discharge | consistency
    quantity: str  # voltage, current, power, energy, breaking capacity, ...
    status: Status | StatusText
    message: str  # the element, what it sees, what it may take
    source: str
    seen: float | None = None
    limit: float | None = None
    required: str = ""  # the text of ``seen``
    available: str = ""  # the text of ``limit``
    check: CheckName = CheckName.PROTECTION_PATH
    unit: str = ""  # of ``seen`` and ``limit``: "V", "A", "W", "J"
    basis: str = ""  # "rms" for an ac steady-state voltage or current

    @property
    def margin(self) -> float | None:
        if self.seen is None or self.limit is None:
            return None
        return headroom(self.limit, self.seen)


def _replace_message(item: ElementStress, message: str) -> ElementStress:
    return dataclasses.replace(item, message=message)


def _q(v, dim):
    return format_quantity(v, dim, 4)


def held(element: str, scenario: str, quantity: str, seen: float, limit: float | None,
         dim, what: str, limit_name: str, source: str, context: str = "",
         suffix: str = "") -> ElementStress:
    """A stress ``seen`` against ``limit`` (None: unknown). ``what``: e.g. "voltage across
    it"; ``limit_name``: the parameter, e.g. "max_voltage"."""
    where = f"{element}, {SCENARIO_TEXT.get(scenario, scenario)}{context}"
    seen_t = _q(seen, dim) + suffix
    basis = suffix.strip()
    if limit is None:
        return ElementStress(element, scenario, quantity, "unknown",
                             f"{where}: {what} {seen_t}; its {limit_name} is not given, so it "
                             "cannot be held against a limit", source, seen, None, seen_t, "",
                             unit=dim.unit, basis=basis)
    lim_t = _q(limit, dim) + suffix
    # A stress within one part per million of its limit meets it: that is rounding in the
    # solve, far below the precision of any datasheet value.
    ok = seen <= limit * (1 + 1e-6)
    m = headroom(limit, seen)
    # Said as a ratio of the two, as the result's margins are: "+12420.8%" reads as noise.
    if not ok:
        verdict = f"exceeds it, {seen / limit:.3g} times the limit" if limit > 0 else "exceeds it"
    elif m == float("inf"):
        verdict = "within it"
    else:
        verdict = f"within it (the limit is {limit / seen:.3g} times that)"
    return ElementStress(element, scenario, quantity, "pass" if ok else "fail",
                         f"{where}: {what} {seen_t} against its {limit_name} of {lim_t}: "
                         f"{verdict}", source, seen, limit, seen_t, lim_t, unit=dim.unit,
                         basis=basis)


def gap_limit(sw, altitude: float, kind: str = "impulse") -> tuple[float | None, str, str]:
    """(withstand V peak, its name, its source) of an open switch, altitude corrected.

    ``kind`` ``impulse``: IEC 60664-1 Table F.2 for a gap, or the stated withstand.
    ``steady`` (the steady state and the discharge: working, temporary or recurring peak
    voltages): IEC 60664-1:2020 Table F.8 (F.7 in the 2007 edition) for a gap; for a switch
    known only by its stated impulse withstand, Table F.8 read for the gap that withstand
    implies in Table F.2 (:func:`~registry.standards.clearance.implied_gap`)."""
    if kind not in ("impulse", "steady"):
        raise ValueError(f"kind must be impulse or steady, not {kind!r}")
    stated, gap = sw.get("withstand"), sw.get("gap")
    if kind == "impulse":
        if stated is not None:
            return (clearance.stated_withstand(stated, altitude),
                    f"stated withstand at {altitude:.0f} m", SRC_STATED_GAP)
        if gap is not None:
            return (clearance.gap_withstand(gap, altitude),
                    f"gap withstand ({gap * 1e3:.3g} mm at {altitude:.0f} m)", SRC_GAP)
        return None, "gap or withstand", SRC_GAP
    if gap is not None:
        return (clearance.gap_steady_withstand(gap, altitude),
                f"steady-state gap withstand ({gap * 1e3:.3g} mm at {altitude:.0f} m)",
                SRC_STEADY_GAP)
    if stated is not None:
        implied = clearance.implied_gap(stated)
        return (clearance.gap_steady_withstand(implied, altitude),
                f"steady-state withstand of the {implied * 1e3:.3g} mm gap its stated "
                f"{stated:.0f} V impulse withstand implies, at {altitude:.0f} m",
                SRC_STEADY_STATED_GAP)
    return None, "gap or withstand", SRC_STEADY_GAP


def _stressed(v: float, i: float) -> bool:
    return abs(v) > V_FLOOR or abs(i) > I_FLOOR


# -- steady -----------------------------------------------------------------------------------

def steady_limits(net: Netlist, res: SteadyResult, waveform: str, altitude: float,
                  duration: float) -> list[ElementStress]:
    out: list[ElementStress] = []
    ac = waveform == "ac"
    rms = " rms" if ac else ""
    final = res.final

    def worst(id, which="heat"):
        """(|V| max, its snapshot label), (|I| max, label) over the snapshots."""
        vs = [(abs(getattr(s, which).voltage[id]), s.label) for s in res.snapshots]
        cs = [(abs(getattr(s, which).current[id]), s.label) for s in res.snapshots]
        return max(vs), max(cs)

    def ctx(label):
        return f" ({label})" if label else ""

    trip_times = {ev.element: ev for ev in res.events}
    for e in net.elements:
        (vh, lv), (ih, li) = worst(e.id)
        (vp, lvp), _ = worst(e.id, "peak")
        if not _stressed(vh, ih) and not _stressed(vp, 0.0):
            continue
        if e.type == "ptc":
            story = "".join(f"; {ev.text}" for ev in res.events if ev.element == e.id)
            item = held(e.id, "steady", "voltage", vh, e.get("max_voltage"), VOLTAGE,
                        "voltage across it", "max_voltage", SRC_DATASHEET, ctx(lv), rms)
            out.append(_replace_message(item, item.message + story))
            out.append(held(e.id, "steady", "current", ih, e.get("max_current"), CURRENT,
                            "current through it", "max_current", SRC_DATASHEET, ctx(li),
                            rms))
        elif e.type == "input":
            out.append(held(e.id, "steady", "voltage", vh, e.get("max_voltage"), VOLTAGE,
                            "voltage across it", "max_voltage", SRC_DATASHEET, ctx(lv), rms))
        elif e.type == "varistor":
            name = "max_ac" if ac else "max_dc"
            out.append(held(e.id, "steady", "continuous voltage", vh, e.get(name), VOLTAGE,
                            "continuous voltage across it", name, SRC_DATASHEET, ctx(lv), rms))
        elif e.type == "tvs":
            out.append(held(e.id, "steady", "continuous voltage", vp, e.get("breakdown_voltage"),
                            VOLTAGE, "peak working voltage across it", "breakdown_voltage",
                            SRC_PRACTICE + ": a TVS must not conduct on the working voltage",
                            ctx(lvp)))
        elif e.type == "resistor":
            p = final.heat.power(e.id)
            out.append(held(e.id, "steady", "power", p, e.get("power"), POWER,
                            "power in it", "power rating", SRC_DATASHEET, ctx(final.label)))
            if e.get("max_voltage") is not None:
                out.append(held(e.id, "steady", "voltage", vh, e.get("max_voltage"), VOLTAGE,
                                "voltage across it", "max_voltage", SRC_DATASHEET, ctx(lv),
                                rms))
            # Before a PTC trips the cold current flows for the trip time: a pulse.
            for ev in res.events:
                if ev.time is not None and ev.cold_powers.get(e.id, 0.0) > 0 and \
                        e.id != ev.element and ev.element in {p.id for p in
                                                              net.of_type("ptc")}:
                    energy = ev.cold_powers[e.id] * ev.time
                    if energy > 1e-9:
                        out.append(held(e.id, "steady", "pulse energy", energy,
                                        e.get("pulse_energy"), ENERGY,
                                        f"energy in it until {ev.element} trips "
                                        f"({ev.time:.3g} s)", "pulse_energy", SRC_DATASHEET))
        elif e.type == "fuse":
            trip = trip_times.get(e.id)
            if e.get("current") is None:
                out.append(held(e.id, "steady", "current", ih, None, CURRENT,
                                "current through it", "current rating", SRC_FUSE, "", rms))
            elif trip is None:
                out.append(ElementStress(e.id, "steady", "current", "pass",
                                         f"{e.id}, steady state: carries {_q(ih, CURRENT)}{rms}, "
                                         f"below its {_q(e.get('current'), CURRENT)} rating: "
                                         "does not operate", SRC_FUSE, ih, e.get("current"),
                                         _q(ih, CURRENT), _q(e.get("current"), CURRENT), unit="A"))
            else:
                assert trip.current is not None  # steady() gives every fuse it opens a current
                out.append(held(e.id, "steady", "breaking capacity", trip.current,
                                e.get("breaking_capacity"), CURRENT,
                                "prospective current it must break", "breaking_capacity",
                                SRC_FUSE, "", rms))
                name = "voltage" if ac else "voltage_dc"
                v_open = abs(final.heat.voltage[e.id])
                out.append(held(e.id, "steady", "voltage", v_open, e.get(name), VOLTAGE,
                                "voltage across it once open", name, SRC_FUSE, "", rms))
        elif e.type == "switch":
            if net.is_closed(e):
                continue
            lim, name, src = gap_limit(e, altitude, "steady")
            out.append(held(e.id, "steady", "voltage", vp, lim, VOLTAGE,
                            "peak voltage across the open contacts", name, src, ctx(lvp)))
        elif e.type == "gas-tube":
            if e.id in final.state.fired:
                i = abs(final.heat.current[e.id])
                out.append(ElementStress(e.id, "steady", "follow current", "fail",
                                         f"{e.id}, steady state: fires on the working voltage and "
                                         f"carries {_q(i, CURRENT)}{rms} of follow current",
                                         SRC_PRACTICE + ": a gas tube must not fire on the working "
                                         "voltage", i, 0.0, _q(i, CURRENT), "no follow current",
                                         unit="A"))
    return out


# -- impulse ----------------------------------------------------------------------------------

def impulse_limits(net: Netlist, res: ImpulseResult, altitude: float) -> list[ElementStress]:
    out: list[ElementStress] = []
    sol = res.solution
    for e in net.elements:
        v, i = abs(sol.voltage[e.id]), abs(sol.current[e.id])
        if not _stressed(v, i):
            continue
        if e.type == "varistor":
            if i < I_REF:
                out.append(ElementStress(e.id, "impulse", "current", "pass",
                                         f"{e.id}, impulse: {_q(v, VOLTAGE)} across it, "
                                         f"{_q(i, CURRENT)}: below 1 mA, it does not conduct",
                                         SRC_VARISTOR, i, None, _q(i, CURRENT), unit="A"))
                continue
            out.append(held(e.id, "impulse", "peak current", i, e.get("peak_current"), CURRENT,
                            f"clamps at {_q(v, VOLTAGE)} with a peak current of", "peak_current",
                            SRC_VARISTOR))
            out.append(held(e.id, "impulse", "energy", impulse_clamp_energy(v, i),
                            e.get("energy"), ENERGY,
                            f"surge energy (K*Vc*Ip*t2, K = {K_8_20:.3f}, "
                            f"t2 = {T2_8_20 * 1e6:.0f} us)", "energy", SRC_VARISTOR))
        elif e.type == "tvs":
            out.append(held(e.id, "impulse", "peak power", v * i, e.get("peak_power"), POWER,
                            f"clamps at {_q(v, VOLTAGE)} and {_q(i, CURRENT)}, a peak power of",
                            "peak_power", SRC_TVS))
        elif e.type == "resistor":
            r = e.get("resistance")
            assert r is not None  # the impulse solve raises NetworkError without it
            out.append(held(e.id, "impulse", "pulse energy", impulse_resistor_energy(v, r),
                            e.get("pulse_energy"), ENERGY,
                            f"{_q(v, VOLTAGE)} across it at the peak, an energy of",
                            "pulse_energy", SRC_RESISTOR_PULSE))
        elif e.type == "input":
            out.append(held(e.id, "impulse", "voltage", v, e.get("max_voltage"), VOLTAGE,
                            "peak voltage across it", "max_voltage", SRC_DATASHEET))
        elif e.type == "ptc":
            # A PTC's maximum voltage is the most it may have across it at all, tripped or not;
            # an impulse does not get a pass for being short (datasheet rating).
            out.append(held(e.id, "impulse", "voltage", v, e.get("max_voltage"), VOLTAGE,
                            "peak voltage across it", "max_voltage", SRC_DATASHEET))
        elif e.type == "switch" and not net.is_closed(e):
            lim, name, src = gap_limit(e, altitude)
            out.append(held(e.id, "impulse", "voltage", v, lim, VOLTAGE,
                            "peak voltage across the open contacts", name, src))
    return out


# -- discharge --------------------------------------------------------------------------------

def discharge_limits(net: Netlist, res: DischargeResult, altitude: float) -> list[ElementStress]:
    out: list[ElementStress] = []
    for e in net.elements:
        v, i = res.peak_voltage[e.id], res.peak_element_current[e.id]
        energy = res.energy[e.id]
        if not _stressed(v, i):
            continue
        if e.type == "ptc":
            story = "".join(f"; {ev.text}" for ev in res.events if ev.element == e.id)
            item = held(e.id, "discharge", "voltage", v, e.get("max_voltage"), VOLTAGE,
                        "largest voltage across it", "max_voltage", SRC_DATASHEET)
            out.append(_replace_message(item, item.message + story))
            out.append(held(e.id, "discharge", "current", i, e.get("max_current"), CURRENT,
                            "largest current through it", "max_current", SRC_DATASHEET))
        elif e.type == "input":
            out.append(held(e.id, "discharge", "voltage", v, e.get("max_voltage"), VOLTAGE,
                            "largest voltage across it", "max_voltage", SRC_DATASHEET))
        elif e.type == "varistor":
            if i < I_REF:
                continue  # does not conduct: the input/PTC items cover its voltage
            out.append(held(e.id, "discharge", "peak current", i, e.get("peak_current"),
                            CURRENT, "peak current through it", "peak_current", SRC_DATASHEET))
            out.append(held(e.id, "discharge", "energy", energy, e.get("energy"), ENERGY,
                            "energy it absorbs", "energy", SRC_DATASHEET))
        elif e.type == "tvs":
            out.append(held(e.id, "discharge", "peak power", res.peak_power[e.id],
                            e.get("peak_power"), POWER, "peak power in it", "peak_power",
                            SRC_TVS))
        elif e.type == "resistor":
            out.append(held(e.id, "discharge", "pulse energy", energy, e.get("pulse_energy"),
                            ENERGY, "energy it absorbs", "pulse_energy", SRC_DATASHEET))
        elif e.type == "fuse":
            rated = e.get("current")
            if rated is not None and i <= rated:
                continue
            out.append(held(e.id, "discharge", "breaking capacity", i,
                            e.get("breaking_capacity"), CURRENT,
                            "peak discharge current it may have to break", "breaking_capacity",
                            SRC_FUSE))
            out.append(held(e.id, "discharge", "voltage", res.v0, e.get("voltage_dc"), VOLTAGE,
                            "dc voltage it may have to break", "voltage_dc", SRC_FUSE))
        elif e.type == "switch" and not net.is_closed(e):
            lim, name, src = gap_limit(e, altitude, "steady")
            out.append(held(e.id, "discharge", "voltage", v, lim, VOLTAGE,
                            "largest voltage across the open contacts", name, src))
    return out
