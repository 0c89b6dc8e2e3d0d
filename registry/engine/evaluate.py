"""Run a plan against a fleet, the whole check (checks 1 to 12, the front-end analysis of
check 10 included): checks per model combination, then mapped onto units.

The checks depend on the models (instrument, mode, accessories) and the plan only, so each
combination is evaluated once however many units share it; units then bring their state
(exclusions), their history (check 11), their site and verification date (ranking). Every
accessory unit that could join a setup is listed with the best verdict it takes part in.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from datetime import date

from .checks import CHECKS
from .derived import derive
from .dead_work import check_proving_dead
from .findings import _SEVERITY, Finding, verdict_of
from .history import check_history, exclusion_reason, plan_cautions
from .protection import protection_path_check
from .result import (VERDICT_ORDER, AccessoryResult, Excluded, Result, SetupResult,
                     deciding_finding, setup_margin, sort_key)
from .setups import SetupContext, check_setup, enumerate_setups
from .spec import Fleet, Plan, SpecError, UnitState

ExtraCheck = Callable[[SetupContext], list[Finding]]
# Rules of the task beside checks 2 to 9 (engine/dead_work.py).
TASK_CHECKS: tuple[ExtraCheck, ...] = (check_proving_dead,)
# Check 10, the front-end analysis (engine/protection.py), after the others.
FRONT_END_CHECKS: tuple[ExtraCheck, ...] = (protection_path_check,)


def findings_for(ctx: SetupContext, extra_checks: Sequence[ExtraCheck] = ()) -> tuple[Finding, ...]:
    """Every check's findings for one combination: check 1, checks 2 to 9, the task's rules,
    check 10, then any extra checks a caller adds."""
    out = list(check_setup(ctx))
    for check in tuple(CHECKS) + TASK_CHECKS + FRONT_END_CHECKS + tuple(extra_checks):
        out.extend(check(ctx))
    return tuple(out)


def _unit_rank(unit: UnitState, plan: Plan, near: str | None):
    """Which of several units of one accessory model to hand out: a clean history first, then
    one kept where the instrument is (they travel to the job together), then one at the plan's
    site, then the latest verification due, then the tag."""
    worries = len(check_history(unit, None))
    due = unit.verification_due.toordinal() if unit.verification_due else 0
    at_site = 0 if (plan.site is not None and unit.site == plan.site) else 1
    by_instrument = 0 if (near is not None and unit.site == near) else 1
    return (worries, by_instrument, at_site, -due, unit.tag)


def _choice_key(s: SetupResult, site: str | None):
    """Among one instrument unit's options for a mode: the ranking order, but with fewer
    failing, then unknown, then caution findings first, so the accessories offered are the
    ones that leave the fewest problems; then fewer accessories from another site than the
    instrument."""
    count = {k: sum(1 for f in s.findings if f.status == k) for k in ("fail", "unknown",
                                                                       "caution")}
    rank = sort_key(s, site)  # (verdict, tester rank, -margin, site, due, ...)
    return (rank[0], count["fail"], count["unknown"], count["caution"], rank[2],
            len(s.cross_site)) + rank[3:]


def _own(f: Finding, model_key: str, tag: str | None) -> bool:
    """Whether a finding is about the accessory itself (its model, a part of it, its unit)."""
    return f.subject in (model_key, tag) or f.subject.split("/")[0] == model_key


@dataclass(frozen=True)
class _Part:
    """What an accessory offer needs of a list of findings: the worst severity, the deciding
    finding, and the same for the findings about the accessory itself."""

    worst: int
    deciding: Finding | None
    own_worst: int
    own_deciding: Finding | None
    has_own: bool


def _part(findings, model_key: str, tag: str | None) -> _Part:
    own = [f for f in findings if _own(f, model_key, tag)]
    return _Part(max((_SEVERITY[f.status] for f in findings), default=0),
                 deciding_finding(findings), max((_SEVERITY[f.status] for f in own), default=0),
                 deciding_finding(own), bool(own))


def _joined(a: _Part, b: _Part) -> _Part:
    """The part of two lists of findings together (the deciding finding is a minimum)."""
    def pick(x, y):
        return deciding_finding([f for f in (x, y) if f is not None])
    return _Part(max(a.worst, b.worst), pick(a.deciding, b.deciding),
                 max(a.own_worst, b.own_worst), pick(a.own_deciding, b.own_deciding),
                 a.has_own or b.has_own)


def accessory_rank(p: _Part, instrument: str, mode: str):
    """(rank, verdict, margin, reason) of one accessory unit in one setup. Rank: the verdict,
    then how bad its own worst finding is (a setup where it is not at fault first), then the
    larger margin. The reason, when the setup does not fit: its own worst finding if that is as
    bad as the verdict ("do not use these leads"), else the setup's deciding finding."""
    verdict = {0: "suitable", 1: "conditional", 2: "unverified", 3: "unsuitable"}[p.worst]
    if verdict in ("suitable", "conditional"):
        reason = None
        margin = p.deciding.margin if p.deciding is not None else None
    else:
        reason = p.own_deciding if p.has_own and p.own_worst == p.worst else p.deciding
        margin = reason.margin if reason is not None else None
    m = margin if margin is not None else float("-inf")
    return (VERDICT_ORDER.index(verdict), p.own_worst, -m, instrument, mode), verdict, \
        margin, reason


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
    history: dict[str, list[Finding]] = {}

    def accessory_history(u: UnitState) -> list[Finding]:
        if u.tag not in history:
            history[u.tag] = check_history(u, None)
        return history[u.tag]

    offers: dict[str, tuple] = {}  # accessory tag -> (rank, AccessoryResult), the best
    parts: dict[tuple[int, int], tuple] = {}  # (combination, slot) -> (findings, _Part)
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
            own_history = check_history(unit, mode_key)
            for ctx, found in options:
                acc_units = []
                for acc in ctx.accessories:
                    pool = [u for u in available.get(acc.key, []) if u.tag != unit.tag]
                    acc_units.append(min(pool, key=lambda u: _unit_rank(u, plan, unit.site)))
                findings = list(found) + own_history
                for u in acc_units:
                    findings += accessory_history(u)
                # every accessory unit of these models, in this setup in place of the one
                # chosen for it; the combination's own findings are summed up once per model
                for i, acc in enumerate(ctx.accessories):
                    key = (id(found), i)
                    if key not in parts:
                        parts[key] = (found, _part(found, acc.key, None))
                    base = parts[key][1]
                    for u in available.get(acc.key, []):
                        if u.tag == unit.tag:
                            continue
                        units_here = acc_units[:i] + [u] + acc_units[i + 1:]
                        extra = list(own_history)
                        for x in units_here:
                            extra += accessory_history(x)
                        p = _joined(base, _part(extra, acc.key, u.tag)) if extra else base
                        rank, verdict, margin, reason = accessory_rank(p, unit.tag, mode_key)
                        if u.tag in offers and not rank < offers[u.tag][0]:
                            continue
                        offers[u.tag] = (rank, AccessoryResult(
                            unit=u.tag, model=acc.key, kind=acc.kind, verdict=verdict,
                            instrument=unit.tag, mode=mode_key,
                            accessories=tuple(x.tag for x in units_here), margin=margin,
                            reason=reason, findings=tuple(found) + tuple(extra)))
                candidate = SetupResult(
                    instrument=unit.tag, mode=mode_key,
                    accessories=tuple(u.tag for u in acc_units),
                    verdict=verdict_of(findings), margin=setup_margin(findings),
                    findings=tuple(findings), instrument_model=model.key,
                    accessory_models=tuple(a.key for a in ctx.accessories),
                    accessory_sites=tuple(u.site for u in acc_units),
                    mode_label=ctx.mode.label, site=unit.site,
                    verification_due=unit.verification_due, instrument_kind=model.kind)
                if best is None or (_choice_key(candidate, plan.site)
                                    < _choice_key(best, plan.site)):
                    best = candidate
            if best is not None:
                setups.append(best)
    setups.sort(key=lambda s: sort_key(s, plan.site, plan.task))
    accessories = [offer for _rank, offer in offers.values()]
    accessories.sort(key=lambda a: (VERDICT_ORDER.index(a.verdict), a.kind, a.unit))
    return Result(plan=plan, derived=derived, setups=tuple(setups), excluded=tuple(excluded),
                  cautions=tuple(plan_cautions(plan, derived)), on=on,
                  accessories=tuple(accessories))
