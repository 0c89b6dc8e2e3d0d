"""The result of a check (``withstand-result/1``): a one-line summary, setups ranked, the
accessory units and the best each takes part in, units left out, cautions."""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from datetime import date
from itertools import islice

from .dead_work import tester_rank
from .derived import Derived
from .findings import _SEVERITY, Finding, margin_ratio
from .spec import Plan

FORMAT = "withstand-result/1"
VERDICT_ORDER = ("suitable", "conditional", "unverified", "unsuitable")
FITTING = ("suitable", "conditional")
# The severity of a status, looked up by its text (a Status is a str and hashes as one).
SEVERITY: dict[str, int] = {str(k): v for k, v in _SEVERITY.items()}


def _clean(x):
    return None if isinstance(x, float) and not math.isfinite(x) else x


def setup_margin(findings) -> float | None:
    """A setup's margin: the relative headroom (available - required) / required of its
    deciding finding (the one named as the reason), ``None`` when that finding is not numeric.
    Not the smallest headroom of any finding: a pass with little room does not speak for a
    setup that a failing check decides."""
    f = deciding_finding(findings)
    return None if f is None else f.margin


def format_ratio(ratio: float | None) -> str:
    """A ratio as text, "x1.33", "x0.62": rounded down, so a ratio just under 1 never reads
    "x1.00" and nothing reads better than it is; "no limit" when nothing is required."""
    if ratio is None:
        return "-"
    if math.isinf(ratio):
        return "no limit"
    if ratio >= 100:
        return f"x{math.floor(ratio):.0f}"
    if ratio >= 10:
        return f"x{math.floor(ratio * 10) / 10:.1f}"
    return f"x{math.floor(ratio * 100 + 1e-9) / 100:.2f}"


def deciding_finding(findings) -> Finding | None:
    """The one finding that decides: the worst status, and among those the least headroom."""
    if not findings:
        return None
    def key(f):
        m = f.margin if f.margin is not None else math.inf
        return (-SEVERITY[f.status], m)
    return min(findings, key=key)


def _key_of(f: Finding):
    """How a finding decides (smaller decides): the worst status, then the least headroom."""
    return (-SEVERITY[f.status], f.margin if f.margin is not None else math.inf)


class SharedFindings:
    """The findings of one model combination, shared by every setup built on it.

    ``make`` gives them when first asked for; ``decider`` gives the deciding one alone (the
    JSON result and the ranking read only that), so a check of many units writes out the
    findings of the setups someone reads and no others.
    """

    __slots__ = ("_make", "_decider", "_all", "_deciding", "key")

    def __init__(self, make, decider=None, key=None):
        self._make = make
        self._decider = decider
        self._all: tuple[Finding, ...] | None = None
        self._deciding: Finding | None = None
        self.key = key  # _key_of the deciding finding, when known without making it

    @classmethod
    def of(cls, findings) -> SharedFindings:
        found = tuple(findings)
        d = deciding_finding(found)
        shared = cls(lambda: found, key=None if d is None else _key_of(d))
        shared._all, shared._deciding = found, d
        return shared

    def all(self) -> tuple[Finding, ...]:
        if self._all is None:
            self._all = tuple(self._make())
        return self._all

    def deciding(self) -> Finding | None:
        if self._deciding is None:
            self._deciding = (self._decider() if self._decider is not None
                              else deciding_finding(self.all()))
        return self._deciding


class Findings:
    """A setup's findings: its combination's (shared) and then its units' own (history)."""

    __slots__ = ("shared", "extra")

    def __init__(self, shared: SharedFindings, extra: tuple[Finding, ...] = ()):
        self.shared = shared
        self.extra = extra

    @classmethod
    def of(cls, findings) -> Findings:
        return cls(SharedFindings.of(findings))

    def all(self) -> tuple[Finding, ...]:
        return self.shared.all() + self.extra if self.extra else self.shared.all()

    def deciding(self) -> Finding | None:
        """As :func:`deciding_finding` over :meth:`all` (the first of equals: the shared)."""
        own = deciding_finding(self.extra)
        if own is None:
            return self.shared.deciding()
        key = self.shared.key
        if key is None:
            d = self.shared.deciding()
            if d is None:
                return own
            key = _key_of(d)
        return self.shared.deciding() if key <= _key_of(own) else own


class RankedRuns(Sequence):
    """Results kept as runs and made when read, in their ranked order.

    A check of many units gives thousands of results that differ only by a unit's tag: each
    run holds what its units share (``fields``, the result's other fields, and ``rank``,
    their place in the order before the tag) and the units' tags; ``make(fields, tag)``
    makes one result. The order is that of ``rank + (tag,) + tail`` for every unit of every
    run, as a sort of the made results on that key gives it; the first few (the head of a
    report, ``any``, ``[0]``) are made without the others, and the whole sequence is made
    once when something reads all of it (kept; each iteration before that makes its own).
    Equal to the tuple of the same results.
    """

    __slots__ = ("_runs", "_make", "_len", "_all", "_ranks")

    def __init__(self, make: Callable[[object, str], object]):
        self._runs: list[tuple[tuple, tuple, list[str], object]] = []
        self._make = make
        self._len = 0
        self._all: tuple | None = None
        self._ranks: list | None = None

    def add(self, rank: tuple, tail: tuple, tags: list[str], fields: object) -> None:
        """A run: units ``tags`` sharing ``fields``, ranked at ``rank``, ``tail`` after the
        tag (each unit's key is ``rank + (tag,) + tail``)."""
        if tags:
            self._runs.append((rank, tail, tags, fields))
            self._len += len(tags)

    def _buckets(self) -> list:
        # the runs by rank, in rank order: a list of (rank, [run index]), made once
        if self._ranks is None:
            by: dict[tuple, list[int]] = {}
            for k, run in enumerate(self._runs):
                by.setdefault(run[0], []).append(k)
            self._ranks = sorted(by.items())
        return self._ranks

    def _walk(self):
        runs, make = self._runs, self._make
        for _rank, ks in self._buckets():
            if len(ks) == 1:
                run = runs[ks[0]]
                for tag in sorted(run[2]):
                    yield make(run[3], tag)
            else:
                merged = sorted((tag, runs[k][1], k) for k in ks for tag in runs[k][2])
                for tag, _tail, at in merged:
                    yield make(runs[at][3], tag)

    def _whole(self) -> tuple:
        if self._all is None:
            self._all = tuple(self._walk())
        return self._all

    def __len__(self) -> int:
        return self._len

    def __iter__(self):
        if self._all is not None:
            return iter(self._all)
        return self._iter_making()

    def _iter_making(self):
        made = []
        for x in self._walk():
            made.append(x)
            yield x
        if self._all is None:
            self._all = tuple(made)

    def __getitem__(self, i):
        if self._all is None:
            if isinstance(i, slice):
                start, stop, step = i.start, i.stop, i.step
                if (start in (None, 0) and step in (None, 1) and stop is not None
                        and 0 <= stop <= _HEAD):
                    return tuple(islice(self._walk(), stop))
            elif 0 <= i < min(_HEAD, self._len):
                return next(islice(self._walk(), i, None))
        return self._whole()[i]

    def __eq__(self, other):
        if isinstance(other, (RankedRuns, tuple, list)):
            return self._whole() == tuple(other)
        return NotImplemented

    def __add__(self, other):
        # as a tuple: ``result.setups + result.accessories``
        if isinstance(other, (RankedRuns, tuple)):
            return self._whole() + tuple(other)
        return NotImplemented

    def __radd__(self, other):
        if isinstance(other, tuple):
            return other + self._whole()
        return NotImplemented

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        return f"RankedRuns({self._len} results in {len(self._runs)} runs)"

    def parts(self) -> list[tuple[object, int]]:
        """(the first result of a run, how many units it holds) per run, in the order of
        their first results: what a report that folds like results reads."""
        runs, make = self._runs, self._make
        firsts = sorted((run[0], min(run[2]), run[1], k) for k, run in enumerate(runs))
        return [(make(runs[k][3], tag), len(runs[k][2])) for _r, tag, _t, k in firsts]


_HEAD = 64  # an index or a slice from the start up to this is made without the rest


def result_parts(results: Sequence) -> list[tuple[object, int]]:
    """(result, how many like it follow from one run) in order: a :class:`RankedRuns`'s
    runs, or each result of another sequence alone."""
    if isinstance(results, RankedRuns):
        return results.parts()
    return [(x, 1) for x in results]


@dataclass(frozen=True)
class SetupResult:
    instrument: str  # unit tag
    mode: str  # mode key
    accessories: tuple[str, ...]  # unit tags, lead first
    verdict: str
    margin: float | None
    found: Findings
    instrument_model: str = ""
    accessory_models: tuple[str, ...] = ()
    accessory_sites: tuple[str | None, ...] = ()
    mode_label: str = ""
    site: str | None = None
    verification_due: date | None = None
    instrument_kind: str = ""

    @property
    def findings(self) -> tuple[Finding, ...]:
        return self.found.all()

    @property
    def cross_site(self) -> tuple[str, ...]:
        """The accessory units kept at another site than the instrument: the setup can only be
        put together by bringing them over."""
        return tuple(tag for tag, where in zip(self.accessories, self.accessory_sites, strict=False)
                     if where != self.site)

    @property
    def deciding(self) -> Finding | None:
        return self.found.deciding()

    @property
    def margin_ratio(self) -> float | None:
        """The deciding finding's available / required."""
        return margin_ratio(self.margin)

    def as_dict(self, findings: bool = True) -> dict:
        """The setup in withstand-result/1; its findings only when ``findings`` is set (the
        deciding one is always there)."""
        d = self.deciding
        out = {"instrument": self.instrument, "mode": self.mode,
               "accessories": list(self.accessories), "verdict": self.verdict,
               "margin": _clean(self.margin), "margin_ratio": _clean(self.margin_ratio),
               "deciding": None if d is None else {"check": d.check, "subject": d.subject,
                                                   "message": d.message}}
        if findings:
            out["findings"] = [dict(f.as_dict(), margin=_clean(f.margin),
                                    margin_ratio=_clean(margin_ratio(f.margin)))
                               for f in self.findings]
        return out


@dataclass(frozen=True)
class AccessoryResult:
    """One accessory unit that could join a setup for the job, with the best setup it takes
    part in. ``reason`` is the finding that keeps it out when no setup with it fits: its own
    worst finding when that is as bad as the setup's verdict, else the setup's deciding one."""

    unit: str
    model: str
    kind: str
    verdict: str
    instrument: str
    mode: str
    accessories: tuple[str, ...]
    margin: float | None = None
    reason: Finding | None = None
    found: Findings | None = None  # of that setup, for --explain; not in the JSON

    @property
    def findings(self) -> tuple[Finding, ...]:
        return () if self.found is None else self.found.all()

    @property
    def fits(self) -> bool:
        return self.verdict in FITTING

    @property
    def margin_ratio(self) -> float | None:
        return margin_ratio(self.margin)

    def as_dict(self) -> dict:
        r = self.reason
        return {"unit": self.unit, "model": self.model, "kind": self.kind,
                "verdict": self.verdict,
                "best_setup": {"instrument": self.instrument, "mode": self.mode,
                               "accessories": list(self.accessories)},
                "margin": _clean(self.margin), "margin_ratio": _clean(self.margin_ratio),
                "reason": None if r is None else {
                    "check": r.check, "status": r.status, "subject": r.subject,
                    "required": r.required, "available": r.available, "message": r.message,
                    "source": r.source}}


@dataclass(frozen=True)
class Excluded:
    unit: str
    reason: str
    model: str = ""

    def as_dict(self) -> dict:
        return {"unit": self.unit, "reason": self.reason}


def sort_key(s: SetupResult, plan_site: str | None, task: str | None = None):
    """Verdict order; for verify-absence, then purpose-built voltage testers ahead of other
    instruments (:func:`~registry.engine.dead_work.tester_rank`); then the larger margin of
    the deciding finding first (no margin last); then units at the plan's site, then the latest
    verification due first; tag and mode keep it stable."""
    return rank_of_setup(s.verdict, s.instrument_kind, s.margin, s.site, plan_site, task) + \
        rank_of_unit(s.verification_due, s.instrument, s.mode, s.accessories)


def rank_of_setup(verdict: str, kind: str, margin: float | None, site: str | None,
                  plan_site: str | None, task: str | None) -> tuple:
    """The first part of :func:`sort_key`: what the units of one setup (one choice of
    accessories for one model, mode and site) share."""
    m = margin if margin is not None else -math.inf
    return (VERDICT_ORDER.index(verdict), tester_rank(task, kind), -m,
            0 if (plan_site is not None and site == plan_site) else 1)


def rank_of_unit(due: date | None, tag: str, mode: str, accessories: tuple[str, ...]) -> tuple:
    """The rest of :func:`sort_key`: the latest verification due first, then tag, mode and
    accessories."""
    return (-(due.toordinal() if due else 0), tag, mode, accessories)


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
    setups: Sequence[SetupResult]  # a tuple, or the evaluation's RankedRuns
    excluded: tuple[Excluded, ...] = ()
    cautions: tuple[str, ...] = ()
    on: date | None = None
    accessories: Sequence[AccessoryResult] = ()
    combinations: int = 0  # model combinations judged (after sharing copies of a model and
    # setting aside the accessory models no choice can need)

    def setups_for(self, tag: str) -> tuple[SetupResult, ...]:
        """The setups whose instrument or accessory is the unit ``tag``."""
        return tuple(s for s in self.setups if s.instrument == tag or tag in s.accessories)

    def accessory(self, tag: str) -> AccessoryResult | None:
        return next((a for a in self.accessories if a.unit == tag), None)

    @property
    def any_fit(self) -> bool:
        return any(s.verdict in FITTING for s in self.setups)

    def commonest_reason(self) -> tuple[str, int, Finding] | None:
        """Among the setups' deciding findings that are not a pass: the check that decides
        most of them, how many, and the best-ranked setup's finding of that check."""
        counts: dict[str, int] = {}
        first: dict[str, Finding] = {}
        for s in self.setups:
            d = s.deciding
            if d is None or d.status in ("pass", "not-run"):
                continue
            counts[d.check] = counts.get(d.check, 0) + 1
            first.setdefault(d.check, d)
        if not counts:
            return None
        check = max(counts, key=lambda k: (counts[k], -list(first).index(k)))
        return check, counts[check], first[check]

    @property
    def summary(self) -> str:
        """One line on what the job gets: the best setup and its verdict, or that no setup
        in the fleet can take it and the commonest reason."""
        if self.any_fit:
            s = self.setups[0]
            acc = (" with " + ", ".join(s.accessories)) if s.accessories else ""
            d = s.deciding
            margin = "" if s.margin is None or d is None else \
                f", margin {format_ratio(s.margin_ratio)} on {d.check}"
            why = f" ({d.check}: {d.message})" if s.verdict != "suitable" and d else ""
            return (f"Best setup: {s.instrument} ({s.instrument_model}) in "
                    f"{s.mode_label or s.mode}{acc}: {s.verdict}{margin}.{why}")
        head = "No setup in the fleet can take this job"
        if not self.setups:
            return (head + f": no available instrument has a mode that does "
                    f"{self.plan.task}.")
        reason = self.commonest_reason()
        if reason is None:
            return head + "."
        check, n, f = reason
        return (head + f"; the commonest reason ({check}, {n} of {len(self.setups)} "
                f"setups): {f.message}")

    def summary_dict(self) -> dict:
        best = self.setups[0] if self.any_fit else None
        why = None if self.any_fit else self.commonest_reason()
        return {"text": self.summary, "fits": self.any_fit,
                "best": None if best is None else {
                    "instrument": best.instrument, "mode": best.mode,
                    "accessories": list(best.accessories), "verdict": best.verdict,
                    "margin_ratio": _clean(best.margin_ratio)},
                "commonest_reason": None if why is None else {
                    "check": why[0], "setups": why[1], "of": len(self.setups),
                    "message": why[2].message}}

    def counts(self) -> dict:
        """How many of each: the setups by verdict, the accessory units by verdict, the units
        left out, and the model combinations the engine judged to reach these."""
        def by_verdict(items):
            out = {v: 0 for v in VERDICT_ORDER}
            for x in items:
                out[x.verdict] += 1
            return out
        return {"setups": len(self.setups), "setups_by_verdict": by_verdict(self.setups),
                "accessories": len(self.accessories),
                "accessories_by_verdict": by_verdict(self.accessories),
                "excluded": len(self.excluded), "combinations": self.combinations}

    def as_json(self, findings: bool | str = False) -> dict:
        """withstand-result/1. Each setup carries its deciding finding; all its findings only
        when ``findings`` is set: ``True`` for every setup, a unit tag for that unit's."""
        def wanted(s: SetupResult) -> bool:
            if isinstance(findings, str):
                return s.instrument == findings or findings in s.accessories
            return bool(findings)
        return {"format": FORMAT, "summary": self.summary_dict(),
                "plan": plan_as_dict(self.plan, self.derived),
                "counts": self.counts(),
                "setups": [s.as_dict(wanted(s)) for s in self.setups],
                "accessories": [a.as_dict() for a in self.accessories],
                "excluded": [e.as_dict() for e in self.excluded],
                "cautions": list(self.cautions)}
