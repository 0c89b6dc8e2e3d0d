"""Checks 2 to 9 of docs/rules.md, one function per check, each ``fn(ctx) -> list[Finding]``.

Every function reads a :class:`~registry.engine.setups.SetupContext` (SI floats) and says, per
item of the chain, what is required, what is available and whether it holds. Missing
instrument data gives ``unknown``; a plan that lacks what a check needs gives ``not-run``
naming the plan field. Never ``pass`` on a guess.
"""

from __future__ import annotations

import math
from dataclasses import replace
from typing import Any

from ..standards import altitude as alt
from ..standards import impulse, probe_tips
from .findings import Compare, Finding, headroom
from .quantity import (CAPACITANCE, CURRENT, ENERGY, LENGTH, POWER, RESISTANCE, TIME, VOLTAGE,
                       format_quantity as qtext)
# discharge_time and absorbed_in live with the one discharge rule; kept importable from here
from .discharge import (SRC_FRONT_END, DischargeProfile, DischargeUnsolved, absorbed_in,  # noqa: F401
                        absorbed_to, discharge_profile, discharge_time, time_text)
from .derived import Derived
from .setups import LOW_Z, VOLTAGE_TASKS, SetupContext
from .rules import rating_covers
from .spec import DEFAULT_MAX_ALTITUDE, Fuse, Mode, ModelSpec, Plan, Rating

SRC_CATEGORY = "IEC 61010-1:2010 for instruments, IEC 61010-031:2015 for probe assemblies: " \
               "measurement category and rated voltage"
SRC_ALTITUDE = "IEC 61010-1:2010 1.4, rated up to 2000 m unless stated; " + alt.SOURCE
SRC_MODE = "maker's rating for the mode (overload / max input), IEC 61010-2-033"
SRC_MISUSE = "IEC 61010-2-033 reasonably foreseeable misuse (other modes, fused current inputs)"
SRC_CHAIN_CURRENT = "IEC 61010-031:2015 rated current of probe assemblies: each lead, tip and " \
                    "clip carrying a series current must be rated for it, the lowest governs"
SRC_MISUSE_ENERGY = SRC_MISUSE + "; E = C*V0**2/2*(1-exp(-2t/(RC))) (circuit theory)"
SRC_LOADING = "Ohm's law, voltage divider V*Zin/(Zin+Zs) (common practice, no source)"
SRC_LOWZ = "P = V**2/R, maker's max_duration for the mode (common practice, no source)"
SRC_DISCHARGE = "RC discharge: t = RC ln(V0/Vs), E = C(V0**2-Vs**2)/2 (circuit theory)"
SRC_POWER = "peak power V0**2/R against the tool's power rating (common practice, no source)"
SRC_DIVIDER = "divider output as a Thevenin source Rout (common practice, no source)"
SRC_DIVIDER_DATA = "two-resistor divider: A = (Rt + Rb||RL)/(Rb||RL), Rout = Rt||Rb (circuit " \
                   "theory); 10 % agreement (common practice, no source)"

READING_TOLERANCE = 0.01  # a reading more than 1 % low is a caution (docs/rules.md, check 7)
LOAD_TOLERANCE = 0.10     # a divider load more than 10 % off its required load (docs/rules.md,
                          # check 7)
DISCHARGE_TIME_LIMIT = 60.0  # s; a longer discharge is a caution (docs/rules.md, check 9)
DRAIN_FACTOR = 10.0       # R*C under ten times the duration drains appreciably (docs/rules.md,
                          # check 9)


def _f(check, status, subject, message, source, required="", available="", margin=None, *,
       need: float | None = None, have: float | None = None, unit: str = "",
       compare: Compare = Compare.AT_LEAST, basis: str = "") -> Finding:
    """A finding; ``need``/``have`` are its numbers (SI floats in ``unit``), from which the
    ``required``/``available`` texts are rendered where they are not given."""
    numeric = need is not None or have is not None
    return Finding(check, status, subject, message, source, required, available, margin,
                   required_value=need, available_value=have, unit=unit if numeric else "",
                   compare=compare, basis=basis)


def rating_text(r: Rating) -> str:
    if r.category == "none":
        return f"{qtext(r.voltage, VOLTAGE)} (no category)"
    return f"CAT {r.category} {qtext(r.voltage, VOLTAGE)}"


# -- check 2: category and voltage ------------------------------------------------------------

def category_requirement(ctx: SetupContext, item: ModelSpec) -> tuple[str | None, float]:
    """(category required or None, voltage required) for ``item``. A mains circuit needs the
    category and the higher of the working voltage and the voltage to earth; an isolated one
    (or the instrument behind a divider) a voltage only."""
    if item is ctx.instrument and ctx.divider is not None:
        return None, max(ctx.seen_voltage, ctx.seen_to_earth)
    return plan_requirement(ctx.plan)


def plan_requirement(plan: Plan) -> tuple[str | None, float]:
    """(category required or None, voltage required) of the plan's circuit itself: what every
    accessory, and an instrument not behind a divider, must be rated for."""
    c = plan.circuit
    need = max(c.voltage, c.to_earth)
    return (c.category if c.supply == "mains" else None), need


def fitting_ratings(item: ModelSpec, category: str | None, need: float) -> list[Rating]:
    """Ratings of ``item`` that cover the requirement. Neither a higher category at a lower
    voltage nor a higher voltage at a lower category stands in for the other: the one rule,
    :func:`registry.engine.rules.rating_covers`, which the store's fleet filter also follows."""
    return [r for r in item.ratings if rating_covers(r.category, r.voltage, category, need)]


def check_category(ctx: SetupContext) -> list[Finding]:
    out = []
    for item in ctx.chain:
        if item is ctx.instrument and ctx.current_clamp is not None:
            out.append(_f("category", "pass", item.key,
                          f"{item.key} is not connected to the circuit: it reads the output "
                          f"of clamp {ctx.current_clamp.key}.", SRC_CATEGORY))
            continue
        cat, need = category_requirement(ctx, item)
        where = "at the divider's output" if (item is ctx.instrument and ctx.divider) else ""
        out.append(category_finding(item, cat, need, where))
    return out


def category_finding(item: ModelSpec, cat: str | None, need: float,
                     where: str = "") -> Finding:
    """Check 2 for one item of the chain against its requirement (:func:`category_requirement`):
    pass with the covering rating's headroom, fail, or unknown without a rating."""
    required = (f"CAT {cat} " if cat else "") + qtext(need, VOLTAGE)
    if not item.ratings:
        return _f("category", "unknown", item.key,
                  f"{item.key} has no rating recorded; its fitness for "
                  f"{required} cannot be checked.", SRC_CATEGORY, required,
                  need=need, unit="V")
    fits = fitting_ratings(item, cat, need)
    if fits:
        best = max(fits, key=lambda r: r.voltage)
        return _f("category", "pass", item.key,
                  f"{item.key} is rated {rating_text(best)}, enough for {required}"
                  f"{' ' + where if where else ''}.", SRC_CATEGORY, required,
                  rating_text(best), headroom(best.voltage, need),
                  need=need, have=best.voltage, unit="V")
    available = ", ".join(rating_text(r) for r in item.ratings)
    if cat is not None:
        why = (f"none of its ratings ({available}) is at least CAT {cat} and at least "
               f"{qtext(need, VOLTAGE)} at the same time")
    else:
        why = f"its highest rating ({available}) is below {qtext(need, VOLTAGE)}"
    closest = max(item.ratings, key=lambda r: r.voltage)
    return _f("category", "fail", item.key,
              f"{item.key} must not be used here: {why}.", SRC_CATEGORY, required,
              available, _short(closest.voltage, need),
              need=need, have=closest.voltage, unit="V")


def _short(have: float, need: float) -> float | None:
    """A failed rating's margin: its (negative) headroom when the voltage falls short, else
    ``None`` (the category fell short, which a number does not measure)."""
    m = headroom(have, need)
    return m if m < 0 else None


def _touching_item(ctx: SetupContext) -> ModelSpec | None:
    """The item whose exposed metal meets the circuit: the tip, else the leads, else an
    instrument with integrated leads."""
    if ctx.tip is not None:
        return ctx.tip
    if ctx.lead is not None:
        return None if ctx.lead.kind == "current-clamp" else ctx.lead
    if ctx.mode.clamp:
        return None
    return ctx.instrument if ctx.instrument.integrated_leads else None


def check_tip(ctx: SetupContext) -> list[Finding]:
    """Exposed metal at the tip of the item that touches the circuit.

    Runs on every CAT III or CAT IV circuit and on every other hazardous-live circuit (the
    plan's voltage above the hazardous-live level the engine derives), isolated ones included.
    On CAT III and CAT IV work more than 4 mm fails (IEC 61010-031:2015 for CAT III/IV probe
    assemblies; HSE GS38) and more than 2 mm is a caution (GS38's 2 mm recommendation).
    Elsewhere (CAT II, and isolated circuits, which have no category) IEC 61010-031's 4 mm
    limit for CAT III/IV probes does not apply, but GS38 covers low-voltage work generally:
    more than 2 mm is a caution, the message saying whether it is also beyond GS38's 4 mm.
    GS38 is written for low-voltage systems; above low voltage the same caution is kept, since
    the hazard of a bare tip only grows (common practice, no source). Off the categories a
    discharge tool is left out: its contact is not a test probe, which is what GS38's tip
    guidance is for. Unrecorded: unknown."""
    item = _touching_item(ctx)
    if item is None:
        return []
    return tip_findings(item, ctx.plan, ctx.derived, ctx.is_discharge_tool)


def tip_findings(item: ModelSpec, plan: Plan, derived: Derived,
                 discharge_tool: bool) -> list[Finding]:
    """:func:`check_tip` for ``item``, the item that touches the circuit, on a setup whose
    instrument is a discharge tool or not: its tip alone decides."""
    c = plan.circuit
    cat = c.category if c.supply == "mains" else None
    if cat not in probe_tips.FAIL_CATEGORIES and (not derived.hazardous or discharge_tool):
        return []
    status = probe_tips.tip_status(item.tip_exposure, cat)
    limit = qtext(probe_tips.PREFERRED_EXPOSURE, LENGTH)
    top = qtext(probe_tips.MAX_EXPOSURE, LENGTH)
    work = f"CAT {cat} work" if cat else "isolated hazardous-live work"
    source = probe_tips.SOURCE_CAT if cat in probe_tips.FAIL_CATEGORIES else probe_tips.SOURCE
    if status == "unknown":
        msg = (f"The exposed metal at the tip of {item.key} is not recorded; on {work} it "
               f"should be {limit} or less"
               + (" (HSE GS38; an isolated circuit has no measurement category)." if cat is None
                  else "."))
        return [_f("tip", "unknown", item.key, msg, source, need=probe_tips.PREFERRED_EXPOSURE,
                   unit="m", compare=Compare.AT_MOST)]
    assert item.tip_exposure is not None  # tip_status gives unknown (returned above) without it
    have = qtext(item.tip_exposure, LENGTH)
    beyond = item.tip_exposure > probe_tips.MAX_EXPOSURE
    if status == "pass":
        msg = f"{item.key} leaves {have} of exposed metal at the tip ({limit} or less)."
    elif status == "fail":
        msg = (f"{item.key} must not be used here: it leaves {have} of exposed metal at the "
               f"tip, more than the {top} allowed on {work}; fit tip shrouds of {limit} or "
               "less.")
    elif beyond:
        msg = (f"{item.key} leaves {have} of exposed metal at the tip, more than the {top} "
               f"GS38 allows; on {work} fit tip shrouds of {limit} or less.")
    else:
        msg = (f"{item.key} leaves {have} of exposed metal at the tip; on {work} {limit} or "
               "less is recommended (fit tip shrouds).")
    if cat is None and status != "pass":
        msg += (" An isolated circuit has no measurement category: IEC 61010-031's 4 mm limit "
                "for CAT III/IV probes does not apply, GS38's guidance does, as a caution.")
    allowed = probe_tips.MAX_EXPOSURE if status == "fail" else probe_tips.PREFERRED_EXPOSURE
    return [_f("tip", status, item.key, msg, source, need=allowed, have=item.tip_exposure,
               unit="m", compare=Compare.AT_MOST)]


# -- check 3: transient -----------------------------------------------------------------------

def rating_withstand(r: Rating) -> float | None:
    """The impulse withstand (V peak) one rating stands for: the higher of the table's value
    for its category and voltage and a stated ``transient``; ``None`` when neither is given.
    Source: :data:`~registry.standards.impulse.SOURCE`."""
    values = [v for v in (impulse.withstand_of_rating(r.category, r.voltage), r.transient)
              if v is not None]
    return max(values) if values else None


def withstand_of(item: ModelSpec, ratings: list[Rating] | None = None) -> float | None:
    """The highest impulse withstand (V peak) that ``ratings`` (by default every rating of
    ``item``) stand for, per :func:`rating_withstand`. A check of a plan passes only the
    ratings that cover the requirement (:func:`fitting_ratings`), so that another rating of
    the same item, such as a higher category at a lower voltage, never stands in."""
    best = None
    for r in (item.ratings if ratings is None else ratings):
        v = rating_withstand(r)
        if v is not None and (best is None or v > best):
            best = v
    return best


def check_transient(ctx: SetupContext) -> list[Finding]:
    """The impulse withstand of each item against the transient the circuit can deliver.

    The withstand comes only from the ratings that cover the working voltage (the ratings check
    2 accepts, :func:`fitting_ratings`); among those the highest. A CAT IV 600 V rating of an
    item also rated CAT II 1000 V does not vouch for anything on an 800 V circuit. An item
    with ratings but none covering fails; one without ratings, or whose covering ratings give
    no withstand, is unknown. Source: IEC 61010-2-030 / IEC 60664-1 Table F.1 impulse values
    (:data:`~registry.standards.impulse.SOURCE`)."""
    c = ctx.plan.circuit
    expected = ctx.derived.transient
    if expected is None:
        field = "circuit.transient"
        why = ("the voltage to earth is above the 1000 V row of the impulse table"
               if c.supply == "mains" else "the plan gives no transient")
        return [_f("transient", "not-run", ctx.instrument.key,
                   f"Transient not checked: {why}; give {field} to check it.",
                   impulse.SOURCE)]
    out = []
    for item in ctx.chain:
        if item is ctx.instrument and ctx.current_clamp is not None:
            continue
        need = ctx.seen_transient if item is ctx.instrument else expected
        assert need is not None  # both come from the transient, None returned above
        cat, need_v = category_requirement(ctx, item)
        out.append(transient_finding(item, need, cat, need_v, ctx.derived.transient_source))
    return out


def transient_finding(item: ModelSpec, need: float, cat: str | None, need_v: float,
                      source: str) -> Finding:
    """Check 3 for one item: its impulse withstand (from the ratings covering ``cat`` at
    ``need_v`` V) against ``need`` V peak; ``source`` names where the expected transient comes
    from, for a pass or a fail on the numbers."""
    required = f"{qtext(need, VOLTAGE)} peak"
    covering = fitting_ratings(item, cat, need_v)
    have = withstand_of(item, covering)
    if item.ratings and not covering:
        cover = (f"CAT {cat} " if cat else "") + qtext(need_v, VOLTAGE)
        return _f("transient", "fail", item.key,
                  f"{item.key} has no rating that covers {cover}, so none of its "
                  f"impulse withstands applies here; {required} is not withstood.",
                  impulse.SOURCE, required, ", ".join(rating_text(r) for r in item.ratings),
                  need=need, unit="V", basis="peak")
    if have is None:
        return _f("transient", "unknown", item.key,
                  f"{item.key} states no impulse withstand (a 'none' rating without "
                  f"a transient); {required} cannot be checked.", impulse.SOURCE,
                  need=need, unit="V", basis="peak")
    by = max((r for r in covering if rating_withstand(r) == have), key=lambda r: r.voltage)
    ok = have >= need
    return _f("transient", "pass" if ok else "fail", item.key,
              f"{item.key} withstands {qtext(have, VOLTAGE)} peak by its rating "
              f"{rating_text(by)}; the circuit can deliver {required}"
              + ("." if ok else ": it may flash over."),
              source, margin=headroom(have, need), need=need, have=have, unit="V",
              basis="peak")


# -- check 4: altitude ------------------------------------------------------------------------

def rating_altitude(item: ModelSpec, r: Rating) -> float:
    if r.max_altitude is not None:
        return r.max_altitude
    return item.max_altitude if item.max_altitude is not None else DEFAULT_MAX_ALTITUDE


def _factor_text(h: float, rated: float) -> str:
    """The clearance factor a site at ``h`` (m) asks of an item rated up to ``rated`` (m), in
    words: IEC 60664-1 Table A.2 read conservatively, the next row up for the site (2500 m
    takes the 3000 m row, 1.14) and the row at or below for the rating, no interpolation."""
    try:
        row, f_site = alt.table_row(h)
    except alt.BeyondAltitudeTable:
        return ("the altitude is above the last row of IEC 60664-1 Table A.2 (20 000 m): no "
                "clearance correction is given for it")
    f_rated = alt.credited_factor(rated)
    return (f"IEC 60664-1 Table A.2 gives a factor of {f_site:.2f} at {qtext(h, LENGTH)} (its row "
            f"up to {qtext(row, LENGTH)}, no interpolation) against {f_rated:.2f} for the rated "
            f"{qtext(rated, LENGTH)}: clearances would need to be {f_site / f_rated:.2f} times "
            "larger")


def check_altitude(ctx: SetupContext) -> list[Finding]:
    h = ctx.plan.altitude
    out = []
    for item in ctx.chain:
        cat, need = category_requirement(ctx, item)
        out.append(altitude_finding(item, h, cat, need))
    return out


def altitude_finding(item: ModelSpec, h: float, cat: str | None, need: float) -> Finding:
    """Check 4 for one item at a site ``h`` m up: the altitude of its ratings that cover
    ``cat`` at ``need`` V (all its ratings when none covers), else its own."""
    relevant = fitting_ratings(item, cat, need) or list(item.ratings)
    if not relevant:
        top = item.max_altitude
        ok = h <= top
        return _f("altitude", "pass" if ok else "fail", item.key,
                  f"{item.key} is for use up to {qtext(top, LENGTH)}; the site is at "
                  f"{qtext(h, LENGTH)}" + ("." if ok else f"; {_factor_text(h, top)}."),
                  SRC_ALTITUDE, margin=headroom(top, h), need=h, have=top, unit="m")
    top_rating = max(relevant, key=lambda r: rating_altitude(item, r))
    top = rating_altitude(item, top_rating)
    if h <= top:
        note = ""
        if DEFAULT_MAX_ALTITUDE < h and alt.in_table(h):
            note = (f" (IEC 60664-1 Table A.2 factor there: {alt.altitude_factor(h):.2f}, "
                    "read from the next row up)")
        return _f("altitude", "pass", item.key,
                  f"{item.key}'s rating {rating_text(top_rating)} holds up to "
                  f"{qtext(top, LENGTH)}; the site is at {qtext(h, LENGTH)}{note}.",
                  SRC_ALTITUDE, margin=headroom(top, h), need=h, have=top, unit="m")
    return _f("altitude", "fail", item.key,
              f"{item.key}'s rating {rating_text(top_rating)} holds only up to "
              f"{qtext(top, LENGTH)}; at {qtext(h, LENGTH)} it does not apply: "
              f"{_factor_text(h, top)}.", SRC_ALTITUDE,
              margin=headroom(top, h), need=h, have=top, unit="m")


# -- the checks of an accessory alone ---------------------------------------------------------

# The checks whose finding on an accessory depends on that accessory and the plan alone
# (each writes one finding per item, its subject the item's key): its category, its tip when it
# is the item that touches the circuit, its transient, its altitude.
SOLO_CHECKS = ("category", "tip", "transient", "altitude")


def accessory_findings(item: ModelSpec, plan: Plan, derived: Derived, *, touching: bool,
                       discharge_tool: bool) -> list[Finding]:
    """The findings of :data:`SOLO_CHECKS` on the accessory ``item`` in any setup (in the
    order the checks write them): what checks 2 to 4 and the tip rule say of it, whatever the
    instrument; ``touching`` when it is the item that meets the circuit (a tip, or leads with no
    tip on them), ``discharge_tool`` when the setup's instrument is one. The same functions
    the checks call for every item of a chain, so a setup's findings on the accessory are
    these."""
    cat, need = plan_requirement(plan)
    out = [category_finding(item, cat, need)]
    if touching:
        out += tip_findings(item, plan, derived, discharge_tool)
    if derived.transient is not None:
        out.append(transient_finding(item, derived.transient, cat, need,
                                     derived.transient_source))
    out.append(altitude_finding(item, plan.altitude, cat, need))
    return out


# -- check 5: mode input ----------------------------------------------------------------------

def _limit(check, subject, what, have, need, dim, source, unit_note=""):
    required = qtext(need, dim)
    if have is None:
        return _f(check, "unknown", subject, f"{what}: the maker's limit is not recorded; "
                  f"{required}{unit_note} cannot be checked.", source, need=need,
                  unit=dim.unit)
    ok = have >= need
    return _f(check, "pass" if ok else "fail", subject,
              f"{what}: {qtext(have, dim)} against {required}{unit_note}"
              + ("." if ok else ", more than it is rated for."), source,
              margin=headroom(have, need), need=need, have=have, unit=dim.unit)


def check_mode_input(ctx: SetupContext) -> list[Finding]:
    c, mode, inst = ctx.plan.circuit, ctx.mode, ctx.instrument
    subject = f"{inst.key}/{mode.key}"
    if ctx.plan.task == "measure-current":
        clamp = ctx.current_clamp
        if clamp is not None:
            return [_limit("mode-input", clamp.key, f"Clamp {clamp.key} current rating",
                           clamp.current_rating, c.current, CURRENT, SRC_MODE),
                    _f("mode-input", "pass", subject, f"{inst.key} reads the clamp's output "
                       f"in {mode.label}; it is not connected to the circuit.", SRC_MODE)]
        return [_limit("mode-input", subject, f"{mode.label} maximum current",
                       mode.max_current, c.current, CURRENT, SRC_MODE)] + chain_current(ctx)
    seen = ctx.seen_voltage
    if ctx.plan.task == "discharge":
        seen = ctx.derived.peak_voltage / ctx.attenuation  # a capacitor holds the peak
    note = " (behind the divider)" if ctx.divider is not None else ""
    return [_limit("mode-input", subject, f"{mode.label} maximum input", mode.max_input,
                   seen, VOLTAGE, SRC_MODE, note)]


def chain_current(ctx: SetupContext) -> list[Finding]:
    """In a series current measurement the whole current I flows through every lead, tip and
    clip of the chain: each needs ``current_rating`` >= I (A), and the lowest rating governs
    (IEC 61010-031:2015, the rated current of a probe assembly). An item without a rating is
    ``unknown``; the instrument's own input is held against its ``max_current`` above."""
    need = ctx.plan.circuit.current
    carriers = [a for a in ctx.accessories if a.kind != "current-clamp"]
    if need is None or not carriers:
        return []
    required = qtext(need, CURRENT)
    out = [_f("mode-input", "unknown", a.key, f"{a.key} carries the {required} in series but "
              "its rated current is not recorded.", SRC_CHAIN_CURRENT, need=need, unit="A")
           for a in carriers if a.current_rating is None]
    rated = [(a, a.current_rating) for a in carriers if a.current_rating is not None]
    if rated:
        low, have = min(rated, key=lambda pair: pair[1])
        listing = ", ".join(f"{a.key} {qtext(rating, CURRENT)}" for a, rating in rated)
        ok = have >= need
        out.append(_f("mode-input", "pass" if ok else "fail", low.key,
                      f"The chain carries {required} in series; the lowest rated current in "
                      f"it is {low.key}'s {qtext(have, CURRENT)} ({listing})"
                      + ("." if ok else ": it would overheat."), SRC_CHAIN_CURRENT,
                      margin=headroom(have, need), need=need, have=have, unit="A"))
    return out


# -- check 6: reasonably foreseeable misuse ---------------------------------------------------

def _fuse_findings(ctx: SetupContext, subject: str, label: str, fuses, status_bad: str):
    """Fuses that a current input puts across the circuit: voltage (dc rating for dc) against
    the working voltage, always; breaking capacity against the prospective current, which
    only a plan with a prospective current (or source impedance) allows: ``not-run`` without
    one. IEC 61010-2-033 foreseeable misuse; a fuse must be rated for the circuit's voltage
    to interrupt it (its ac rating says nothing of dc)."""
    c = ctx.plan.circuit
    ipc = ctx.prospective_current
    fuses = [(who, f) for who, f in fuses if f is not None]
    if not fuses:
        across = qtext(c.voltage, VOLTAGE) + (f" ({qtext(ipc, CURRENT)} prospective)"
                                           if ipc is not None else "")
        return [_f("misuse", "unknown", subject,
                   f"{label}: no fuse is recorded; whether it survives being put across "
                   f"{across} is not known.", SRC_MISUSE,
                   need=ipc if ipc is not None else c.voltage,
                   unit="A" if ipc is not None else "V")]
    out = []
    v_need = c.voltage
    for who, fuse in fuses:
        v_have = fuse.voltage_dc if c.waveform == "dc" else fuse.voltage
        v_word = "dc voltage rating" if c.waveform == "dc" else "voltage rating"
        problems, unknowns = [], []
        if ipc is not None:
            if fuse.breaking_capacity is None:
                unknowns.append("breaking capacity")
            elif fuse.breaking_capacity < ipc:
                problems.append(f"breaks only {qtext(fuse.breaking_capacity, CURRENT)} of the "
                                f"{qtext(ipc, CURRENT)} prospective current")
        if v_have is None:
            unknowns.append(v_word)
        elif v_have < v_need:
            problems.append(f"its {v_word} {qtext(v_have, VOLTAGE)} is below "
                            f"{qtext(v_need, VOLTAGE)}")
        # The numbers of the finding are the pair that decides: the one with the least
        # headroom, else (nothing recorded to hold against) what the circuit asks first.
        pairs = [(headroom(have, need), need, have, unit) for need, have, unit in (
            (ipc, fuse.breaking_capacity, "A"), (v_need, v_have, "V"))
            if need is not None and have is not None]
        if pairs:
            margin, need_x, have_x, unit_x = min(pairs, key=lambda p: p[0])
        else:
            margin, have_x = None, None
            need_x, unit_x = (ipc, "A") if ipc is not None else (v_need, "V")
        numbers: dict[str, Any] = dict(need=need_x, have=have_x, unit=unit_x)
        if ipc is not None:
            required = f"{qtext(ipc, CURRENT)}, {qtext(v_need, VOLTAGE)}"
            available = ", ".join(x for x in (qtext(fuse.breaking_capacity, CURRENT),
                                              qtext(v_have, VOLTAGE)) if x)
        else:
            required, available = qtext(v_need, VOLTAGE), qtext(v_have, VOLTAGE)
        if problems:
            out.append(_f("misuse", status_bad, subject,
                          f"{label}, put across the circuit, meets a fuse ({who}) that "
                          + "; ".join(problems) + ": it may not clear the fault.", SRC_MISUSE,
                          required, available, margin, **numbers))
        elif unknowns:
            out.append(_f("misuse", "unknown", subject,
                          f"{label}: the fuse ({who}) has no recorded "
                          + " or ".join(unknowns) + ".", SRC_MISUSE, required, available,
                          margin, **numbers))
        elif ipc is not None:
            out.append(_f("misuse", "pass", subject,
                          f"{label}: the fuse ({who}) breaks "
                          f"{qtext(fuse.breaking_capacity, CURRENT)} at {qtext(v_have, VOLTAGE)}, "
                          f"enough for {qtext(ipc, CURRENT)} at {qtext(v_need, VOLTAGE)}.",
                          SRC_MISUSE, required, available, margin, **numbers))
        else:
            out.append(_f("misuse", "pass", subject,
                          f"{label}: the fuse ({who}) has a {v_word} of "
                          f"{qtext(v_have, VOLTAGE)}, enough for {qtext(v_need, VOLTAGE)}.",
                          SRC_MISUSE, required, available, margin, **numbers))
    if ipc is None:
        out.append(_f("misuse", "not-run", subject,
                      f"{label}: the fuse's breaking capacity is not checked: the plan gives "
                      "neither circuit.source_impedance nor circuit.prospective_current.",
                      SRC_MISUSE))
    return out


def _chain_fuses(ctx: SetupContext, mode_fuse: Fuse | None, mode: Mode | None = None):
    """The fuses in series with a current input, each with the words naming it: the meter's
    (with the front-end fuse element at the input's terminals and the fuse's rated current,
    where recorded), then those of fused accessories."""
    where = "in the meter"
    if mode is not None:
        ids = [e.id for e in ctx.instrument.front_end
               if e.type == "fuse" and set(e.between) & set(mode.terminals)]
        if ids:
            where += ", " + "/".join(ids)
    if mode_fuse is not None and mode_fuse.current is not None:
        where += f", {qtext(mode_fuse.current, CURRENT)}"
    items = [(where, mode_fuse)]
    items += [(f"in {a.key}", a.fuse) for a in ctx.accessories if a.fuse is not None]
    return items


def _as_misuse(findings: list[Finding], other: Mode) -> list[Finding]:
    """Another check's findings for ``other``, a mode selected by mistake, as misuse findings:
    a fail or an unknown limit is a caution on the planned setup (do not switch to it)."""
    out = []
    for f in findings:
        status = "caution" if f.status in ("fail", "unknown") else f.status
        out.append(replace(f, check="misuse", status=status,
                           message=f"If {other.label} is selected by mistake on the same "
                           "terminals: " + f.message
                           + (" Do not switch to it while connected." if status == "caution"
                              else ""), source=SRC_MISUSE + "; " + f.source))
    return out


def _misuse_energy(ctx: SetupContext, other: Mode) -> list[Finding]:
    """A low-Z mode (or one with a recorded energy limit) selected by mistake on a charged
    capacitance takes E = C*V0**2/2*(1-exp(-2t/(RC))) (J) in the plan's duration t through
    its input resistance R (all of C*V0**2/2 when R is not recorded); beyond its
    ``discharge_energy``, or with that limit unknown, it is a caution (IEC 61010-2-033
    foreseeable misuse; the energy by circuit theory)."""
    cap = ctx.capacitance
    if ctx.plan.task == "measure-current" or ctx.divider is not None or cap is None:
        return []  # in series, or behind a divider, the input is not across the capacitance
    r, limit = other.input_resistance, other.discharge_energy
    low_z = r is not None and r < LOW_Z and other.measures != "current"
    if not low_z and limit is None:
        return []  # a high-impedance input takes no more than check 5 already covers
    v0, t = ctx.derived.peak_voltage, ctx.plan.duration
    e = absorbed_to(cap, v0, 0.0) if r is None else absorbed_in(cap, v0, r, t)
    subject = f"{ctx.instrument.key}/{other.key}"
    path = "" if r is None else f" through {qtext(r, RESISTANCE)}"
    facts = (f"{other.label}, selected by mistake on the {qtext(cap, CAPACITANCE)} charged to "
             f"{qtext(v0, VOLTAGE)}, would take {qtext(e, ENERGY)}{path} in {qtext(t, TIME)}")
    if limit is None:
        return [_f("misuse", "caution", subject, facts + "; the energy it may absorb is not "
                   "recorded. Do not switch to it while connected.", SRC_MISUSE_ENERGY,
                   need=e, unit="J")]
    if e > limit:
        return [_f("misuse", "caution", subject, facts + f", more than its "
                   f"{qtext(limit, ENERGY)} limit. Do not switch to it while connected.",
                   SRC_MISUSE_ENERGY, margin=headroom(limit, e), need=e, have=limit,
                   unit="J")]
    return [_f("misuse", "pass", subject, facts + f", within its {qtext(limit, ENERGY)} limit.",
               SRC_MISUSE_ENERGY, margin=headroom(limit, e), need=e, have=limit, unit="J")]


def _current_sockets(ctx: SetupContext) -> list[Finding]:
    """Voltage tasks: leads left in a current socket of the instrument put that input's fuse
    across the circuit. Its breaking capacity against the prospective current and its voltage
    rating (dc for dc) against the working voltage; a shortfall is a caution naming the fuse
    (IEC 61010-2-033 foreseeable misuse, fused current inputs)."""
    inst, mode = ctx.instrument, ctx.mode
    if (ctx.plan.task not in VOLTAGE_TASKS or ctx.divider is not None
            or inst.integrated_leads):
        return []  # fixed leads cannot be moved; a divider's plug is not on the circuit
    out, seen = [], set()
    for other in inst.modes:
        if other.clamp or other.measures != "current":
            continue
        sockets = frozenset(other.terminals)
        if sockets == frozenset(mode.terminals) or sockets in seen:
            continue  # the same terminals are the selector's misuse, checked below
        seen.add(sockets)
        out += _fuse_findings(ctx, f"{inst.key}/{other.key}",
                              f"The {other.label} input ({'/'.join(other.terminals)}), "
                              "with the leads left in its sockets",
                              _chain_fuses(ctx, other.fuse, other), "caution")
    return out


def check_misuse(ctx: SetupContext) -> list[Finding]:
    """Reasonably foreseeable misuse (the idea of IEC 61010-2-033): the current input put
    across the circuit on a current task; on a voltage task, leads left in a current socket;
    every other mode on the same terminals held against checks 5 (its maximum input, or its
    fuse for a current mode), 8 (its time limit, the power of a low-Z input) and 9 (the
    stored energy a low-Z input would take)."""
    mode, inst = ctx.mode, ctx.instrument
    if mode.clamp or ctx.current_clamp is not None or ctx.is_discharge_tool:
        return []  # no terminals of the instrument touch the circuit
    out = []
    seen = ctx.seen_voltage
    if ctx.plan.task == "measure-current" and mode.measures == "current":
        out += _fuse_findings(ctx, f"{inst.key}/{mode.key}",
                              f"The {mode.label} input ({'/'.join(mode.terminals)})",
                              _chain_fuses(ctx, mode.fuse, mode), "fail")
    out += _current_sockets(ctx)
    for other in inst.modes:
        if other.key == mode.key or other.clamp:
            continue
        if set(other.terminals) != set(mode.terminals):
            continue
        subject = f"{inst.key}/{other.key}"
        if other.measures == "current":
            out += _fuse_findings(ctx, subject,
                                  f"{other.label}, selected by mistake on the same terminals",
                                  _chain_fuses(ctx, other.fuse, other), "caution")
            if ctx.plan.task == "measure-current":
                out += _as_misuse([_limit("mode-input", subject,
                                          f"{other.label} maximum current", other.max_current,
                                          ctx.plan.circuit.current, CURRENT, SRC_MODE)], other)
        elif other.max_input is None:
            out.append(_f("misuse", "unknown", subject,
                          f"{other.label} shares the terminals {'/'.join(mode.terminals)}; its "
                          f"maximum input is not recorded, so selecting it by mistake on "
                          f"{qtext(seen, VOLTAGE)} cannot be checked.", SRC_MISUSE,
                          need=seen, unit="V"))
        elif other.max_input < seen:
            out.append(_f("misuse", "caution", subject,
                          f"Do not switch to {other.label} while connected: it shares the "
                          f"terminals and takes only {qtext(other.max_input, VOLTAGE)}, less "
                          f"than {qtext(seen, VOLTAGE)}.", SRC_MISUSE,
                          margin=headroom(other.max_input, seen), need=seen,
                          have=other.max_input, unit="V"))
        else:
            out.append(_f("misuse", "pass", subject,
                          f"{other.label} on the same terminals takes "
                          f"{qtext(other.max_input, VOLTAGE)}, enough for {qtext(seen, VOLTAGE)} "
                          "if selected by mistake.", SRC_MISUSE,
                          margin=headroom(other.max_input, seen), need=seen,
                          have=other.max_input, unit="V"))
        out += _as_misuse(check_duration(replace(ctx, mode=other)), other)
        out += _misuse_energy(ctx, other)
    return out


# -- check 7: loading -------------------------------------------------------------------------

def reading_with_source(voltage: float, z_in: float, z_s: float) -> float:
    """The voltage an input of ``z_in`` ohm shows on a source of ``voltage`` behind ``z_s``
    ohm: V*Zin/(Zin+Zs) (voltage divider)."""
    if math.isinf(z_in):
        return voltage
    return voltage * z_in / (z_in + z_s)


def divider_error(z_load: float, required_load: float, r_out: float) -> float:
    """Relative error of a divider calibrated into ``required_load`` but loaded with
    ``z_load``, its output a Thevenin source of ``r_out``:
    Zl*(RL+Rout) / (RL*(Zl+Rout)) - 1."""
    return z_load * (required_load + r_out) / (required_load * (z_load + r_out)) - 1.0


DIVIDER_DATA_TOLERANCE = 0.10  # recorded and computed attenuation more than 10 % apart


def loaded_divider_attenuation(resistance: float, output_resistance: float,
                               load: float) -> float | None:
    """The attenuation V_in/V_out of a two-resistor divider loaded by ``load`` ohm, from its
    input resistance ``resistance`` R = Rt + Rb and its output resistance ``output_resistance``
    Rout = Rt*Rb/(Rt + Rb) (ohm, both of the divider alone, unloaded):

        Rb = 2*R*Rout / (R + sqrt(R**2 - 4*R*Rout))   the low leg, the smaller root of
                                                      Rb**2 - R*Rb + R*Rout = 0
        Rt = R - Rb                                   the high leg
        Rp = Rb*RL / (Rb + RL)                        the low leg in parallel with the load
        A  = (Rt + Rp) / Rp                           loaded input resistance over Rp

    Source: series and parallel resistors and the Thevenin equivalent of a divider (circuit
    theory). ``None`` when no two-resistor divider has these values: Rt*Rb/(Rt + Rb) is at most
    (Rt + Rb)/4, so an output resistance above a quarter of the input resistance is impossible.
    """
    disc = resistance * resistance - 4.0 * resistance * output_resistance
    if resistance <= 0 or output_resistance <= 0 or load <= 0 or disc < 0:
        return None
    r_low = 2.0 * resistance * output_resistance / (resistance + math.sqrt(disc))
    r_high = resistance - r_low
    r_par = r_low * load / (r_low + load)
    return (r_high + r_par) / r_par


def _divider_data(d: ModelSpec) -> list[Finding]:
    """A caution when a divider's recorded attenuation and its recorded resistance, output
    resistance and required load disagree by more than :data:`DIVIDER_DATA_TOLERANCE` (see
    :func:`loaded_divider_attenuation`); nothing when any of the four is not recorded."""
    if (d.attenuation is None or d.resistance is None or d.output_resistance is None
            or d.required_load is None):
        return []
    fields = (f"model {d.key}: attenuation {d.attenuation:g}:1, resistance "
              f"{qtext(d.resistance, RESISTANCE)}, output_resistance "
              f"{qtext(d.output_resistance, RESISTANCE)}, required_load "
              f"{qtext(d.required_load, RESISTANCE)}")
    computed = loaded_divider_attenuation(d.resistance, d.output_resistance, d.required_load)
    if computed is None:
        return [_f("loading", "caution", d.key, f"The recorded data of {d.key} do not fit a "
                   f"resistive divider ({fields}): an output resistance cannot exceed a "
                   "quarter of the input resistance. Check these fields against the maker's "
                   "data; readings through it are scaled by the recorded attenuation.",
                   SRC_DIVIDER_DATA, f"{d.attenuation:g}:1", "no divider fits",
                   need=d.attenuation, unit="1", compare=Compare.MATCH)]
    off = abs(computed - d.attenuation) / d.attenuation
    if off <= DIVIDER_DATA_TOLERANCE:
        return []
    return [_f("loading", "caution", d.key, f"The recorded data of {d.key} disagree ({fields}): "
               f"its resistances into the required load give about {_ratio_text(computed)}:1, "
               f"{off:.0%} from the recorded attenuation. Check these fields against the "
               "maker's data; readings through it are scaled by the recorded attenuation.",
               SRC_DIVIDER_DATA, f"{d.attenuation:g}:1", f"{_ratio_text(computed)}:1",
               need=d.attenuation, have=computed, unit="1", compare=Compare.MATCH)]


def _ratio_text(ratio: float) -> str:
    return f"{ratio:.4g}" if ratio < 1e4 else f"{ratio:.0f}"


def check_loading(ctx: SetupContext) -> list[Finding]:
    plan, mode, c = ctx.plan, ctx.mode, ctx.plan.circuit
    if plan.task in ("measure-current", "discharge") or mode.clamp or ctx.current_clamp:
        return []
    out = []
    front = ctx.divider if ctx.divider is not None else ctx.instrument
    z_in = ctx.divider.resistance if ctx.divider is not None else mode.input_resistance
    zs = ctx.source_impedance
    subject = front.key if ctx.divider is not None else f"{ctx.instrument.key}/{mode.key}"
    if zs is None:
        out.append(_f("loading", "not-run", subject, "Loading not checked: the plan gives "
                      "neither circuit.source_impedance nor circuit.prospective_current.",
                      SRC_LOADING))
    elif z_in is None:
        out.append(_f("loading", "unknown", subject, f"The input resistance of {subject} is "
                      "not recorded; the current it draws and its reading error are not "
                      "known.", SRC_LOADING))
    else:
        v_in = reading_with_source(c.voltage, z_in, zs)
        i = c.voltage / (z_in + zs)
        p = i * i * z_in
        low = 1.0 - v_in / c.voltage if c.voltage > 0 else 0.0
        shows = v_in / ctx.attenuation
        text = (f"{subject} ({qtext(z_in, RESISTANCE)}) draws {qtext(i, CURRENT)} and takes "
                f"{qtext(p, POWER)}; it will show {qtext(shows, VOLTAGE)}")
        if ctx.divider is not None:
            text += f" (for {qtext(v_in, VOLTAGE)} at the divider input)"
        if low > READING_TOLERANCE:
            out.append(_f("loading", "caution", subject, text + f", {low:.1%} low: the "
                          "source impedance drags the reading down.", SRC_LOADING,
                          f"<= {READING_TOLERANCE:.0%} low", f"{low:.2%} low",
                          need=READING_TOLERANCE, have=low, unit="1",
                          compare=Compare.AT_MOST))
        else:
            out.append(_f("loading", "pass", subject, text + ".", SRC_LOADING,
                          f"<= {READING_TOLERANCE:.0%} low", f"{low:.2%} low",
                          need=READING_TOLERANCE, have=low, unit="1",
                          compare=Compare.AT_MOST))
    d = ctx.divider
    if d is not None:
        out += _divider_load(ctx, d)
        out += _divider_data(d)
    return out


def _divider_load(ctx: SetupContext, d: ModelSpec) -> list[Finding]:
    z = ctx.mode.input_resistance
    subject = d.key
    if d.required_load is None or z is None:
        missing = "required load" if d.required_load is None else \
            f"input resistance of {ctx.instrument.key}/{ctx.mode.key}"
        return [_f("loading", "unknown", subject, f"The {missing} is not recorded; whether "
                   f"{d.key} reads true into this input is not known.", SRC_DIVIDER)]
    off = abs(z - d.required_load) / d.required_load
    required, available = qtext(d.required_load, RESISTANCE), qtext(z, RESISTANCE)
    load: dict[str, Any] = dict(need=d.required_load, have=z, unit="ohm",
                                compare=Compare.MATCH)
    if off <= LOAD_TOLERANCE:
        return [_f("loading", "pass", subject, f"{d.key} is calibrated into {required}; the "
                   f"input is {available}. It shows {qtext(ctx.seen_voltage, VOLTAGE)} for "
                   f"{qtext(ctx.plan.circuit.voltage, VOLTAGE)}.", SRC_DIVIDER, **load)]
    if d.output_resistance is None:
        return [_f("loading", "unknown", subject, f"{d.key} is calibrated into {required} but "
                   f"the input is {available}; its output resistance is not recorded, so the "
                   "error is not known.", SRC_DIVIDER, **load)]
    err = divider_error(z, d.required_load, d.output_resistance)
    return [_f("loading", "caution", subject, f"{d.key} is calibrated into {required} but the "
               f"input is {available}: the reading will be {abs(err):.1%} "
               f"{'low' if err < 0 else 'high'} ({qtext(ctx.seen_voltage * (1 + err), VOLTAGE)} "
               f"for {qtext(ctx.plan.circuit.voltage, VOLTAGE)}).", SRC_DIVIDER, **load)]


# -- check 8: low-Z and duration --------------------------------------------------------------

def input_power(voltage: float, resistance: float) -> float:
    """P = V**2/R (W) into ``resistance`` ohm at ``voltage`` V."""
    return voltage * voltage / resistance


def check_duration(ctx: SetupContext) -> list[Finding]:
    plan, mode = ctx.plan, ctx.mode
    if plan.task == "discharge" or ctx.is_discharge_tool:
        return []  # a draining capacitor is check 9's
    r = mode.input_resistance
    low_z = r is not None and r < LOW_Z and mode.measures != "current"
    if not low_z and mode.max_duration is None:
        return []
    subject = f"{ctx.instrument.key}/{mode.key}"
    parts = []
    if low_z and ctx.current_clamp is None:
        assert r is not None  # low_z needs a recorded input resistance
        v = ctx.seen_voltage
        if ctx.source_impedance is not None:
            v = reading_with_source(v, r, ctx.source_impedance)
        p = input_power(v, r)
        parts.append(f"{mode.label} ({qtext(r, RESISTANCE)}) draws {qtext(v / r, CURRENT)} and "
                     f"dissipates {qtext(p, POWER)}, {qtext(p * plan.duration, ENERGY)} over "
                     f"{qtext(plan.duration, TIME)}")
    required = qtext(plan.duration, TIME)
    if mode.max_duration is None:
        return [_f("low-z", "unknown", subject, "; ".join(parts) + "; the maker's time limit "
                   "for this mode is not recorded.", SRC_LOWZ, need=plan.duration, unit="s")]
    ok = plan.duration <= mode.max_duration
    parts.append(f"the mode is rated for {qtext(mode.max_duration, TIME)} at a time and the plan "
                 f"keeps it connected {required}")
    msg = "; ".join(parts) + ("." if ok else ": disconnect sooner or use a high-impedance mode.")
    return [_f("low-z", "pass" if ok else "fail", subject, msg[0].upper() + msg[1:], SRC_LOWZ,
               margin=headroom(mode.max_duration, plan.duration), need=plan.duration,
               have=mode.max_duration, unit="s")]


# -- check 9: stored energy and discharge -----------------------------------------------------

def _discharge_facts(ctx: SetupContext, prof: DischargeProfile) -> str:
    cap, v0 = qtext(prof.capacitance, CAPACITANCE), qtext(prof.v0, VOLTAGE)
    if prof.method == "rc":
        return (f"through {qtext(prof.resistance, RESISTANCE)} the {cap} at {v0} has tau "
                f"{qtext(prof.tau, TIME)}, peak current {qtext(prof.peak_current, CURRENT)}, peak "
                f"power {qtext(prof.peak_power, POWER)}")
    text = (f"through the front end of {ctx.instrument.key} in {ctx.mode.key} "
            f"({qtext(prof.resistance, RESISTANCE)} at the start) the {cap} at {v0} draws a peak "
            f"current of {qtext(prof.peak_current, CURRENT)}, peak power "
            f"{qtext(prof.peak_power, POWER)}")
    if prof.events:
        text += "; " + "; ".join(prof.events)
    return text


def check_discharge(ctx: SetupContext) -> list[Finding]:
    plan, mode = ctx.plan, ctx.mode
    if plan.task == "measure-current" or mode.clamp or ctx.current_clamp is not None:
        return []
    cap = ctx.capacitance
    discharging = plan.task == "discharge"
    if ctx.divider is not None:
        subject, limit = ctx.divider.key, ctx.divider.energy
    else:
        subject = f"{ctx.instrument.key}/{mode.key}"
        limit = mode.discharge_energy
        if ctx.is_discharge_tool and limit is None:
            limit = ctx.instrument.energy
    if cap is None:
        return [_f("discharge", "not-run", subject, "Stored energy not checked: the plan "
                   "gives neither circuit.capacitance nor circuit.stored_energy.",
                   SRC_DISCHARGE)]
    v0, vs = ctx.derived.peak_voltage, ctx.safe_level
    try:
        prof = discharge_profile(ctx)
    except DischargeUnsolved as exc:
        return [_f("discharge", "unknown", subject, f"The discharge through the front end of "
                   f"{ctx.instrument.key} in {mode.key} could not be solved ({exc}); the time "
                   f"to {qtext(vs, VOLTAGE)} and the energy the path takes are not known.",
                   SRC_FRONT_END)]
    if prof is None:
        return [_f("discharge", "unknown", subject, f"The input resistance of {subject} is "
                   "not recorded; how it drains the capacitance is not known.", SRC_DISCHARGE)]
    src = prof.source
    low_z = prof.resistance < LOW_Z
    drains = discharging or low_z or prof.tau < DRAIN_FACTOR * plan.duration
    if discharging:
        e, bound = absorbed_to(cap, v0, vs), False
    else:
        e, bound = prof.absorbed_in_hold()
    facts = _discharge_facts(ctx, prof)
    if discharging:
        facts += f"; it {prof.outcome()}"
    facts += f"; the path absorbs {'up to ' if bound else ''}{qtext(e, ENERGY)}"
    facts = facts[0].upper() + facts[1:]
    out = []
    if limit is not None:
        ok = e <= limit
        out.append(_f("discharge", "pass" if ok else "fail", subject, facts
                      + f" against its {qtext(limit, ENERGY)} limit"
                      + ("." if ok else ": it would be overstressed."), src,
                      margin=headroom(limit, e), need=e, have=limit, unit="J"))
    elif discharging or low_z:
        out.append(_f("discharge", "unknown", subject, facts
                      + "; the energy it may absorb is not recorded.", src, need=e, unit="J"))
    elif drains:
        # A capacitance can deliver no more into a resistive input than a stiff source at the
        # same voltage would (V**2/R for the whole duration), which the mode's maximum input
        # (check 5) already covers; so a high-impedance input passes, with the drain stated.
        out.append(_f("discharge", "pass", subject, facts
                      + f": it drains the capacitance while connected (tau under "
                      f"{DRAIN_FACTOR:g} x {qtext(plan.duration, TIME)}), no more than its "
                      "continuous input dissipation.", src, need=e, unit="J"))
    else:
        out.append(_f("discharge", "pass", subject, f"High-impedance input: tau "
                      f"{qtext(prof.tau, TIME)} through {qtext(prof.resistance, RESISTANCE)}, it "
                      f"barely drains the capacitance in {qtext(plan.duration, TIME)}.", src))
    if discharging:
        out += _hold_findings(ctx, prof, subject)
    return out


def _hold_findings(ctx: SetupContext, prof: DischargeProfile, subject: str) -> list[Finding]:
    """A discharge task: the time to the safe level against how long the path is held on (the
    plan's duration), and a discharge tool's power rating against the peak power."""
    out = []
    vs, hold = prof.v_safe, prof.duration
    if prof.time_to_safe is None:
        needed = prof.time_needed
        margin = headroom(hold, needed) if needed is not None and math.isfinite(needed) \
            else None
        out.append(_f("discharge", "fail", subject, f"Held on for {time_text(hold)} the "
                      f"capacitance does not reach {qtext(vs, VOLTAGE)}: it needs "
                      f"{prof.needed_text()}; after {time_text(hold)} "
                      f"{qtext(prof.end_voltage, VOLTAGE)} and "
                      f"{qtext(prof.energy_left, ENERGY)} are left. Hold it on longer or use a "
                      "lower-resistance path, and verify absence before touching.", prof.source,
                      prof.needed_text(), f"{time_text(hold)} held", margin, need=needed,
                      have=hold, unit="s"))
    elif prof.time_to_safe > DISCHARGE_TIME_LIMIT:
        t_safe = prof.time_to_safe
        out.append(_f("discharge", "caution", subject, f"The discharge to {qtext(vs, VOLTAGE)} "
                      f"takes {time_text(t_safe)}, more than {qtext(DISCHARGE_TIME_LIMIT, TIME)}: "
                      "hold the tool on and verify absence before touching.", prof.source,
                      available=time_text(t_safe), margin=headroom(DISCHARGE_TIME_LIMIT, t_safe),
                      need=DISCHARGE_TIME_LIMIT, have=t_safe, unit="s",
                      compare=Compare.AT_MOST))
    rating = ctx.instrument.power if ctx.is_discharge_tool else None
    if rating is not None and prof.peak_power > rating:
        law = "V0**2/R" if prof.method == "rc" else "V0 x I0"
        out.append(_f("discharge", "caution", subject, f"At the start the discharge puts "
                      f"{qtext(prof.peak_power, POWER)} ({law}) into {ctx.instrument.key}, more "
                      f"than its {qtext(rating, POWER)} power rating: the tool's resistor is "
                      "stressed beyond its rating for the first moments.", SRC_POWER,
                      margin=headroom(rating, prof.peak_power), need=prof.peak_power,
                      have=rating, unit="W"))
    return out

CHECKS = (check_category, check_tip, check_transient, check_altitude, check_mode_input,
          check_misuse, check_loading, check_duration, check_discharge)
