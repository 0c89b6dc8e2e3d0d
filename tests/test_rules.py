"""One rule, one home: the store's SQL filters against the engine's rules (hypothesis, on a
real migrated SQLite database), the category order, overdue and connector fit everywhere."""

from datetime import date, timedelta

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from registry.engine import rules, spec
from registry.engine.checks import fitting_ratings
from registry.store import queries
from registry.store.fleet import import_fleet
from registry.store.specs import all_models, model_spec

# Rated voltages as ratings are usually stated (the rows of the IEC 61010-2-030 impulse table)
# and a few between: the filter must get each boundary right.
VOLTS = (50.0, 150.0, 300.0, 600.0, 1000.0, 1500.0)
RULE_SETTINGS = settings(max_examples=150, deadline=None,
                         suppress_health_check=[HealthCheck.function_scoped_fixture])


def _rating(cat, v):
    r = {"category": cat, "voltage": f"{v:g} V"}
    if cat == "none":
        r["transient"] = "1500 V"
    return r


def rating_fleet():
    """One model per (category, voltage) with that single rating, models with two ratings
    (a higher category at a lower voltage and the reverse), and one with none recorded."""
    models = [{"key": f"m-{c}-{v:g}".lower(), "kind": "test-leads", "connector": "a",
               "ratings": [_rating(c, v)]} for c in spec.CATEGORIES for v in VOLTS]
    models += [
        {"key": "two-iv300-iii600", "kind": "test-leads", "connector": "a",
         "ratings": [_rating("IV", 300.0), _rating("III", 600.0)]},
        {"key": "two-ii1000-iii300", "kind": "probe",
         "ratings": [_rating("II", 1000.0), _rating("III", 300.0)]},
        {"key": "two-none1000-ii150", "kind": "clip",
         "ratings": [_rating("none", 1000.0), _rating("II", 150.0)]},
        {"key": "unrated", "kind": "probe"},
    ]
    units = [{"tag": f"u-{m['key']}", "model": m["key"]} for m in models]
    return {"format": "withstand-fleet/1", "models": models, "units": units}


def test_the_category_order_is_iec_61010_1s():
    # IEC 61010-1 measurement categories: CAT II < CAT III < CAT IV; "none" is not for mains.
    assert spec.MAINS_CATEGORIES == ("II", "III", "IV")
    assert [rules.category_rank(c) for c in ("none", "II", "III", "IV")] == [0, 2, 3, 4]
    assert rules.categories_at_least("III") == ("III", "IV")
    assert rules.categories_at_least("IV") == ("IV",)
    assert set(rules.categories_at_least(None)) == set(spec.CATEGORIES)
    # the old copy in the store indexed the mains list and raised for "none"; the one rule
    # answers it like "no category asked"
    assert rules.categories_at_least("none") == rules.categories_at_least(None)


def test_every_form_offers_the_engines_categories(app):
    from registry.web.fleet import category_choices
    with app.app_context():
        assert [c for c, _ in category_choices()["category_choices"]] == list(spec.MAINS_CATEGORIES)


@given(category=st.sampled_from(spec.MAINS_CATEGORIES + (None,)),
       voltage=st.one_of(st.none(), st.sampled_from(VOLTS),
                         st.floats(min_value=0.0, max_value=2000.0),
                         st.sampled_from(VOLTS).map(lambda v: v * (1 + 1e-12))))
@RULE_SETTINGS
def test_the_sql_fleet_filter_is_fitting_ratings(rating_db, category, voltage):
    """The fleet list's "takes category / voltage" filter (SQL, paginated) returns exactly the
    units that the engine's check 2 rule, fitting_ratings, finds a rating for."""
    session, specs = rating_db
    filters = queries.FleetQuery(category=category or "", voltage=voltage, size=1000)
    got = {u.tag for u in queries.fleet_page(session, filters).units}
    if category is None and voltage is None:
        want = set(specs)  # no filter asked
    else:
        want = {tag for tag, ms in specs.items()
                if fitting_ratings(ms, category, voltage or 0.0)}
    assert got == want


@pytest.fixture
def rating_db(database):
    import_fleet(database, rating_fleet())
    with database.session() as session:
        specs = {f"u-{row.key}": model_spec(row) for row in all_models(session)}
        yield session, specs


# -- verification dates ------------------------------------------------------------------------

BASE = date(2026, 3, 10)
OFFSETS = (-40, -31, -30, -2, -1, 0, 1, 2, 29, 30, 31, 89, 90, 91)


def dated_fleet():
    """A unit of every status due on days around BASE, and one of each with no date."""
    models = [{"key": "leads", "kind": "test-leads", "connector": "a",
               "ratings": [_rating("III", 600.0)]}]
    units = []
    for status in spec.UNIT_STATUSES:
        for k in OFFSETS + (None,):
            u = {"tag": f"u-{status}-{'none' if k is None else k}", "model": "leads",
                 "status": status}
            if k is not None:
                u["verification_due"] = (BASE + timedelta(days=k)).isoformat()
            units.append(u)
    return {"format": "withstand-fleet/1", "models": models, "units": units}


@pytest.fixture
def dated_db(database):
    import_fleet(database, dated_fleet())
    with database.session() as session:
        from registry.store import models as m
        from sqlalchemy import select
        units = {u.tag: (u.status, u.verification_due) for u in session.scalars(select(m.Unit))}
        yield session, units


@given(shift=st.integers(min_value=-95, max_value=95), days=st.sampled_from((0, 1, 30, 90)))
@RULE_SETTINGS
def test_the_sql_due_filters_are_the_engines_overdue_rule(dated_db, shift, days):
    """The fleet list's "overdue" and "due within" filters and the dashboard's list (SQL) pick
    exactly the units the engine's rules pick, on every day around the due dates: the due day
    itself is not overdue, the day after is."""
    session, units = dated_db
    on = BASE + timedelta(days=shift)
    page = queries.fleet_page(session, queries.FleetQuery(due="overdue", size=1000), today=on)
    assert {u.tag for u in page.units} == {
        t for t, (s, due) in units.items() if rules.unit_overdue(s, due, on)}
    soon = {u.tag for u in queries.due_soon(session, days, today=on)}
    assert soon == {t for t, (s, due) in units.items() if rules.unit_due_within(s, due, on, days)}
    if str(days) in queries.DUE_FILTERS:
        page = queries.fleet_page(session, queries.FleetQuery(due=str(days), size=1000),
                                  today=on)
        assert {u.tag for u in page.units} == soon


def test_overdue_boundary_day():
    # common practice (no source): due on the day is still good that day, overdue the next
    due = date(2026, 3, 10)
    assert not rules.verification_overdue(due, due)
    assert rules.verification_overdue(due, due + timedelta(days=1))
    assert not rules.verification_overdue(None, due)
    assert rules.unit_due_within("in-service", due, due - timedelta(days=30), 30)
    assert not rules.unit_due_within("in-service", due, due - timedelta(days=31), 30)


def test_the_fleet_lists_overdue_the_units_the_audit_counts(database):
    """A retired unit's lapsed date is no finding in the audit workbook, and the dashboard
    leaves it out; the fleet list's "overdue" filter listed it all the same."""
    from registry.store.audit import build_audit
    import_fleet(database, dated_fleet())
    with database.session() as session:
        page = queries.fleet_page(session, queries.FleetQuery(due="overdue", size=1000),
                                  today=BASE)
        listed = {u.tag for u in page.units}
        assert "u-retired--1" not in listed
        assert listed == build_audit(session, on=BASE).overdue_tags


# -- connector fit -----------------------------------------------------------------------------

def test_the_audit_fits_connectors_as_the_setups_do():
    """A probe that plugs into a tester's integrated leads is a setup the engine builds; the
    audit skipped instruments with integrated leads, so a CAT II probe on a CAT III tester
    went unreported. The rule that a setup is held to the lower rating of its parts: the
    reading of IEC 61010-031 accessory ratings as the trade applies it (common practice,
    no source)."""
    from registry.engine.derived import derive
    from registry.engine.setups import enumerate_setups
    from registry.engine.spec import Mode, ModelSpec, Rating
    from registry.store.audit import accessories_below
    from helpers.builders import panel_plan
    tester = ModelSpec(key="vt-2", kind="voltage-tester", integrated_leads=True,
                       connectors=("tip-2mm",), ratings=(Rating("III", 1000.0),),
                       modes=(Mode("v", "Volts", "voltage", "both", ("L1", "L2"),
                                   input_resistance=200e3, max_input=1000.0),))
    probe = ModelSpec(key="pr-9", kind="probe", connector="tip-2mm",
                      ratings=(Rating("II", 600.0),))
    plan = panel_plan(task="verify-absence")
    shapes = {(c.instrument.key, c.tip.key if c.tip else None)
              for c in enumerate_setups(plan, derive(plan), [tester, probe])}
    assert ("vt-2", "pr-9") in shapes  # the setups put the probe on the tester
    assert ("pr-9", "vt-2", "CAT III 1 kV") in accessories_below(
        {"vt-2": tester, "pr-9": probe})
