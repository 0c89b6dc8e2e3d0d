"""The shared, pruned evaluation against the exhaustive one (hypothesis).

`evaluate` judges copies of a model once by content, runs check 10 only for combinations that
checks 1 to 9 leave standing or that a unit ends up with, and makes one choice for units of a
model that share a site and have no history. `evaluate_exhaustive` judges every combination
of every model under its own key with every check and weighs every option of every unit (the
engine as it was). On random fleets (copies of models, some changed, units at random sites
and states, with and without history, a front end on some instruments) both must give the
same verdict for every unit and mode, and the same best verdict for every accessory unit.
The reference is the project's own earlier engine, run beside it: the rules themselves are
checked against their sources in test_checks.py and tests/network/.
"""

from __future__ import annotations

import dataclasses
from datetime import date, datetime

from hypothesis import HealthCheck, given, settings, strategies as st

from registry.demo import demo_fleet_path
from registry.engine.checks import SOLO_CHECKS, _touching_item, accessory_findings
from registry.engine.derived import derive
from registry.engine.evaluate import evaluate, findings_for
from registry.engine.exhaustive import evaluate_exhaustive
from registry.engine.setups import enumerate_setups
from registry.engine.spec import Fleet, ModelSpec, PastEvent, Rating, UnitState
from registry.formats.fleet import fleet_from_file

from helpers.builders import JOB_DAY
from engine.test_properties import models, plans

SITES = ("North bench", "Substation yard", None)
DEMO_FRONT_END = fleet_from_file(demo_fleet_path()).models["kx-7"].front_end


def random_unit(draw, tag: str, model: str, statuses: list[str]) -> UnitState:
    """A unit of ``model`` at a random site, status (from ``statuses``) and due date, one in
    six with a logged transient that was not (or not known to be) within rating."""
    history = ()
    if draw(st.integers(0, 5)) == 0:
        history = (PastEvent(mode=None, kind="transient",
                             within_rating=draw(st.sampled_from([None, False])),
                             occurred_at=datetime(2026, 3, 1, 9, 0)),)
    return UnitState(tag=tag, model=model, status=draw(st.sampled_from(statuses)),
                     site=draw(st.sampled_from(SITES)),
                     verification_due=draw(st.sampled_from([date(2027, 1, 1),
                                                            date(2026, 12, 30), None])),
                     history=history)


@st.composite
def fleets(draw):
    """Copies of a random instrument and lead (some exact, some with one rating changed, one
    instrument with the demo KX-7's front end), and units of them in random states."""
    inst, lead = draw(models())
    chosen = []
    for i in range(draw(st.integers(1, 3))):
        m = dataclasses.replace(inst, key=f"m{i}")
        if draw(st.booleans()) and m.ratings:
            r = m.ratings[0]
            m = dataclasses.replace(m, ratings=(dataclasses.replace(
                r, voltage=r.voltage * draw(st.sampled_from([0.5, 1.0, 2.0]))),) + m.ratings[1:])
        if draw(st.booleans()):
            m = dataclasses.replace(m, front_end=DEMO_FRONT_END, modes=tuple(
                dataclasses.replace(md, terminals=("V", "COM") if md.key != "a" else ("A", "COM"))
                for md in m.modes))
        chosen.append(m)
    for i in range(draw(st.integers(1, 3))):
        ll = dataclasses.replace(lead, key=f"l{i}")
        if draw(st.booleans()):
            ll = dataclasses.replace(ll, tip_exposure=draw(st.sampled_from([None, 1e-3, 19e-3])))
        chosen.append(ll)
    units = []
    for n in range(draw(st.integers(2, 10))):
        model = draw(st.sampled_from(chosen))
        history = ()
        if draw(st.integers(0, 4)) == 0:
            history = (PastEvent(mode=draw(st.sampled_from([None, "v", "a"])),
                                 kind=draw(st.sampled_from(["overvoltage", "transient"])),
                                 within_rating=draw(st.sampled_from([None, False, True])),
                                 occurred_at=datetime(2026, 3, 1, 9, 0)),)
        units.append(UnitState(
            tag=f"U{n}", model=model.key,
            status=draw(st.sampled_from(["in-service"] * 4 + ["away"])),
            site=draw(st.sampled_from(SITES)),
            verification_due=draw(st.sampled_from([date(2027, 1, 1), date(2026, 9, 1), None])),
            history=history))
    return Fleet(models={m.key: m for m in chosen}, units=tuple(units))


DEMO = fleet_from_file(demo_fleet_path())
DEMO_PLANS = ("mains-panel", "service-entrance", "dc-link", "dc-link-discharge",
              "hv-supply-divider", "motor-feeder-current", "field-station-socket")


@st.composite
def demo_fleets(draw):
    """Copies of the demo lab's models (some exact, some with a rating scaled), with random
    units: the setups that fit the demo plans, and those that do not, mixed."""
    keys = draw(st.lists(st.sampled_from(sorted(DEMO.models)), min_size=2, max_size=9,
                         unique=True))
    chosen = []
    for key in keys:
        for c in range(draw(st.integers(1, 3))):
            m = dataclasses.replace(DEMO.models[key], key=f"{key}-c{c}")
            if m.ratings and draw(st.integers(0, 3)) == 0:
                r = m.ratings[0]
                m = dataclasses.replace(m, ratings=(dataclasses.replace(
                    r, voltage=r.voltage * draw(st.sampled_from([0.5, 2.0]))),) + m.ratings[1:])
            chosen.append(m)
    units = []
    for n in range(draw(st.integers(2, 14))):
        units.append(random_unit(draw, f"U{n}", draw(st.sampled_from(chosen)).key,
                                 ["in-service"] * 5 + ["retired"]))
    return Fleet(models={m.key: m for m in chosen}, units=tuple(units))


def demo_plan(name):
    from importlib import resources

    from registry.plans import load_plan
    return load_plan(resources.files("registry.seeddata") / "plans" / f"{name}.yaml",
                     on=date(2026, 12, 2))


def _verdicts(result):
    return ({(s.instrument, s.mode): s.verdict for s in result.setups},
            {a.unit: a.verdict for a in result.accessories},
            sorted((x.unit, x.reason) for x in result.excluded))


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(fleets(), plans())
def test_pruned_evaluation_gives_the_exhaustive_verdicts(fleet, plan):
    fast, full = evaluate(plan, fleet), evaluate_exhaustive(plan, fleet)
    setups, accessories, excluded = _verdicts(fast)
    assert (setups, accessories, excluded) == _verdicts(full)
    # one setup per unit and mode, as the exhaustive evaluation offers
    assert len(fast.setups) == len(full.setups)
    # every setup's verdict and margin are those of its own findings (its deciding finding's
    # margin), written with the real model keys, never a stand-in
    for s in fast.setups:
        found = s.findings
        assert s.deciding in found
        assert s.margin == s.deciding.margin if s.deciding is not None else s.margin is None
        assert all("\x00" not in f.message and "\x00" not in f.subject for f in found)
        assert s.instrument_model in fleet.models
    assert fast.summary.split(":")[0] == full.summary.split(":")[0]


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(demo_fleets(), st.sampled_from(DEMO_PLANS))
def test_pruned_evaluation_gives_the_exhaustive_verdicts_on_the_demo_plans(fleet, name):
    plan = demo_plan(name)
    fast, full = evaluate(plan, fleet), evaluate_exhaustive(plan, fleet)
    assert _verdicts(fast) == _verdicts(full)
    assert fast.summary.split(":")[0] == full.summary.split(":")[0]
    # the best setup a user reads first is as good as the exhaustive one's
    if full.setups:
        assert fast.setups[0].verdict == full.setups[0].verdict


def test_copies_of_a_model_share_one_evaluation_and_keep_their_names():
    base = fleet_from_file(demo_fleet_path())
    kx7 = base.models["kx-7"]
    ld4 = base.models["bw-ld4"]
    models = {f"kx-7-c{i}": dataclasses.replace(kx7, key=f"kx-7-c{i}") for i in range(5)}
    models["bw-ld4"] = ld4
    units = [UnitState(tag=f"M{i}", model=f"kx-7-c{i}", site="North bench",
                       verification_due=date(2027, 1, 1)) for i in range(5)]
    units.append(UnitState(tag="L1", model="bw-ld4", site="North bench",
                           verification_due=date(2027, 1, 1)))
    fleet = Fleet(models=models, units=tuple(units))
    from registry.plans import load_plan
    from importlib import resources
    plan = load_plan(resources.files("registry.seeddata") / "plans" / "mains-panel.yaml",
                     on=JOB_DAY)
    fast, full = evaluate(plan, fleet), evaluate_exhaustive(plan, fleet)
    # five copies, one content: the shared evaluation judges a fifth of the combinations
    assert fast.combinations * 5 == full.combinations
    # each copy's findings name that copy, as the exhaustive evaluation writes them
    by_unit = {(s.instrument, s.mode): [f.message for f in s.findings] for s in full.setups}
    for s in fast.setups:
        assert [f.message for f in s.findings] == by_unit[(s.instrument, s.mode)]
        assert any(s.instrument_model in f.message or s.instrument_model == f.subject
                   for f in s.findings)


# -- many different lead and probe models -------------------------------------------------------

CATEGORY_RATINGS = st.builds(
    Rating, st.sampled_from(["II", "III", "IV", "none"]),
    st.sampled_from([150.0, 300.0, 600.0, 1000.0]),
    st.sampled_from([None, None, 6000.0, 12e3]), st.sampled_from([None, None, 3000.0]))
EXPOSURES = st.sampled_from([None, 1e-3, 2e-3, 3e-3, 4e-3, 19e-3])


@st.composite
def accessory_fleets(draw):
    """A lab with many different lead and probe models: random ratings (or none: unverified),
    connectors that fit some instruments and some tips, tip exposures, current ratings and
    altitudes; some models copies of others; one to four units of each at random sites and
    states, some with history. The instruments are the random ones of the other strategies, one
    of them with integrated leads a tip plugs into."""
    inst, _lead = draw(models())
    chosen = [inst]
    if draw(st.booleans()):
        chosen.append(dataclasses.replace(
            inst, key="m-fixed", kind="voltage-tester", integrated_leads=True,
            connectors=("2mm",), ratings=tuple(draw(st.lists(CATEGORY_RATINGS, min_size=1,
                                                              max_size=2)))))
    for i in range(draw(st.integers(2, 12))):
        if i and draw(st.integers(0, 4)) == 0:
            chosen.append(dataclasses.replace(draw(st.sampled_from(
                [m for m in chosen if m.kind == "test-leads"] or [inst])), key=f"lc{i}"))
            if chosen[-1].is_instrument:
                chosen.pop()
            continue
        chosen.append(ModelSpec(
            f"l{i}", "test-leads", ratings=tuple(draw(st.lists(CATEGORY_RATINGS, max_size=2))),
            connector=draw(st.sampled_from(["4mm"] * 5 + ["6mm"])),
            connectors=draw(st.sampled_from([("2mm",)] * 4 + [(), ("2mm", "4mm")])),
            tip_exposure=draw(EXPOSURES), max_altitude=draw(st.sampled_from([2000.0, 5000.0])),
            current_rating=draw(st.sampled_from([10.0] * 4 + [None, 20.0]))))
    for i in range(draw(st.integers(1, 12))):
        chosen.append(ModelSpec(
            f"t{i}", draw(st.sampled_from(["probe", "probe", "clip"])),
            ratings=tuple(draw(st.lists(CATEGORY_RATINGS, max_size=2))),
            connector=draw(st.sampled_from(["2mm"] * 4 + ["4mm"])),
            tip_exposure=draw(EXPOSURES), max_altitude=draw(st.sampled_from([2000.0, 5000.0])),
            current_rating=draw(st.sampled_from([10.0] * 4 + [None, 20.0]))))
    units = []
    for model in chosen:
        for _ in range(draw(st.integers(1, 4 if model.is_instrument else 2))):
            units.append(random_unit(draw, f"U{len(units):02d}", model.key,
                                     ["in-service"] * 6 + ["away"]))
    order = draw(st.permutations(range(len(units))))
    return Fleet(models={m.key: m for m in chosen}, units=tuple(units[i] for i in order))


def _setup_rows(result):
    """Every setup as a user reads it: its units, verdict, margin, deciding finding and
    findings (every field of each: a Finding compares by value), in the result's order."""
    return [(s.instrument, s.mode, s.accessories, s.verdict, s.margin,
             s.deciding, list(s.findings))
            for s in result.setups]


def _offer_rows(result):
    """Every accessory unit with its best setup, verdict, margin, reason and findings."""
    return [(a.unit, a.model, a.verdict, a.instrument, a.mode, a.accessories, a.margin,
             a.reason, list(a.findings))
            for a in result.accessories]


def _reason(a):
    r = a.reason
    return None if r is None else (r.check, r.status, r.margin)


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(accessory_fleets(), plans())
def test_pruned_accessories_give_the_exhaustive_verdicts(fleet, plan):
    pruned, full = evaluate(plan, fleet), evaluate_exhaustive(plan, fleet)
    assert _verdicts(pruned) == _verdicts(full)
    # every unit and mode: the same margin and deciding check; every accessory unit: the same
    # best verdict, margin and reason
    assert ({(s.instrument, s.mode): (s.margin, s.deciding and s.deciding.check)
             for s in pruned.setups}
            == {(s.instrument, s.mode): (s.margin, s.deciding and s.deciding.check)
                for s in full.setups})
    assert ({a.unit: (a.verdict, a.margin, _reason(a)) for a in pruned.accessories}
            == {a.unit: (a.verdict, a.margin, _reason(a)) for a in full.accessories})
    # data missing on an accessory never reads suitable: a setup or offer with an unknown
    # finding is at best unverified (docs/rules.md, "Verdicts")
    for row in pruned.setups + pruned.accessories:
        if any(f.status == "unknown" for f in row.findings):
            assert row.verdict in ("unverified", "unsuitable")


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(accessory_fleets(), plans())
def test_setting_accessories_aside_changes_nothing_in_the_result(fleet, plan):
    """The models set aside before combining change no setup, offer, finding or tie: the
    result is the one the same evaluation gives with every accessory model combined."""
    pruned, whole = evaluate(plan, fleet), evaluate(plan, fleet, prune=False)
    assert _setup_rows(pruned) == _setup_rows(whole)
    assert _offer_rows(pruned) == _offer_rows(whole)
    assert pruned.summary == whole.summary
    assert pruned.combinations <= whole.combinations


@st.composite
def demo_accessory_fleets(draw):
    """The demo lab's instruments (discharge tools and the clamp meter among them) with many
    variants of its leads, divider, current clamp, probes and clip: each variant with random
    ratings (or none), tip exposure and altitude, so that the groups of alike accessories hold
    dividers and clamps too; one or two units of each model."""
    inst_keys = draw(st.lists(st.sampled_from(sorted(k for k, m in DEMO.models.items()
                                                     if m.is_instrument)),
                              min_size=1, max_size=5, unique=True))
    acc_keys = draw(st.lists(st.sampled_from(sorted(k for k, m in DEMO.models.items()
                                                    if not m.is_instrument)),
                             min_size=1, max_size=6, unique=True))
    chosen = [DEMO.models[k] for k in inst_keys]
    for key in acc_keys:
        base = DEMO.models[key]
        for v in range(draw(st.integers(1, 5))):
            ratings = base.ratings if draw(st.booleans()) else tuple(
                draw(st.lists(CATEGORY_RATINGS, max_size=2)))
            chosen.append(dataclasses.replace(
                base, key=f"{key}-v{v}", ratings=ratings, tip_exposure=draw(EXPOSURES),
                max_altitude=draw(st.sampled_from([2000.0, 5000.0]))))
    units = []
    for model in chosen:
        for _ in range(draw(st.integers(1, 2))):
            units.append(UnitState(
                tag=f"U{len(units):02d}", model=model.key,
                status=draw(st.sampled_from(["in-service"] * 8 + ["away"])),
                site=draw(st.sampled_from(SITES)),
                verification_due=draw(st.sampled_from([date(2027, 1, 1), date(2026, 12, 30),
                                                       None]))))
    order = draw(st.permutations(range(len(units))))
    return Fleet(models={m.key: m for m in chosen}, units=tuple(units[i] for i in order))


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(demo_accessory_fleets(), st.sampled_from(DEMO_PLANS))
def test_setting_accessories_aside_on_the_demo_plans(fleet, name):
    """Dividers, current clamps, discharge tools and integrated leads: the pruned result is the
    one with every accessory model combined, and has the exhaustive verdicts and reasons."""
    plan = demo_plan(name)
    pruned, whole = evaluate(plan, fleet), evaluate(plan, fleet, prune=False)
    assert _setup_rows(pruned) == _setup_rows(whole)
    assert _offer_rows(pruned) == _offer_rows(whole)
    full = evaluate_exhaustive(plan, fleet)
    assert _verdicts(pruned) == _verdicts(full)
    assert ({a.unit: (a.verdict, a.margin, _reason(a)) for a in pruned.accessories}
            == {a.unit: (a.verdict, a.margin, _reason(a)) for a in full.accessories})


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(accessory_fleets(), plans(), st.data())
def test_an_accessory_brings_its_own_findings_and_nothing_else_of_its_ratings(fleet, plan,
                                                                              data):
    """What pruning rests on: in every setup, the findings of checks 2 to 4 and the tip rule on
    an accessory are `accessory_findings` of it alone; and an accessory with other ratings,
    altitude and tip exposure (the fields only those read) changes no other finding."""
    derived = derive(plan)
    for ctx in list(enumerate_setups(plan, derived, fleet.models.values()))[:40]:
        found = findings_for(ctx)
        for acc in ctx.accessories:
            own = [f for f in found if f.check in SOLO_CHECKS and f.subject == acc.key]
            assert own == accessory_findings(acc, plan, derived,
                                             touching=_touching_item(ctx) is acc,
                                             discharge_tool=ctx.is_discharge_tool)
            other = dataclasses.replace(
                acc, ratings=tuple(data.draw(st.lists(CATEGORY_RATINGS, max_size=2))),
                tip_exposure=data.draw(EXPOSURES),
                max_altitude=data.draw(st.sampled_from([2000.0, 5000.0])))
            swapped = dataclasses.replace(ctx, **{"lead" if acc is ctx.lead else "tip": other})
            rest = [f for f in found if not (f.check in SOLO_CHECKS and f.subject == acc.key)]
            assert rest == [f for f in findings_for(swapped)
                            if not (f.check in SOLO_CHECKS and f.subject == acc.key)]
