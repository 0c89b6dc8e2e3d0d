"""Run a plan against a fleet, the whole check (checks 1 to 12, the front-end analysis of
check 10 included): checks per model combination, then mapped onto units.

The checks depend on the models (instrument, mode, accessories) and the plan only, so each
combination is evaluated once however many units share it, and an accessory model that no
choice can need is judged alone and not combined at all; units then bring their state
(exclusions), their history (check 11), their site and verification date (ranking). Every
accessory unit that could join a setup is listed with the best verdict it takes part in.
"""

from __future__ import annotations

import heapq
import math
from collections.abc import Callable, Sequence
import dataclasses
from dataclasses import dataclass
from datetime import date

from .checks import CHECKS, SOLO_CHECKS, accessory_findings, _touching_item
from .derived import derive
from .dead_work import check_proving_dead
from .findings import Finding
from .history import check_history, exclusion_reason, plan_cautions
from .protection import protection_path_check
from .result import (SEVERITY, VERDICT_ORDER, AccessoryResult, Excluded, Findings,
                     RankedRuns, Result, SetupResult, SharedFindings, _key_of, deciding_finding,
                     rank_of_setup, rank_of_unit, sort_key)
from .setups import SetupContext, check_setup, enumerate_setups
from .spec import (DEFAULT_MAX_ALTITUDE, DEFAULT_POLLUTION_DEGREE, LEAD_KINDS, Fleet, ModelSpec,
                   Plan, SpecError, UnitRows, UnitState)

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
    return _Part(max((SEVERITY[f.status] for f in findings), default=0),
                 deciding_finding(findings), max((SEVERITY[f.status] for f in own), default=0),
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


# The stand-in keys of a model shared by content: control characters, which no key, tag or
# text in a fleet may hold, so putting the real keys back into a finding's text is exact.
SLOT_KEYS = {"instrument": "\x00instrument\x00", "lead": "\x00lead\x00", "tip": "\x00tip\x00"}


def _slot(model: ModelSpec) -> str:
    if model.is_instrument:
        return "instrument"
    return "lead" if model.kind in LEAD_KINDS else "tip"


def _renamed(f: Finding, names: dict[str, str]) -> Finding:
    """``f`` with the stand-in keys of a shared model replaced by the real ones."""
    texts = (f.subject, f.message, f.required, f.available, f.source)
    if not any("\x00" in t for t in texts):
        return f
    out = []
    for t in texts:
        for stand_in, real in names.items():
            t = t.replace(stand_in, real)
        out.append(t)
    # only the texts change, and they were checked and rendered when ``f`` was made
    new = object.__new__(Finding)
    new.__dict__.update(f.__dict__, subject=out[0], message=out[1], required=out[2],
                        available=out[3], source=out[4])
    return new


class _Combo:
    """One combination of models (each standing for every model of the same content), judged
    once: checks 1 to 9 and the task's rules at once, check 10 only when they leave it
    standing or when a user reads it (:meth:`complete`). ``core`` and ``front_of``, when
    given, are those findings already known (from a combination of the same instrument, mode
    and accessory groups, :func:`_like`) and check 10's, made once for all such."""

    __slots__ = ("ctx", "slots", "core", "front", "extra", "done", "worst", "counts",
                 "deciding", "dec_key", "_parts", "index", "_front_of")

    def __init__(self, ctx: SetupContext, slots: tuple[int, ...], extra_checks, index: int,
                 core: tuple[Finding, ...] | None = None, front_of=None):
        self.ctx, self.slots, self.index = ctx, slots, index
        self._front_of = front_of
        self.core = core if core is not None else tuple(check_setup(ctx)) + tuple(
            f for check in tuple(CHECKS) + TASK_CHECKS for f in check(ctx))
        self.extra = tuple(f for check in extra_checks for f in check(ctx))
        self.front: tuple[Finding, ...] = ()
        self.done = False
        self._parts: dict[int, _Part] = {}
        self._sum()
        if self.worst < SEVERITY["fail"]:
            self.complete()

    def _sum(self) -> None:
        found = self.findings
        self.worst = max((SEVERITY[f.status] for f in found), default=0)
        self.counts = tuple(sum(1 for f in found if f.status == k)
                            for k in ("fail", "unknown", "caution"))
        self.deciding = deciding_finding(found)
        self.dec_key = None if self.deciding is None else _key_of(self.deciding)
        self._parts.clear()

    @property
    def findings(self) -> tuple[Finding, ...]:
        return self.core + self.front + self.extra

    def complete(self) -> bool:
        """Run check 10 if it has not run; whether it ran now."""
        if self.done:
            return False
        self.done = True
        self.front = self._front_of() if self._front_of is not None else tuple(
            f for check in FRONT_END_CHECKS for f in check(self.ctx))
        self._sum()
        return True

    def part(self, slot: int, key: str) -> _Part:
        if slot not in self._parts:
            self._parts[slot] = _part(self.findings, key, None)
        return self._parts[slot]


def _like(base: tuple[Finding, ...], ctx: SetupContext, own) -> tuple[Finding, ...]:
    """The findings of checks 1 to 9 for ``ctx`` from ``base``, those of a combination of the
    same instrument, mode and accessory groups: each accessory's own findings
    (:data:`~registry.engine.checks.SOLO_CHECKS`, its key the subject) replaced by ``own(i)``,
    accessory ``i``'s in this setup, and every other finding the same."""
    keys = [a.key for a in ctx.accessories]
    feeds = [iter(own(i)) for i in range(len(keys))]
    out = []
    for f in base:
        if f.check in SOLO_CHECKS and f.subject in keys:
            f = next(feeds[keys.index(f.subject)])
        out.append(f)
    assert all(next(feed, None) is None for feed in feeds)  # as many as the base's
    return tuple(out)


def _stats(combo: _Combo, extra: list[Finding]):
    """(severity, counts, deciding finding) of the combination's findings then ``extra``."""
    if not extra:
        return combo.worst, combo.counts, combo.deciding
    worst = max(combo.worst, max(SEVERITY[f.status] for f in extra))
    counts = tuple(c + sum(1 for f in extra if f.status == k)
                   for c, k in zip(combo.counts, ("fail", "unknown", "caution"), strict=True))
    own = deciding_finding(extra)
    d = combo.deciding
    if d is None or (own is not None and _key_of(own) < _key_of(d)):
        d = own
    return worst, counts, d


_VERDICTS = {0: "suitable", 1: "conditional", 2: "unverified", 3: "unsuitable"}



def _ordinary(m: float | None) -> bool:
    """A margin that ranks where it decides: ``None`` and +inf decide alike (last) but rank
    apart (worst and best), so only the others order setups the same way in both."""
    return m is not None and m != math.inf


@dataclass(frozen=True)
class _Alone:
    """What an accessory's own findings (:func:`~registry.engine.checks.accessory_findings`)
    bring to any setup: how many fail, are unknown, are cautions; the worst severity; the least
    ordinary margin at that severity (inf if none) and whether every finding there has none."""

    counts: tuple[int, int, int]
    worst: int
    least: float
    marginless: bool

    @classmethod
    def of(cls, found) -> _Alone:
        worst = max(SEVERITY[f.status] for f in found)
        top = [f.margin for f in found if SEVERITY[f.status] == worst]
        counts = tuple(sum(1 for f in found if f.status == k)
                       for k in ("fail", "unknown", "caution"))
        return cls((counts[0], counts[1], counts[2]), worst,
                   min((m for m in top if _ordinary(m)), default=math.inf),
                   all(m is None for m in top))


def _not_below(a: _Alone, b: _Alone) -> bool:
    """Whether ``a``'s margin ranks at least as high as ``b``'s whatever the rest of a setup
    holds, at their common worst severity: both ordinary and ``a``'s the larger."""
    return a.least != math.inf and b.least != math.inf and a.least >= b.least


def _ranks_ahead(a: _Alone, b: _Alone) -> bool:
    """For the offer of another accessory in the same setup (:func:`accessory_rank`): ``a`` in
    place of ``b`` never ranks it lower, whatever else the setup holds."""
    if a.worst < b.worst:
        return b.marginless  # else a finding with a margin could rank b's setup higher
    return a.worst == b.worst and _not_below(a, b)


def _chosen_ahead(a: _Alone, b: _Alone) -> bool | None:
    """For an instrument unit's choice (``weigh``): ``True`` when ``a`` in place of ``b`` always
    makes a strictly better option, ``None`` when at least as good on everything but the units'
    site and tags, ``False`` when neither can be said."""
    if a.counts < b.counts:
        return True
    return None if a.counts == b.counts and _not_below(a, b) else False


def _prune(plan: Plan, derived, reps: list[ModelSpec], pools: dict[int, list[_Cohort]],
           chosen, unit_history, sites) -> tuple[dict[int, int],
                                                 dict[tuple[int, bool, bool], tuple],
                                                 dict[int, int]]:
    """The accessory models that no instrument unit's choice and no accessory unit's offer can
    need, each with the kept model that stands for it, and every accessory model's own findings
    (by model, whether it touches the circuit, whether the instrument is a discharge tool),
    and each accessory model's group.

    Accessory models are grouped by everything the checks read of them but their own findings
    (:data:`~registry.engine.checks.SOLO_CHECKS`: ratings, altitude, tip), and but the
    current rating off a current task, which reads it alone (check 5): models of one group
    fit the same setups and bring the same other findings to each. In a group, a model is set
    aside when another one (a) makes every instrument unit's option with it strictly better (fewer
    fails, unknowns, cautions, in that order; or as many and an ordinary margin at least as
    large, with the unit handed out at every instrument site ahead on site and tag), and (b)
    some model before it never ranks another accessory's offer lower (:func:`_ranks_ahead`;
    before it, so that a tie goes the same way). Both hold whatever the rest of a setup holds,
    and the model that dominates hands out a unit without history, so the choices and offers of
    the kept models are those over all of them. The set-aside models' own offers are judged on
    their group's kept setups with their own findings put in (``swapped`` in
    :func:`evaluate`)."""
    tools = sorted({r.kind == "discharge-tool" for r in reps if r.is_instrument})
    groups: dict[tuple, list[int]] = {}
    for rid, r in enumerate(reps):
        if r.is_instrument:
            continue
        lead = r.kind in LEAD_KINDS
        plain = dataclasses.replace(r, ratings=(), max_altitude=DEFAULT_MAX_ALTITUDE,
                                    tip_exposure=None, maker="", name="",
                                    pollution_degree=DEFAULT_POLLUTION_DEGREE)
        if plan.task != "measure-current":  # only a current task reads a current rating
            plain = dataclasses.replace(plain, current_rating=None)
        groups.setdefault((lead, plain), []).append(rid)
    solo: dict[tuple[int, bool, bool], tuple] = {}
    stand_for: dict[int, int] = {}
    alone: dict[int, list[_Alone]] = {}

    def chosen_over(x: int, y: int) -> bool:
        ties = False
        for a, b in zip(alone[x], alone[y], strict=True):
            ahead = _chosen_ahead(a, b)
            if ahead is False:
                return False
            ties = ties or ahead is None
        if not ties:
            return True
        for site in sites:
            ux, uy = chosen(x, site), chosen(y, site)
            if not (ux.site != site, ux.tag) < (uy.site != site, uy.tag):
                return False
        return True

    def offers_over(x: int, y: int) -> bool:
        return all(_ranks_ahead(a, b) for a, b in zip(alone[x], alone[y], strict=True))

    for (lead, _plain), members in groups.items():
        touch = ((False,) if reps[members[0]].kind == "current-clamp" else (True, False)) \
            if lead else (True,)
        variants = [(t, tool) for t in touch for tool in tools]
        for rid in members:
            per = []
            for t, tool in variants:
                found = tuple(accessory_findings(reps[rid], plan, derived, touching=t,
                                                 discharge_tool=tool))
                solo[(rid, t, tool)] = found
                per.append(_Alone.of(found))
            alone[rid] = per
        if len(members) < 2 or not variants:
            continue
        # a model with a unit whose history check 11 finds nothing in (a cohort of them, or
        # a unit of its own whose findings are none)
        clean = {rid for rid in members
                 if any(not c.own or not unit_history(c.state, None) for c in pools[rid])}

        first_kept = members[0]  # nothing before it: never set aside
        ahead: list[int] = []  # the models before, not set aside by (b), with a clean unit
        by_choice = sorted(members, key=lambda r: [a.counts for a in alone[r]])
        for rid in members:
            if (any(offers_over(x, rid) for x in ahead)
                    and any(chosen_over(x, rid) for x in by_choice if x != rid and x in clean)):
                stand_for[rid] = first_kept
            elif rid in clean:
                ahead.append(rid)
    group_of = {rid: g for g, members in enumerate(groups.values()) for rid in members}
    return stand_for, solo, group_of


def split_units(fleet: Fleet, on: date) -> tuple[list[Excluded], dict[str, list[UnitState]]]:
    """The units kept out of a job on ``on`` and why, and the rest by model key, in the
    fleet's order; a unit of a model the fleet lacks is a :class:`SpecError`. The reason is
    found once per distinct (status, open hold, verification due), all it reads."""
    excluded: list[Excluded] = []
    available: dict[str, list[UnitState]] = {}
    models = fleet.models
    reasons: dict[tuple, str | None] = {}
    for unit in fleet.units:
        if unit.model not in models:
            raise SpecError(f"unit {unit.tag}: model {unit.model!r} is not in the fleet")
        k = (unit.status, unit.open_hold, unit.verification_due)
        if k in reasons:
            reason = reasons[k]
        else:
            reason = reasons[k] = exclusion_reason(unit, on)
        if reason is not None:
            excluded.append(_made(Excluded, {}, unit=unit.tag, reason=reason, model=unit.model))
        else:
            group = available.get(unit.model)
            if group is None:
                group = available[unit.model] = []
            group.append(unit)
    return excluded, available


class _Cohort:
    """Units that a check cannot tell apart but by their tags: one state (model, status,
    site, verification due, open hold), no history and a verification due on record, so
    check 11 finds nothing of their own. A unit with history or without a due date is a
    cohort of its own (``own``), its findings its own. ``state`` is a unit of the cohort,
    ``tags`` the units' tags in the fleet's order."""

    __slots__ = ("state", "tags", "own", "first")

    def __init__(self, state: UnitState, tags: list[str], own: bool):
        self.state, self.tags, self.own = state, tags, own
        self.first = min(tags)  # the first tag in tag order

    def unit(self, tag: str) -> UnitState:
        """The cohort's unit ``tag`` as a unit state."""
        return self.state if tag == self.state.tag else _with_tag(self.state, tag)


def _with_tag(state: UnitState, tag: str) -> UnitState:
    """``state`` (checked when it was made) under another unit's tag, no history."""
    out = object.__new__(UnitState)
    out.__dict__.update(state.__dict__, tag=tag, history=())
    return out


def _cohorts(rows: UnitRows, states: list[int]) -> list[_Cohort]:
    """The cohorts of the units whose states are ``states`` (indices into ``rows.states``),
    state by state: per state the units without history as one cohort (or each alone when the
    state has no verification due), and each unit with history alone, in the fleet's order.
    No unit state is made for a unit of a shared cohort."""
    tags, state_of = rows.tags, rows.state_of
    tags_of: list[list[str]] = [[] for _ in rows.states]
    for tag, at in zip(tags, state_of, strict=True):
        tags_of[at].append(tag)
    alone: dict[int, list[int]] = {}
    for i in sorted(rows.histories):
        at = state_of[i]
        tags_of[at].remove(tags[i])  # one of that tag: units of one tag and state are alike
        alone.setdefault(at, []).append(i)
    out: list[_Cohort] = []
    for at in states:
        state, tags = rows.states[at], tags_of[at]
        if state.verification_due is None:
            out += (_Cohort(_with_tag(state, tag), [tag], True) for tag in tags)
        elif tags:
            out.append(_Cohort(state if state.tag in tags[:1] else _with_tag(state, tags[0]),
                               tags, False))
        for i in alone.get(at, ()):
            u = rows[i]
            out.append(_Cohort(u, [u.tag], True))
    return out


def _split_cohorts(fleet: Fleet, on: date) -> tuple[list[Excluded], dict[str, list[_Cohort]]]:
    """As :func:`split_units`, by state: the units left out and why (in the fleet's order),
    and the rest's cohorts by model key. The fleet's units are read as rows
    (:class:`UnitRows`), as loaded or made from the tuple."""
    rows = UnitRows.of(fleet.units)
    reasons: dict[int, str] = {}
    kept: list[int] = []
    for at, state in enumerate(rows.states):
        if state.model not in fleet.models:
            first = rows.tags[rows.state_of.index(at)]
            raise SpecError(f"unit {first}: model {state.model!r} is not in the fleet")
        reason = exclusion_reason(state, on)  # reads what the state's units share
        if reason is None:
            kept.append(at)
        else:
            reasons[at] = reason
    excluded = []
    if reasons:
        states, tags = rows.states, rows.tags
        excluded = [_made(Excluded, {}, unit=tags[i], reason=reasons[at],
                          model=states[at].model)
                    for i, at in enumerate(rows.state_of) if at in reasons]
    available: dict[str, list[_Cohort]] = {}
    for c in _cohorts(rows, kept):
        available.setdefault(c.state.model, []).append(c)
    return excluded, available


def evaluate(plan: Plan, fleet: Fleet, *, extra_checks: Sequence[ExtraCheck] = (),
             prune: bool = True) -> Result:
    """The whole check of ``plan`` against ``fleet`` (checks 1 to 12): one setup per available
    instrument unit and mode (with the best accessory units for it), ranked; every accessory
    unit with the best setup it takes part in; the units left out and why; the cautions.
    ``plan.on`` is the day of the job (today when not given).

    The work is shared: models of the same content (copies under other keys) are judged once
    under stand-in keys and the real keys put back into the findings someone reads; each
    combination is judged once and check 10 runs only for those that checks 1 to 9 leave
    standing, or that a unit's best setup ends up being; units of one model, site and (empty)
    history share one choice. Accessory models are judged alone first and only those a choice
    or an offer can need are combined (:func:`_prune`; ``prune=False`` combines every one, to
    the same result); of the kept combinations of one instrument, mode and accessory groups
    one runs the checks and the others take its findings with their accessories' own
    (:func:`_like`). The verdict of every unit and mode is the one
    :func:`~registry.engine.exhaustive.evaluate_exhaustive` gives (the property tests hold it
    to that). With ``extra_checks`` every model is judged under its own key and none is set
    aside, so a check sees the real keys and every combination.
    """
    on = plan.on or date.today()
    derived = derive(plan)
    excluded, available = _split_cohorts(fleet, on)

    # -- the models by content -----------------------------------------------------------------
    share = not extra_checks
    class_of: dict[str, int] = {}
    reps: list[ModelSpec] = []
    by_content: dict[ModelSpec, int] = {}
    for key, model in fleet.models.items():
        if key not in available:
            continue
        content = model.with_key(SLOT_KEYS[_slot(model)]) if share else model
        cid = by_content.setdefault(content, len(reps))
        if cid == len(reps):
            reps.append(content)
        class_of[key] = cid
    rep_id = {id(r): i for i, r in enumerate(reps)}

    # -- accessory units: their history and the one to hand out per instrument site ------------
    history: dict[str, list[Finding]] = {}

    def unit_history(u: UnitState, mode: str | None) -> list[Finding]:
        if not u.history and u.verification_due is not None:
            return []  # nothing in check_history can apply
        if mode is not None:
            return check_history(u, mode)
        if u.tag not in history:
            history[u.tag] = check_history(u, None)
        return history[u.tag]

    pools: dict[int, list[_Cohort]] = {}
    for key, cohorts in available.items():
        if not fleet.models[key].is_instrument:
            pools.setdefault(class_of[key], []).extend(cohorts)
    chosen_for: dict[tuple[int, str | None], UnitState] = {}
    best_at: dict[int, list[UnitState]] = {}

    def at_sites(cid: int) -> list[UnitState]:
        """Per site, the pool's unit to hand out from there: within one site the ranking
        below is by worries, due and tag alone, so the choice for an instrument at any site
        is among these."""
        if cid not in best_at:
            best: dict[str | None, tuple] = {}
            for c in pools[cid]:
                u = c.state
                tag = u.tag if c.own else c.first
                k = (len(unit_history(u, None)) if c.own else 0,
                     -(u.verification_due.toordinal() if u.verification_due else 0), tag)
                held = best.get(u.site)
                if held is None or k < held[0]:
                    best[u.site] = (k, c, tag)
            best_at[cid] = [c.unit(tag) for _k, c, tag in best.values()]
        return best_at[cid]

    def chosen(cid: int, near: str | None) -> UnitState:
        """The unit of accessory class ``cid`` to hand out with an instrument kept at
        ``near`` (:func:`_unit_rank`)."""
        k = (cid, near)
        if k not in chosen_for:
            chosen_for[k] = min(at_sites(cid), key=lambda u: _unit_rank(u, plan, near))
        return chosen_for[k]

    # -- accessory models judged alone, the ones no setup or offer can need set aside ----------
    stand_for: dict[int, int] = {}
    solo: dict[tuple[int, bool, bool], tuple[Finding, ...]] = {}
    group_of: dict[int, int] = {}
    if share and prune:
        sites = {c.state.site for key, cohorts in available.items()
                 if fleet.models[key].is_instrument for c in cohorts}
        stand_for, solo, group_of = _prune(plan, derived, reps, pools, chosen, unit_history,
                                           sites)

    def own_of_slot(ctx: SetupContext):
        touching = _touching_item(ctx)
        return lambda i: solo[(rep_id[id(ctx.accessories[i])], touching is ctx.accessories[i],
                               ctx.is_discharge_tool)]

    options: dict[tuple[int, str], list[_Combo]] = {}
    n = 0
    kept = [r for i, r in enumerate(reps) if i not in stand_for]
    # one combination judged per instrument, mode and accessory groups; the others of those
    # groups take its findings with their accessories' own in place (models of one group bring
    # the same findings but their own, _prune), and share its check 10
    bases: dict[tuple, tuple[tuple[Finding, ...], Callable]] = {}
    fronts: dict[tuple, tuple[Finding, ...]] = {}
    for ctx in enumerate_setups(plan, derived, kept):
        slots = tuple(rep_id[id(a)] for a in ctx.accessories)
        icid = rep_id[id(ctx.instrument)]
        if group_of:
            like = (icid, ctx.mode.key, ctx.lead is None, ctx.tip is None) + tuple(
                group_of[s] for s in slots)
            if like in bases:
                core, front_of = bases[like]
                combo = _Combo(ctx, slots, extra_checks, n,
                               core=_like(core, ctx, own_of_slot(ctx)), front_of=front_of)
            else:
                def front_of(like=like, ctx=ctx) -> tuple[Finding, ...]:
                    if like not in fronts:
                        fronts[like] = tuple(f for check in FRONT_END_CHECKS for f in check(ctx))
                    return fronts[like]
                combo = _Combo(ctx, slots, extra_checks, n, front_of=front_of)
                bases[like] = (combo.core, front_of)
        else:
            combo = _Combo(ctx, slots, extra_checks, n)
        n += 1
        options.setdefault((icid, ctx.mode.key), []).append(combo)

    # -- the real keys back into the findings that someone reads -------------------------------
    texts: dict[tuple, SharedFindings] = {}

    def shared_text(combo: _Combo, inst_model: str, acc_models: tuple[str, ...]) -> SharedFindings:
        k = (combo.index, inst_model, acc_models)
        if k not in texts:
            if not share:
                texts[k] = SharedFindings.of(combo.findings)
            else:
                names = _names(inst_model, acc_models, fleet)
                found, dec = combo.findings, combo.deciding
                texts[k] = SharedFindings(
                    lambda found=found, names=names: tuple(_renamed(f, names) for f in found),
                    lambda dec=dec, names=names: None if dec is None else _renamed(dec, names),
                    key=combo.dec_key)
        return texts[k]

    # -- instrument units, grouped by what decides their choice --------------------------------
    groups: dict[tuple, list[_Cohort]] = {}
    own_of: dict[tuple, list[Finding]] = {}
    modes_of: dict[int, list[str]] = {}
    for icid, mode_key in options:
        modes_of.setdefault(icid, []).append(mode_key)
    for key, cohorts in available.items():
        cid = class_of[key]
        mode_keys = modes_of.get(cid) if fleet.models[key].is_instrument else None
        if not mode_keys:
            continue
        plain: dict[str | None, list[_Cohort]] = {}
        for c in cohorts:
            if not c.own:
                # nothing in check_history can apply: the group of its model, mode and site
                plain.setdefault(c.state.site, []).append(c)
                continue
            unit = c.state
            for mode_key in mode_keys:
                own = check_history(unit, mode_key)
                g = (cid, mode_key, unit.site, unit.tag if own else None)
                if g not in groups:
                    groups[g] = []
                    own_of[g] = own
                groups[g].append(c)
        for site, at in plain.items():
            for mode_key in mode_keys:
                g = (cid, mode_key, site, None)
                if g not in groups:
                    groups[g] = []
                    own_of[g] = []
                groups[g].extend(at)

    def weigh(combo: _Combo, site: str | None, own: list[Finding]):
        accs = [chosen(c, site) for c in combo.slots]
        extra = list(own)
        for u in accs:
            extra += unit_history(u, None)
        worst, counts, dec = _stats(combo, extra)
        margin = None if dec is None else dec.margin
        m = margin if margin is not None else -math.inf
        key = (worst, counts[0], counts[1], counts[2], -m,
               sum(1 for u in accs if u.site != site), tuple(u.tag for u in accs))
        return key, accs, extra, worst, margin

    setups = RankedRuns(_setup_of)
    for g, members in groups.items():
        icid, mode_key, site, _ = g
        # the options by their key, smallest first; check 10 only adds findings to an option
        # that fails, so it never moves one ahead: the first whose check 10 has run is the
        # best (keys differ: they end with the units' tags)
        opts = options[(icid, mode_key)]
        heap = [(weigh(c, site, own_of[g])[0], j) for j, c in enumerate(opts)]
        heapq.heapify(heap)
        while heap:
            _k, j = heap[0]
            if not opts[j].complete():
                break  # its findings are whole: check 10 had run
            heapq.heapreplace(heap, (weigh(opts[j], site, own_of[g])[0], j))
        best = weigh(opts[heap[0][1]], site, own_of[g]) + (opts[heap[0][1]],)
        _key, accs, extra, worst, margin = best[:5]
        combo = best[-1]
        verdict = _VERDICTS[worst]
        acc_models = tuple(u.model for u in accs)
        acc_tags = tuple(u.tag for u in accs)
        acc_sites = tuple(u.site for u in accs)
        extra_t = tuple(extra)
        label = combo.ctx.mode.label
        kind = reps[icid].kind
        common = dict(mode=mode_key, accessories=acc_tags, verdict=verdict, margin=margin,
                      accessory_models=acc_models, accessory_sites=acc_sites, mode_label=label,
                      instrument_kind=kind, site=site)
        rank = rank_of_setup(verdict, kind, margin, site, plan.site, plan.task)
        # what the units of one model share (their findings too): each unit adds its tag
        # and verification due to it
        of_model: dict[str, dict] = {}
        # sort_key = rank_of_setup + rank_of_unit (-due, tag, mode, accessories): the part
        # after the tag is the group's, the part before it the group's and the due's
        tail = rank_of_unit(None, "", mode_key, acc_tags)[2:]
        by_due: dict = {}
        for c in members:
            mkey = c.state.model
            fields = of_model.get(mkey)
            if fields is None:
                fields = of_model[mkey] = dict(
                    common, instrument_model=mkey,
                    found=Findings(shared_text(combo, mkey, acc_models), extra_t))
            due = c.state.verification_due
            ahead = by_due.get(due)
            if ahead is None:
                ahead = by_due[due] = rank + rank_of_unit(due, "", mode_key, acc_tags)[:1]
            setups.add(ahead, tail, c.tags, (fields, due))

    # -- accessory units: the best setup each takes part in ------------------------------------
    acc_groups: dict[tuple[int, str | None], list[_Cohort]] = {}
    for cid, cohorts in pools.items():
        for c in cohorts:
            alone = c.own and unit_history(c.state, None)
            acc_groups.setdefault((cid, c.state.tag if alone else None), []).append(c)
    reasons: dict[tuple, Finding] = {}

    def reason_text(reason: Finding, inst_model: str, acc_models: tuple[str, ...]) -> Finding:
        k = (id(reason), inst_model, acc_models)
        if k not in reasons:
            reasons[k] = _renamed(reason, _names(inst_model, acc_models, fleet))
        return reasons[k]

    # the unit that stands for its group in an accessory's best setup: the first by tag
    leaders = {}
    for g, cohorts in groups.items():
        tag, _k, c = min((c.first, k, c) for k, c in enumerate(cohorts))
        leaders[g] = c.unit(tag)
    rests: dict[tuple[int, int, bool], tuple] = {}

    def rest_of(combo: _Combo, i: int) -> tuple:
        """Where the own findings of accessory ``i`` stand in ``combo``'s findings, and the
        part of the others, each deciding finding with its place (the first of equals
        decides)."""
        k = (combo.index, i, combo.done)
        if k not in rests:
            acc_key = combo.ctx.accessories[i].key
            found = combo.findings
            places = [j for j, f in enumerate(found)
                      if f.check in SOLO_CHECKS and f.subject == acc_key]
            worst, dec, own_worst, own_dec, has_own = 0, None, 0, None, False
            for j, f in enumerate(found):
                if j in places:
                    continue
                sev, key = SEVERITY[f.status], (_key_of(f), j)
                worst = max(worst, sev)
                if dec is None or key < dec[0]:
                    dec = (key, f)
                if _own(f, acc_key, None):
                    has_own, own_worst = True, max(own_worst, sev)
                    if own_dec is None or key < own_dec[0]:
                        own_dec = (key, f)
            rests[k] = (places, worst, dec, own_worst, own_dec, has_own)
        return rests[k]

    def own_findings(combo: _Combo, i: int, cid: int) -> tuple[Finding, ...]:
        ctx = combo.ctx
        acc = ctx.accessories[i]
        return solo[(cid, _touching_item(ctx) is acc, ctx.is_discharge_tool)]

    def swapped(combo: _Combo, i: int, cid: int) -> _Part:
        """The part of ``combo`` for accessory ``i`` with the set-aside model ``cid`` in place
        of the kept one: its own findings where the kept one's stand, the rest the same."""
        places, worst, dec, own_worst, own_dec, _has = rest_of(combo, i)
        own = own_findings(combo, i, cid)
        assert len(own) == len(places)  # the same checks speak of both
        for j, f in zip(places, own, strict=True):
            sev, key = SEVERITY[f.status], (_key_of(f), j)
            worst, own_worst = max(worst, sev), max(own_worst, sev)
            if dec is None or key < dec[0]:
                dec = (key, f)
            if own_dec is None or key < own_dec[0]:
                own_dec = (key, f)
        return _Part(worst, None if dec is None else dec[1], own_worst,
                     None if own_dec is None else own_dec[1], True)

    def swapped_findings(combo: _Combo, i: int, cid: int) -> tuple[Finding, ...]:
        found = list(combo.findings)
        for j, f in zip(rest_of(combo, i)[0], own_findings(combo, i, cid), strict=True):
            found[j] = f
        return tuple(found)

    # each option that holds an accessory model, by instrument model, mode and that model
    containing: dict[tuple[int, str, int], list[tuple[_Combo, int]]] = {}
    for (icid, mode_key), combos in options.items():
        for combo in combos:
            for i, slot in enumerate(combo.slots):
                containing.setdefault((icid, mode_key, slot), []).append((combo, i))
    offers = RankedRuns(_offer_of)
    for (cid, _tag), members in acc_groups.items():
        sample = members[0].unit(members[0].tags[0])
        stand = stand_for.get(cid, cid)
        while True:
            found_best = None
            for g, first in leaders.items():
                icid, mode_key, site, _ = g
                for combo, i in containing.get((icid, mode_key, stand), ()):
                    others = [chosen(c, site) for c in combo.slots]
                    here = others[:i] + [sample] + others[i + 1:]
                    extra = list(own_of[g])
                    for x in here:
                        extra += unit_history(x, None)
                    acc_key = combo.ctx.accessories[i].key
                    base = combo.part(i, acc_key) if stand == cid else \
                        swapped(combo, i, cid)
                    p = _joined(base, _part(extra, acc_key, sample.tag)) if extra else base
                    rank, verdict, margin, reason = accessory_rank(p, first.tag, mode_key)
                    if found_best is None or rank < found_best[0]:
                        found_best = (rank, verdict, margin, reason, first, combo, here,
                                      i, tuple(extra))
            if found_best is None or not found_best[5].complete():
                break
        if found_best is None:
            continue
        _rank, verdict, margin, reason, first, combo, here, i, extra_t = found_best
        kind = fleet.models[sample.model].kind
        before, after = here[:i], here[i + 1:]
        tags_before = tuple(x.tag for x in before)
        tags_after = tuple(x.tag for x in after)
        models_before = tuple(x.model for x in before)
        models_after = tuple(x.model for x in after)
        order = VERDICT_ORDER.index(verdict)
        offer_fields: dict[str, dict] = {}
        for c in members:
            mkey = c.state.model
            fields = offer_fields.get(mkey)
            if fields is None:
                acc_models = models_before + (mkey,) + models_after
                names_reason = None
                if reason is not None:
                    names_reason = reason if not share else reason_text(
                        reason, first.model, acc_models)
                if stand == cid:
                    text = shared_text(combo, first.model, acc_models)
                else:
                    found = swapped_findings(combo, i, cid)
                    names = _names(first.model, acc_models, fleet)
                    dec = swapped(combo, i, cid).deciding
                    text = SharedFindings(
                        lambda found=found, names=names: tuple(_renamed(f, names)
                                                               for f in found),
                        lambda dec=dec, names=names: None if dec is None else _renamed(
                            dec, names), key=None if dec is None else _key_of(dec))
                fields = offer_fields[mkey] = dict(
                    model=mkey, kind=kind, verdict=verdict, instrument=first.tag,
                    mode=combo.ctx.mode.key, margin=margin, reason=names_reason,
                    found=Findings(text, extra_t))
            offers.add((order, kind), (), c.tags, (fields, tags_before, tags_after))
    return Result(plan=plan, derived=derived, setups=setups, excluded=tuple(excluded),
                  cautions=tuple(plan_cautions(plan, derived)), on=on,
                  accessories=offers, combinations=n)


def _setup_of(fields, tag: str) -> SetupResult:
    """The setup of the instrument unit ``tag`` from the fields its run shares (those of its
    group and model, and its cohort's verification due), made without
    the frozen dataclass's per-field setattr (SetupResult checks nothing in its __init__)."""
    shared, due = fields
    out = object.__new__(SetupResult)
    d = out.__dict__
    d.update(shared)
    d["instrument"] = tag
    d["verification_due"] = due
    return out


def _offer_of(shared, tag: str) -> AccessoryResult:
    """The accessory unit ``tag``'s best setup from what its run shares (as _setup_of)."""
    fields, before, after = shared
    out = object.__new__(AccessoryResult)
    d = out.__dict__
    d.update(fields)
    d["unit"] = tag
    d["accessories"] = before + (tag,) + after
    return out


def _made(cls, common: dict, **own):
    """A result dataclass (SetupResult, AccessoryResult: frozen, nothing checked in their
    __init__) from the fields its group shares and its unit's own, every field given, made
    without the frozen dataclass's per-field setattr: a check of 50 000 units makes one per
    unit and mode."""
    out = object.__new__(cls)
    out.__dict__.update(common, **own)
    return out


def _names(inst_model: str, acc_models: tuple[str, ...], fleet: Fleet) -> dict[str, str]:
    names = {SLOT_KEYS["instrument"]: inst_model}
    for key in acc_models:
        names[SLOT_KEYS[_slot(fleet.models[key])]] = key
    return names
