"""Check 11 (a unit's history) and check 12 (the cautions every result carries).

History belongs to units, not models, so these run after the per-model checks, when the
results are mapped onto units.
"""

from __future__ import annotations

from datetime import date

from ..standards import stored_energy as se
from .dead_work import DEAD_TASKS, isolation_caution
from .derived import Derived
from .findings import Compare, Finding
from .quantity import ENERGY, VOLTAGE, format_quantity as qtext
from .rules import verification_overdue
from .spec import Plan, UnitState

SRC_HISTORY = "the unit's logged events (common practice, no source)"
SRC_VARISTOR = "varistors degrade with each surge they clamp (maker's datasheets; common " \
               "practice, no source)"
WORN_CLAMP_EVENTS = 3  # three or more clamped transients are a caution (docs/rules.md, check 11)

# Events that are a stress on the input: one whose size was not recorded stays a caution.
# A fuse-open, mechanical or other event without a stated voltage is settled by the
# inspection that released its hold.
STRESS_KINDS = ("overvoltage", "transient", "discharge")


def exclusion_reason(unit: UnitState, on: date) -> str | None:
    """The first reason that keeps ``unit`` out of a job on ``on``: retired, away, on-hold (an
    open hold or the status), verification-overdue (due before the day); else ``None``. It
    reads the status, the open hold and the verification due alone (the evaluation asks once
    per distinct three)."""
    if unit.status == "retired":
        return "retired"
    if unit.status == "away":
        return "away"
    if unit.status == "on-hold" or unit.open_hold:
        return "on-hold"
    if verification_overdue(unit.verification_due, on):
        return "verification-overdue"
    return None


def check_history(unit: UnitState, mode: str | None) -> list[Finding]:
    """Past events of ``unit`` that still matter: one outside its rating in ``mode`` (for an
    accessory: in any mode), even after its hold was released; three or more transients that
    made its clamp conduct; no verification date on record."""
    out = []
    for ev in unit.history:
        if mode is not None and ev.mode is not None and ev.mode != mode:
            continue
        when = ev.occurred_at.date().isoformat() if ev.occurred_at else "an unknown date"
        if ev.within_rating is False:
            out.append(Finding("history", "caution", unit.tag,
                               f"{unit.tag} took a {ev.kind} event on {when} that was outside "
                               "its rating; it was released after inspection, but check it "
                               "before relying on it.", SRC_HISTORY, "", ev.kind))
        elif ev.within_rating is None and ev.kind in STRESS_KINDS:
            out.append(Finding("history", "caution", unit.tag,
                               f"{unit.tag} took a {ev.kind} event on {when} whose stress was "
                               "not recorded, so it is not known to have been within rating.",
                               SRC_HISTORY, "", ev.kind))
    clamped = sum(1 for ev in unit.history if ev.kind == "transient" and ev.clamp_conducted)
    if clamped >= WORN_CLAMP_EVENTS:
        out.append(Finding("history", "caution", unit.tag,
                           f"{unit.tag} has clamped {clamped} transients; its varistor may be "
                           "worn and clamp at a lower voltage or not at all.", SRC_VARISTOR,
                           f"< {WORN_CLAMP_EVENTS}", str(clamped),
                           required_value=WORN_CLAMP_EVENTS - 1, available_value=clamped,
                           unit="1", compare=Compare.AT_MOST))
    if unit.verification_due is None:
        out.append(Finding("history", "caution", unit.tag,
                           f"{unit.tag} has no verification date on record.", SRC_HISTORY))
    return out


DISCLAIMER = ("This result does not replace the instrument's manual, a risk assessment, the "
              "local electrical-safety rules and codes, or a qualified person's judgement.")
PROVE_TESTER = ("Prove the tester on a known live source before and after the "
                "verify-absence test.")
PPE = "Wear the personal protective equipment the local rules require."


def plan_cautions(plan: Plan, d: Derived) -> list[str]:
    """Check 12: what every result says, then the plan's hazards stated plainly."""
    c = plan.circuit
    out = [DISCLAIMER]
    if plan.task == "verify-absence":
        out.append(PROVE_TESTER)
    out.append(PPE)
    if plan.task in DEAD_TASKS:
        out.append(isolation_caution(c.voltage, c.waveform))
    level = qtext(d.hazardous_live, VOLTAGE) + (" rms" if c.waveform == "ac" else " dc")
    if d.hazardous:
        out.append(f"The circuit is hazardous live: {qtext(c.voltage, VOLTAGE)} "
                   f"{c.waveform} is above {level} ({d.hazardous_live_source}).")
    else:
        out.append(f"The working voltage {qtext(c.voltage, VOLTAGE)} {c.waveform} is not above "
                   f"the hazardous-live level {level} ({d.hazardous_live_source}); treat it "
                   "as live until proven otherwise.")
    if d.energy is not None:
        hz = se.hazards(d.peak_voltage, d.energy)
        stored = (f"The capacitance stores {qtext(d.energy, ENERGY)} at "
                  f"{qtext(d.peak_voltage, VOLTAGE)}")
        if hz:
            out.append(stored + ": " + ", ".join(h.kind for h in hz) + " hazard ("
                       + "; ".join(f"{h.kind} {h.threshold}" for h in hz) + f", {se.SOURCE}).")
        else:
            out.append(stored + f", below the capacitor hazard thresholds of {se.SOURCE}.")
        out.append(f"It stays charged after the supply is off: discharge it to "
                   f"{qtext(d.safe_level, VOLTAGE)} and verify absence before touching.")
    if c.supply == "mains" and d.transient is None:
        out.append("The voltage to earth is above 1000 V: measurement categories do not cover "
                   "this circuit; high-voltage equipment and procedures apply.")
    return out
