"""The exhaustive evaluation: the reference path the property tests hold the fast one to.

It judges every combination of models under their own keys, with every check (check 10
included) run for each, and weighs every option of every unit, as the engine did before it
shared the work between copies of a model. Slow on a large fleet; kept for the tests.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import date

from .derived import derive
from .evaluate import (ExtraCheck, _choice_key, _joined, _part, _unit_rank, accessory_rank,
                       findings_for, split_units)
from .findings import Finding, verdict_of
from .history import check_history, plan_cautions
from .result import (VERDICT_ORDER, AccessoryResult, Findings, Result, SetupResult,
                     setup_margin, sort_key)
from .setups import SetupContext, enumerate_setups
from .spec import Fleet, Plan, UnitState


def evaluate_exhaustive(plan: Plan, fleet: Fleet, *,
                        extra_checks: Sequence[ExtraCheck] = ()) -> Result:
    """The result of ``plan`` against ``fleet`` the long way: every check (check 10 too) for
    every combination of models, each model judged under its own key, and every option of
    every unit weighed. The reference that :func:`~registry.engine.evaluate.evaluate` is held
    to by the property tests; ``plan.on`` is the day of the job (today when not given)."""
    on = plan.on or date.today()
    derived = derive(plan)
    excluded, available = split_units(fleet, on)

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
                            reason=reason, found=Findings.of(tuple(found) + tuple(extra))))
                candidate = SetupResult(
                    instrument=unit.tag, mode=mode_key,
                    accessories=tuple(u.tag for u in acc_units),
                    verdict=verdict_of(findings), margin=setup_margin(findings),
                    found=Findings.of(findings), instrument_model=model.key,
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
                  accessories=tuple(accessories),
                  combinations=sum(len(v) for v in combos.values()))
