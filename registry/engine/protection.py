"""Check 10 as the engine runs it: the front-end analysis of ``network`` for one setup.

The setup's own mode is solved as it is used; every other mode on the same terminals is solved
too, as reasonably foreseeable misuse (the idea of IEC 61010-2-033: a selector left on the
wrong position), whose failures become cautions.
"""

from __future__ import annotations

from .derived import Derived
from .discharge import DischargeUnsolved, discharge_profile, uses_front_end
from .findings import Finding
from .network import (CHECK, SOLVE_ERRORS, drawing_marks, protection_path_findings,
                      protection_path_report)
from .network.limits import SRC_PRACTICE
from .quantity import CAPACITANCE, VOLTAGE, format_quantity as qtext
from .setups import SetupContext, discharge_mode
from .spec import Fleet, Plan


def stresses_for(ctx: SetupContext) -> dict:
    """The scenario values the instrument's front end faces in this setup.

    Behind a divider the instrument sees the working voltage and the impulse divided by the
    attenuation, from the divider's output resistance; the circuit's capacitance then drains
    through the divider, not the instrument, so no discharge is solved.
    """
    divider = ctx.divider
    if divider is not None:
        return dict(working_voltage=ctx.seen_voltage, waveform=ctx.plan.circuit.waveform,
                    source_impedance=divider.output_resistance,
                    impulse_peak=ctx.seen_transient,
                    generator_impedance=divider.output_resistance,
                    capacitance=None, safe_voltage=ctx.safe_level, altitude=ctx.altitude,
                    duration=ctx.plan.duration)
    return dict(working_voltage=ctx.plan.circuit.voltage, waveform=ctx.plan.circuit.waveform,
                source_impedance=ctx.source_impedance, impulse_peak=ctx.expected_impulse,
                generator_impedance=ctx.generator_impedance, capacitance=ctx.capacitance,
                safe_voltage=ctx.safe_level, altitude=ctx.altitude,
                duration=ctx.plan.duration)


def protection_path_check(ctx: SetupContext) -> list[Finding]:
    """docs/rules.md, check 10 for a setup; [] when the instrument's model has no front end."""
    model = ctx.instrument
    if not model.front_end or ctx.mode.clamp or ctx.current_clamp is not None:
        return []
    values = stresses_for(ctx)
    out = _guarded(model, ctx.mode, values, misuse=False)
    out += discharge_outcome(ctx)
    terminals = set(ctx.mode.terminals)
    for other in model.modes:
        if other.key == ctx.mode.key or other.clamp or set(other.terminals) != terminals:
            continue
        out.extend(_guarded(model, other, values, misuse=True))
    return out


def _guarded(model, mode, values: dict, misuse: bool) -> list[Finding]:
    """Check 10 for one mode; a solve failure that escapes the analysis becomes one
    ``unknown`` finding naming the model, the mode and why (the setup is then unverified and
    every other setup is still judged)."""
    try:
        return protection_path_findings(model, mode, misuse=misuse, **values)
    except SOLVE_ERRORS as exc:
        reason = str(exc) or type(exc).__name__
        return [Finding(CHECK, "unknown", model.key,
                        f"Model {model.key}, mode {mode.key}: the front end could not be "
                        f"solved ({reason}), so its stresses are unknown.",
                        SRC_PRACTICE)]


def discharge_outcome(ctx: SetupContext) -> list[Finding]:
    """Check 10's word on the discharge through the setup's own mode: the outcome of the same
    (cached) solve check 9 reads, from :func:`registry.engine.discharge.discharge_profile`, so
    the two give one time to the safe level. A discharge task that does not reach the safe
    level within the hold is a caution here; check 9 fails it."""
    if not ctx.capacitance or not uses_front_end(ctx):
        return []
    try:
        prof = discharge_profile(ctx)
    except DischargeUnsolved:
        return []  # the scenario's own stress items say the discharge could not be solved
    if prof is None:
        return []
    short = ctx.plan.task == "discharge" and not prof.reached
    text = (f"Mode {ctx.mode.key}, discharge through the front end: the "
            f"{qtext(prof.capacitance, CAPACITANCE)} at {qtext(prof.v0, VOLTAGE)} {prof.outcome()}")
    if prof.events:
        text += " (" + "; ".join(prof.events) + ")"
    if ctx.plan.task != "discharge":
        return [Finding(CHECK, "caution" if short else "pass", ctx.instrument.key, text + ".",
                        prof.source)]
    # A discharge task: the time the capacitance needs to reach the safe level against the
    # time the plan holds the path on.
    return [Finding(CHECK, "caution" if short else "pass", ctx.instrument.key, text + ".",
                    prof.source, prof.needed_text(), required_value=prof.time_needed,
                    available_value=prof.duration, unit="s")]


def context_of(plan: Plan, derived: Derived, fleet: Fleet, instrument_model: str, mode: str,
               accessory_models: tuple[str, ...]) -> SetupContext:
    """The setup context of a ranked setup, rebuilt from its model keys (for a drawing)."""
    instrument = fleet.models[instrument_model]
    chosen = instrument.mode(mode) or discharge_mode(instrument)
    lead = tip = None
    for key in accessory_models:
        model = fleet.models[key]
        if model.kind in ("probe", "clip"):
            tip = model
        else:
            lead = model
    return SetupContext(plan=plan, derived=derived, instrument=instrument, mode=chosen,
                        lead=lead, tip=tip)


def setup_marks(ctx: SetupContext, closest: int = 3) -> dict[str, str]:
    """Labels for the front-end drawing of a setup: the elements that fail in its own mode and
    the ``closest`` others to their limits."""
    if not ctx.instrument.front_end or ctx.mode.clamp or ctx.current_clamp is not None:
        return {}
    try:
        report = protection_path_report(ctx.instrument, ctx.mode, **stresses_for(ctx))
    except SOLVE_ERRORS:  # the drawing is still drawn, without marks
        return {}
    return drawing_marks(report, closest=closest)
