"""The result of a check (SPEC §4, ``withstand-result/1``): setups ranked, units left out,
cautions."""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date

from .derived import Derived
from .findings import _SEVERITY, Finding
from .spec import Plan

FORMAT = "withstand-result/1"
VERDICT_ORDER = ("suitable", "conditional", "unverified", "unsuitable")


def _clean(x):
    return None if isinstance(x, float) and not math.isfinite(x) else x


def setup_margin(findings) -> float | None:
    """A setup's margin: the smallest relative headroom over its numeric findings."""
    margins = [f.margin for f in findings if f.margin is not None]
    return min(margins) if margins else None


def deciding_finding(findings) -> Finding | None:
    """The one finding that decides: the worst status, and among those the least headroom."""
    if not findings:
        return None
    def key(f):
        m = f.margin if f.margin is not None else math.inf
        return (-_SEVERITY[f.status], m)
    return min(findings, key=key)


@dataclass(frozen=True)
class SetupResult:
    instrument: str  # unit tag
    mode: str  # mode key
    accessories: tuple[str, ...]  # unit tags, lead first
    verdict: str
    margin: float | None
    findings: tuple[Finding, ...]
    instrument_model: str = ""
    accessory_models: tuple[str, ...] = ()
    accessory_sites: tuple[str | None, ...] = ()
    mode_label: str = ""
    site: str | None = None
    verification_due: date | None = None

    @property
    def deciding(self) -> Finding | None:
        return deciding_finding(self.findings)

    def as_dict(self) -> dict:
        return {"instrument": self.instrument, "mode": self.mode,
                "accessories": list(self.accessories), "verdict": self.verdict,
                "margin": _clean(self.margin),
                "findings": [dict(f.as_dict(), margin=_clean(f.margin))
                             for f in self.findings]}


@dataclass(frozen=True)
class Excluded:
    unit: str
    reason: str
    model: str = ""

    def as_dict(self) -> dict:
        return {"unit": self.unit, "reason": self.reason}


def sort_key(s: SetupResult, plan_site: str | None):
    """SPEC §4: verdict order, then larger margin first (no margin last), then units at the
    plan's site, then the latest verification due first; tag and mode keep it stable."""
    margin = s.margin if s.margin is not None else -math.inf
    due = s.verification_due.toordinal() if s.verification_due else 0
    return (VERDICT_ORDER.index(s.verdict), -margin,
            0 if (plan_site is not None and s.site == plan_site) else 1, -due,
            s.instrument, s.mode, s.accessories)


def plan_as_dict(plan: Plan, d: Derived) -> dict:
    """The plan normalised to SI, with its derived values."""
    c = plan.circuit
    return {
        "format": "withstand-plan/1", "title": plan.title, "task": plan.task,
        "circuit": {"supply": c.supply, "category": c.category, "waveform": c.waveform,
                    "voltage": c.voltage, "voltage_to_earth": c.to_earth,
                    "frequency": c.frequency, "transient": c.transient,
                    "source_impedance": _clean(d.source_impedance),
                    "prospective_current": _clean(d.prospective_current),
                    "capacitance": d.capacitance, "stored_energy": d.energy,
                    "current": c.current},
        "site": {"name": plan.site, "altitude": plan.altitude, "wet": plan.wet},
        "duration": plan.duration,
        "discharge_to": d.safe_level if plan.task == "discharge" else None,
        "on": plan.on.isoformat() if plan.on else None,
        "transient": d.transient, "energy": d.energy,
        "prospective_current": _clean(d.prospective_current),
        "hazardous_live": d.hazardous_live,
        "derived": d.as_dict(),
    }


@dataclass(frozen=True)
class Result:
    plan: Plan
    derived: Derived
    setups: tuple[SetupResult, ...]
    excluded: tuple[Excluded, ...] = ()
    cautions: tuple[str, ...] = ()
    on: date | None = None

    def setups_for(self, tag: str) -> tuple[SetupResult, ...]:
        """The setups whose instrument or accessory is the unit ``tag``."""
        return tuple(s for s in self.setups if s.instrument == tag or tag in s.accessories)

    @property
    def any_fit(self) -> bool:
        return any(s.verdict in ("suitable", "conditional") for s in self.setups)

    def as_json(self) -> dict:
        return {"format": FORMAT, "plan": plan_as_dict(self.plan, self.derived),
                "setups": [s.as_dict() for s in self.setups],
                "excluded": [e.as_dict() for e in self.excluded],
                "cautions": list(self.cautions)}
