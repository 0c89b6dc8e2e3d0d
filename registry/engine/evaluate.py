"""Run a plan against a fleet: checks per model combination, then mapped onto units.

The checks depend on the models (instrument, mode, accessories) and the plan only, so each
combination is evaluated once however many units share it; units then bring their state
(exclusions), their history (check 11), their site and verification date (ranking).
"""

from __future__ import annotations

from datetime import date
from typing import Callable, Sequence

from .checks import CHECKS
from .derived import derive
from .findings import Finding, verdict_of
from .history import check_history, exclusion_reason, plan_cautions
from .result import Excluded, Result, SetupResult, setup_margin, sort_key
from .setups import SetupContext, check_setup, enumerate_setups
from .spec import Fleet, Plan, SpecError, UnitState

ExtraCheck = Callable[[SetupContext], list[Finding]]


def findings_for(ctx: SetupContext, extra_checks: Sequence[ExtraCheck] = ()) -> tuple[Finding, ...]:
    """Every check's findings for one combination: check 1, checks 2 to 9, then the extra
    checks (check 10, the front-end analysis, plugs in here)."""
    out = list(check_setup(ctx))
    for check in tuple(CHECKS) + tuple(extra_checks):
        out.extend(check(ctx))
    return tuple(out)


def _unit_rank(unit: UnitState, plan: Plan, near: str | None):
    """Which of several units of one accessory model to hand out: a clean history first, then
    one at the plan's site, then one where the instrument is, then the latest verification
    due, then the tag."""
    worries = len(check_history(unit, None))
    due = unit.verification_due.toordinal() if unit.verification_due else 0
    at_site = 0 if (plan.site is not None and unit.site == plan.site) else 1
    by_instrument = 0 if (near is not None and unit.site == near) else 1
    return (worries, at_site, by_instrument, -due, unit.tag)


def _choice_key(s: SetupResult, site: str | None):
    """Among one instrument unit's options for a mode: the SPEC §4 order, but with fewer
    failing, then unknown, then caution findings first, so the accessories offered are the
    ones that leave the fewest problems."""
    count = {k: sum(1 for f in s.findings if f.status == k) for k in ("fail", "unknown",
                                                                       "caution")}
    rank = sort_key(s, site)
    return (rank[0], count["fail"], count["unknown"], count["caution"], rank[1],
            sum(1 for where in s.accessory_sites if where != site)) + rank[2:]


def evaluate(plan: Plan, fleet: Fleet, *, extra_checks: Sequence[ExtraCheck] = ()) -> Result:
    """The result of ``plan`` against ``fleet``: one setup per available instrument unit and
    mode (with the best accessory units for it), ranked; the units left out and why; the
    cautions. ``plan.on`` is the day of the job (today when not given)."""
    on = plan.on or date.today()
    derived = derive(plan)
    excluded: list[Excluded] = []
    available: dict[str, list[UnitState]] = {}
    for unit in fleet.units:
        if unit.model not in fleet.models:
            raise SpecError(f"unit {unit.tag}: model {unit.model!r} is not in the fleet")
        reason = exclusion_reason(unit, on)
        if reason is not None:
            excluded.append(Excluded(unit.tag, reason, unit.model))
        else:
            available.setdefault(unit.model, []).append(unit)

    models = [m for key, m in fleet.models.items() if key in available]
    combos: dict[tuple[str, str], list[tuple[SetupContext, tuple[Finding, ...]]]] = {}
    for ctx in enumerate_setups(plan, derived, models):
        combos.setdefault((ctx.instrument.key, ctx.mode.key), []).append(
            (ctx, findings_for(ctx, extra_checks)))

    setups: list[SetupResult] = []
    for unit in fleet.units:
        if unit.model not in available or unit not in available[unit.model]:
            continue
        model = fleet.models[unit.model]
        if not model.is_instrument:
            continue
        for (inst_key, mode_key), options in combos.items():
            if inst_key != model.key:
                continue
            best = None
            for ctx, found in options:
                acc_units = []
                for acc in ctx.accessories:
                    pool = [u for u in available.get(acc.key, []) if u.tag != unit.tag]
                    acc_units.append(min(pool, key=lambda u: _unit_rank(u, plan, unit.site)))
                findings = list(found) + check_history(unit, mode_key)
                for u in acc_units:
                    findings += check_history(u, None)
                candidate = SetupResult(
                    instrument=unit.tag, mode=mode_key,
                    accessories=tuple(u.tag for u in acc_units),
                    verdict=verdict_of(findings), margin=setup_margin(findings),
                    findings=tuple(findings), instrument_model=model.key,
                    accessory_models=tuple(a.key for a in ctx.accessories),
                    accessory_sites=tuple(u.site for u in acc_units),
                    mode_label=ctx.mode.label, site=unit.site,
                    verification_due=unit.verification_due)
                if best is None or (_choice_key(candidate, plan.site)
                                    < _choice_key(best, plan.site)):
                    best = candidate
            if best is not None:
                setups.append(best)
    setups.sort(key=lambda s: sort_key(s, plan.site))
    return Result(plan=plan, derived=derived, setups=tuple(setups), excluded=tuple(excluded),
                  cautions=tuple(plan_cautions(plan, derived)), on=on)
