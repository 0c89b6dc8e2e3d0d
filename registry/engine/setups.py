"""Check 1, setup shape: which (instrument model, mode, accessory models) combinations can be
put together for a plan, and the context every other check reads.

A setup is an instrument and one mode, plus at most one lead-type accessory (test leads, an
hv divider or a current clamp) and at most one tip (probe or clip) on it, connectors matching
(docs/rules.md, check 1). Combinations are enumerated per model, not per unit: many units
share a model.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

from .derived import Derived
from .findings import Finding
from .quantity import RESISTANCE, VOLTAGE, format_quantity
from .spec import LEAD_KINDS, TIP_KINDS, Mode, ModelSpec, Plan

SOURCE = "setup shape: connectors, accessories and mode fit the task (common practice, no source)"
VOLTAGE_TASKS = ("measure-voltage", "verify-absence")
# An input below this counts as low impedance: it loads a circuit and drains a capacitance
# (docs/rules.md, check 1: a voltage mode under 100 kohm may serve to discharge). Common practice,
# no source.
LOW_Z = 100e3  # ohm


@dataclass(frozen=True)
class SetupContext:
    """Everything a check needs about one combination; frozen, SI floats.

    ``seen_voltage`` is the working voltage at the instrument's terminals (after a divider,
    V / attenuation); ``seen_transient`` the expected impulse there (``None`` if unknown).
    """

    plan: Plan
    derived: Derived
    instrument: ModelSpec
    mode: Mode
    lead: ModelSpec | None = None
    tip: ModelSpec | None = None

    @property
    def accessories(self) -> tuple[ModelSpec, ...]:
        return tuple(a for a in (self.lead, self.tip) if a is not None)

    @property
    def chain(self) -> tuple[ModelSpec, ...]:
        """The instrument, then its lead, then its tip."""
        return (self.instrument,) + self.accessories

    @property
    def divider(self) -> ModelSpec | None:
        return self.lead if self.lead is not None and self.lead.kind == "hv-divider" else None

    @property
    def current_clamp(self) -> ModelSpec | None:
        if self.lead is not None and self.lead.kind == "current-clamp":
            return self.lead
        return None

    @property
    def attenuation(self) -> float:
        d = self.divider
        return d.attenuation if d is not None and d.attenuation else 1.0

    @property
    def seen_voltage(self) -> float:
        return self.plan.circuit.voltage / self.attenuation

    @property
    def seen_to_earth(self) -> float:
        return self.plan.circuit.to_earth / self.attenuation

    @property
    def expected_impulse(self) -> float | None:
        return self.derived.transient

    @property
    def seen_transient(self) -> float | None:
        t = self.derived.transient
        return None if t is None else t / self.attenuation

    @property
    def generator_impedance(self) -> float | None:
        return self.derived.generator_impedance

    @property
    def prospective_current(self) -> float | None:
        return self.derived.prospective_current

    @property
    def source_impedance(self) -> float | None:
        return self.derived.source_impedance

    @property
    def capacitance(self) -> float | None:
        return self.derived.capacitance

    @property
    def safe_level(self) -> float:
        return self.derived.safe_level

    @property
    def altitude(self) -> float:
        return self.plan.altitude

    @property
    def is_discharge_tool(self) -> bool:
        return self.instrument.kind == "discharge-tool"

    @property
    def key(self) -> tuple[str, str, str | None, str | None]:
        return (self.instrument.key, self.mode.key,
                self.lead.key if self.lead else None, self.tip.key if self.tip else None)


def discharge_mode(tool: ModelSpec) -> Mode:
    """The mode of a discharge tool's setup: ``discharge``, its resistance as the input."""
    own = tool.mode("discharge")
    if own is not None:
        return own
    return Mode(key="discharge", label="Discharge", measures="voltage", waveform="dc",
                terminals=("HI", "LO"), input_resistance=tool.resistance,
                max_input=tool.max_voltage, discharge_energy=tool.energy)


def _waveform_covers(mode: Mode, waveform: str) -> bool:
    return mode.waveform == "both" or mode.waveform == waveform


def mode_fits(plan: Plan, instrument: ModelSpec, mode: Mode, lead: ModelSpec | None) -> bool:
    """Whether ``mode`` (with ``lead``) does the plan's task (docs/rules.md, check 1)."""
    task = plan.task
    if instrument.kind == "discharge-tool" and task != "discharge":
        return False  # a discharge tool measures nothing
    clamp_accessory = lead is not None and lead.kind == "current-clamp"
    if task in VOLTAGE_TASKS:
        return (not clamp_accessory and not mode.clamp and mode.measures == "voltage"
                and _waveform_covers(mode, plan.circuit.waveform))
    if task == "measure-current":
        if clamp_accessory:
            # A clamp accessory gives a voltage proportional to the current (no output type is
            # recorded, and a voltage output is the usual one): it goes into a voltage input
            # that covers the waveform. Common practice, no source.
            return (not mode.clamp and mode.measures == "voltage"
                    and _waveform_covers(mode, plan.circuit.waveform))
        return mode.measures == "current" and _waveform_covers(mode, plan.circuit.waveform)
    if task == "measure-resistance":
        return not clamp_accessory and mode.measures in ("resistance", "continuity")
    if task == "discharge":
        if clamp_accessory or (lead is not None and lead.kind == "hv-divider"):
            return False
        if instrument.kind == "discharge-tool":
            return mode.key == "discharge"
        return (mode.measures == "voltage" and not mode.clamp
                and mode.input_resistance is not None and mode.input_resistance < LOW_Z
                and (mode.discharge_energy is not None or bool(instrument.front_end)))
    return False


def _lead_fits(plan: Plan, instrument: ModelSpec, mode: Mode, lead: ModelSpec | None) -> bool:
    if mode.clamp:
        return lead is None  # the jaw is the instrument's own
    if lead is None:
        return instrument.integrated_leads
    if not lead_connects(instrument, lead):
        return False
    if lead.kind == "hv-divider":
        v_min = lead.min_voltage
        return (plan.task in VOLTAGE_TASKS
                and (v_min is None or plan.circuit.voltage >= v_min))
    return True


def plugs_into(plug: str | None, holder: ModelSpec) -> bool:
    """Whether a plug named ``plug`` goes into one of ``holder``'s sockets; no plug recorded
    fits nothing. Connector names are the fleet's own; common practice (no source)."""
    return plug is not None and plug in holder.connectors


def lead_connects(instrument: ModelSpec, lead: ModelSpec) -> bool:
    """Whether a lead-type accessory plugs into ``instrument``: not one with integrated
    leads, and the lead's plug in one of its sockets. The one connector rule for a lead: the
    setups and the audit workbook both call it."""
    return not instrument.integrated_leads and plugs_into(lead.connector, instrument)


def tip_connects(instrument: ModelSpec, lead: ModelSpec | None, tip: ModelSpec) -> bool:
    """Whether a tip plugs into ``lead`` (no tip on a current clamp), or, with no lead, into
    an instrument's integrated leads. The one connector rule for a tip: the setups and the
    audit workbook both call it."""
    if lead is not None and lead.kind == "current-clamp":
        return False
    if lead is None and not instrument.integrated_leads:
        return False
    return plugs_into(tip.connector, lead if lead is not None else instrument)


def _tip_fits(instrument: ModelSpec, lead: ModelSpec | None, tip: ModelSpec | None) -> bool:
    return tip is None or tip_connects(instrument, lead, tip)


def instrument_modes(model: ModelSpec) -> tuple[Mode, ...]:
    if model.kind == "discharge-tool":
        return (discharge_mode(model),)
    return model.modes


def enumerate_setups(plan: Plan, derived: Derived, models) -> Iterator[SetupContext]:
    """Every setup shape the models allow for the plan, one context per combination of
    instrument model, mode, lead model (or none) and tip model (or none)."""
    models = list(models)
    instruments = [m for m in models if m.is_instrument]
    leads = [None] + [m for m in models if m.kind in LEAD_KINDS]
    tips = [None] + [m for m in models if m.kind in TIP_KINDS]
    for inst in instruments:
        for mode in instrument_modes(inst):
            for lead in leads:
                if not _lead_fits(plan, inst, mode, lead):
                    continue
                if not mode_fits(plan, inst, mode, lead):
                    continue
                for tip in tips:
                    if mode.clamp and tip is not None:
                        continue
                    if not _tip_fits(inst, lead, tip):
                        continue
                    yield SetupContext(plan, derived, inst, mode, lead, tip)


def check_setup(ctx: SetupContext) -> list[Finding]:
    """Check 1's word on a combination that has the right shape: what it is made of."""
    parts = [f"{ctx.instrument.key} in {ctx.mode.key}"]
    if ctx.lead is not None:
        parts.append(f"{ctx.lead.kind} {ctx.lead.key}")
    if ctx.tip is not None:
        parts.append(f"{ctx.tip.kind} {ctx.tip.key}")
    msg = "Setup: " + ", ".join(parts) + "; connectors match and the mode does the task."
    if ctx.divider is not None:
        msg += (f" The divider ({ctx.attenuation:g}:1) brings "
                f"{format_quantity(ctx.plan.circuit.voltage, VOLTAGE)} down to "
                f"{format_quantity(ctx.seen_voltage, VOLTAGE)} at the instrument.")
    if ctx.plan.task == "discharge" and not ctx.is_discharge_tool:
        msg += (f" The {ctx.mode.label} input "
                f"({format_quantity(ctx.mode.input_resistance, RESISTANCE)}) is used to "
                "discharge.")
    return [Finding("setup", "pass", ctx.instrument.key, msg, SOURCE,
                    required=ctx.plan.task, available=ctx.mode.key)]
