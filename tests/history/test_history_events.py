"""Logging events: the within-rating decision, clamp conduction, the hold rule (docs/rules.md,
check 11), validation, release and retirement, and the history check after release (check 11).

Limits come from the demo fleet's model records (seeddata/fleet.yaml: kx-7 rated CAT III
1000 V and CAT IV 600 V, vdc max input 1000 V, lowz max input 600 V for at most 60 s, RV1
varistor voltage 1800 V) and the impulse table of IEC 61010-2-030:2010 Table 102.
"""

import re
from datetime import date, datetime

import pytest
from sqlalchemy import func, select

from registry.cli import main
from registry.demo import demo_fleet_path
from registry.engine import spec
from registry.engine.evaluate import evaluate
from registry.engine.events import AppliedStress, assess, clamp_conducted
from registry.errors import InvalidInput, NotAllowed, NotFound
from registry.formats.fleet import load_fleet_file
from registry.store import models as m
from registry.services.events import log_event
from registry.store.loading import engine_fleet
from registry.services.holds import release_hold

ON = date(2026, 12, 2)


@pytest.fixture(scope="module")
def models():
    return {x.key: x for x in load_fleet_file(demo_fleet_path()).models}


def run(runner, *args):
    return runner.invoke(main, list(args))


def count(database, table):
    with database.transaction() as s:
        return s.scalar(select(func.count()).select_from(table))


def unit_status(database, tag):
    with database.transaction() as s:
        return s.scalar(select(m.Unit.status).where(m.Unit.tag == tag))


# -- the engine's decision ---------------------------------------------------------------------

@pytest.mark.parametrize("volts, within", [(900.0, True), (901.0, False)])
def test_overvoltage_is_an_isolated_source_against_rating_and_max_input(models, volts, within):
    # kx-7: highest rated voltage 900 V (CAT III), vdc max input 1000 V (model record): the
    # lower of the two bounds;
    # an isolated source needs a rating of any category at least the voltage (docs/rules.md,
    # check 2).
    a = assess(models["kx-7"], "vdc", AppliedStress("overvoltage", volts))
    assert a.within_rating is within
    assert a.hold is (not within)


def test_low_z_duration_beyond_max_duration_is_not_within(models):
    # lowz: 600 V max input for at most 60 s (model record); 500 V is fine, 90 s is not.
    assert assess(models["kx-7"], "lowz",
                  AppliedStress("overvoltage", 500.0, duration=30.0)).within_rating
    a = assess(models["kx-7"], "lowz", AppliedStress("overvoltage", 500.0, duration=90.0))
    assert a.within_rating is False and "60 s" in a.reason


def test_without_a_mode_every_mode_must_take_it(models):
    # 800 V is inside vdc (1000 V) but above lowz (600 V): with no mode stated the engine
    # cannot say it was within rating.
    a = assess(models["kx-7"], None, AppliedStress("overvoltage", 800.0))
    assert a.within_rating is None and a.hold and "lowz" in a.reason
    assert assess(models["kx-7"], None, AppliedStress("overvoltage", 500.0)).within_rating is True


@pytest.mark.parametrize("peak, within", [(8000.0, True), (8100.0, False)])
def test_transient_against_the_impulse_table(models, peak, within):
    # IEC 61010-2-030:2010 Table 102: CAT III at 1000 V and CAT IV at 600 V both test at
    # 8000 V peak, so kx-7 withstands 8 kV.
    assert assess(models["kx-7"], "vdc", AppliedStress("transient", peak)).within_rating is within


def test_transient_on_a_none_rating_uses_the_stated_withstand(models):
    # ks-hv30: rating 'none' 30 kV with a stated transient of 36 kV (model record)
    assert assess(models["ks-hv30"], None, AppliedStress("transient", 35e3)).within_rating is True
    assert assess(models["ks-hv30"], None, AppliedStress("transient", 37e3)).within_rating is False
    # tm-sc2: 'none' 300 V with no stated transient: unknown, and so a hold
    a = assess(models["tm-sc2"], "ch1", AppliedStress("transient", 500.0))
    assert a.within_rating is None and a.hold


def test_clamp_conducts_above_the_varistor_voltage_in_the_input_path(models):
    kx7 = models["kx-7"]
    # RV1 sits behind R1 and PT1 on the V input; its varistor voltage is 1800 V
    assert clamp_conducted(kx7, kx7.mode("vdc"), 2000.0)
    assert not clamp_conducted(kx7, kx7.mode("vdc"), 1500.0)
    # the A input (F1, RS) has no clamp on its path
    assert not clamp_conducted(kx7, kx7.mode("amp"), 5000.0)


def test_discharge_energy_against_the_tool(models):
    # ks-dr1 absorbs 2 kJ per discharge, up to 1500 V (model record)
    assert assess(models["ks-dr1"], None, AppliedStress("discharge", 1000.0, 1500.0)).within_rating
    assert assess(models["ks-dr1"], None,
                  AppliedStress("discharge", 1000.0, 2500.0)).within_rating is False
    assert assess(models["ks-dr1"], None, AppliedStress("discharge", 1000.0)).within_rating is None


@pytest.mark.parametrize("kind, symptoms, hold", [
    ("overvoltage", ("none",), False),     # within rating, no symptom: no hold
    ("overvoltage", ("heat",), True),      # a symptom other than none
    ("fuse-open", (), True),               # the kind alone
    ("mechanical", ("none",), True),
])
def test_hold_rule(models, kind, symptoms, hold):
    a = assess(models["kx-7"], "vdc", AppliedStress(kind, 230.0), symptoms)
    assert a.hold is hold


# -- validation through the CLI: exit 2, nothing written ----------------------------------------

@pytest.mark.parametrize("args, message", [
    (["--unit", "NB-9999", "--kind", "overvoltage", "--voltage", "1 kV"], "no unit 'NB-9999'"),
    (["--unit", "NB-0001", "--kind", "overvoltage", "--mode", "aac", "--voltage", "1 kV"],
     "--mode: 'aac' is not a mode of kx-7"),
    (["--unit", "NB-0001", "--kind", "overvoltage", "--voltage", "2 kA"],
     "--voltage: '2 kA' is a current; this field needs a voltage"),
    (["--unit", "NB-0001", "--kind", "discharge", "--energy", "5 V"],
     "--energy: '5 V' is a voltage"),
    (["--unit", "NB-0001", "--kind", "overvoltage", "--voltage", "1 kV", "--symptom", "fizz"],
     "--symptom: 'fizz' is not a symptom"),
    (["--unit", "NB-0001", "--kind", "overvoltage", "--voltage", "1 kV", "--symptom", "none",
      "--symptom", "arc"], "'none' cannot be given with other symptoms"),
    (["--unit", "NB-0001", "--kind", "overvoltage", "--at", "yesterday"], "--at: 'yesterday'"),
    (["--unit", "NB-0001", "--kind", "overvoltage", "--at", "2199-01-01T00:00Z"], "future"),
])
def test_bad_event_exits_2_and_writes_nothing(runner, demo, args, message):
    holds = count(demo, m.Hold)  # the demo file's on-hold units come with theirs
    result = run(runner, "event", "add", *args, "--by", "tech")
    assert result.exit_code == 2, result.output
    assert message in result.output and "Traceback" not in result.output
    assert count(demo, m.Event) == 0 and count(demo, m.Hold) == holds


def test_unknown_kind_is_refused(runner, demo):
    result = run(runner, "event", "add", "--unit", "NB-0001", "--kind", "flood", "--by", "tech")
    assert result.exit_code == 2 and count(demo, m.Event) == 0


def test_roles_and_users(runner, demo):
    viewer = run(runner, "event", "add", "--unit", "NB-0001", "--kind", "other", "--by", "viewer")
    assert viewer.exit_code == 2 and "needs a technician or steward" in viewer.output
    ghost = run(runner, "event", "add", "--unit", "NB-0001", "--kind", "other", "--by", "ghost")
    assert ghost.exit_code == 2 and "no user 'ghost'" in ghost.output
    assert count(demo, m.Event) == 0


def test_cli_prints_the_decision_and_the_hold(runner, demo):
    result = run(runner, "event", "add", "--unit", "NB-0001", "--kind", "overvoltage",
                 "--mode", "vdc", "--voltage", "1.2 kV", "--by", "tech", "--note", "wrong bus",
                 "--at", "2026-11-30T10:15:00+01:00")
    assert result.exit_code == 0, result.output
    assert "NOT within rating" in result.output
    assert "1 kV is below the applied 1.2 kV" in result.output
    assert re.search(r"Hold \d+ opened on NB-0001", result.output)
    with demo.transaction() as s:
        ev = s.scalar(select(m.Event))
        assert ev.logged_by.username == "tech" and ev.within_rating is False
        assert ev.occurred_at == datetime(2026, 11, 30, 9, 15)  # +01:00 stored as UTC
        assert ev.voltage == 1200.0 and ev.mode_key == "vdc" and ev.notes == "wrong bus"
    assert unit_status(demo, "NB-0001") == "on-hold"
    fine = run(runner, "event", "add", "--unit", "NB-0002", "--kind", "overvoltage", "--mode",
               "vdc", "--voltage", "400 V", "--symptom", "none", "--by", "tech")
    assert fine.exit_code == 0
    assert "within rating" in fine.output and "No hold opened" in fine.output
    assert unit_status(demo, "NB-0002") == "in-service"


# -- holds and release -------------------------------------------------------------------------

def test_release_pass_puts_back_in_service_and_records_it(runner, demo):
    log_event(demo, unit="NB-0001", kind="overvoltage", mode="vdc", voltage=1200.0, by="tech")
    refused = run(runner, "hold", "release", "--unit", "NB-0001", "--result", "pass",
                  "--by", "tech")
    assert refused.exit_code == 2 and "needs a steward" in refused.output
    done = run(runner, "hold", "release", "--unit", "NB-0001", "--result", "pass", "--by",
               "steward", "--note", "insulation test 2 kV passed")
    assert done.exit_code == 0 and "now in-service" in done.output
    with demo.transaction() as s:
        h = s.scalar(select(m.Hold).join(m.Hold.unit).where(m.Unit.tag == "NB-0001"))
        assert h.result == "pass" and h.released_by.username == "steward"
        assert h.notes == "insulation test 2 kV passed" and h.released_at is not None
        statuses = [(c.old, c.new) for c in s.scalars(select(m.Change).where(
            m.Change.entity_key == "NB-0001", m.Change.field == "status").order_by(m.Change.id))]
        assert statuses == [("in-service", "on-hold"), ("on-hold", "in-service")]
    again = run(runner, "hold", "release", "--unit", "NB-0001", "--result", "pass",
                "--by", "steward")
    assert again.exit_code == 2 and "no open hold" in again.output


def test_release_fail_retires(demo):
    log_event(demo, unit="SY-0005", kind="fuse-open", mode="amp", by="tech")
    rel = release_hold(demo, unit="SY-0005", result="fail", by="steward", note="shunt burnt")
    assert rel.status == "retired" and unit_status(demo, "SY-0005") == "retired"


def test_second_hold_keeps_the_unit_held(demo):
    a = log_event(demo, unit="BL-0001", kind="mechanical", by="tech")
    b = log_event(demo, unit="BL-0001", kind="overvoltage", mode="vdc", voltage=300.0,
                  symptoms=["smell"], by="tech")
    assert a.hold_id and b.hold_id and a.hold_id != b.hold_id
    rel = release_hold(demo, unit="BL-0001", result="repaired", by="steward", hold_id=a.hold_id)
    assert rel.status == "on-hold"
    rel = release_hold(demo, unit="BL-0001", result="pass", by="steward")
    assert rel.holds == (b.hold_id,) and rel.status == "in-service"


def test_hold_from_the_fleet_file_is_released_on_record(demo):
    # the demo fleet file marks NB-0003 on-hold; importing it opened a hold with the reason
    with demo.transaction() as s:
        h = s.scalar(select(m.Hold).join(m.Hold.unit).where(m.Unit.tag == "NB-0003"))
        assert h.released_at is None and "fleet file" in h.reason and h.event_id is None
    rel = release_hold(demo, unit="NB-0003", result="pass", by="steward")
    assert rel.status == "in-service"
    with demo.transaction() as s:
        h = s.scalar(select(m.Hold).join(m.Hold.unit).where(m.Unit.tag == "NB-0003"))
        assert h.result == "pass" and h.released_at is not None


def test_status_only_hold_is_released_on_record(demo):
    # a unit set on-hold by hand in the database, with no hold record
    with demo.transaction() as s:
        unit = s.scalar(select(m.Unit).where(m.Unit.tag == "NB-0004"))
        unit.status = "on-hold"
    rel = release_hold(demo, unit="NB-0004", result="pass", by="steward")
    assert rel.status == "in-service"
    with demo.transaction() as s:
        h = s.scalar(select(m.Hold).join(m.Hold.unit).where(m.Unit.tag == "NB-0004"))
        assert h.result == "pass" and h.event_id is None


def test_bad_release_input(demo):
    with pytest.raises(InvalidInput):
        release_hold(demo, unit="NB-0003", result="maybe", by="steward")
    with pytest.raises(NotFound):
        release_hold(demo, unit="NB-0001", result="pass", by="steward")
    with pytest.raises(NotAllowed):
        release_hold(demo, unit="NB-0003", result="pass", by="viewer")


# -- history in the engine (docs/rules.md, check 11) -----------------------------------------------

def _result(database):
    plan = spec.Plan(task="measure-voltage", on=ON,
                     circuit=spec.Circuit(supply="isolated", waveform="dc", voltage=400.0))
    with database.transaction() as s:
        fleet = engine_fleet(s)
    return evaluate(plan, fleet)


def _history(result, tag, mode):
    setup = next(x for x in result.setups if x.instrument == tag and x.mode == mode)
    return [f for f in setup.findings if f.check == "history" and f.subject == tag
            and ("outside its rating" in f.message or "clamped" in f.message)]


def test_held_unit_is_excluded_then_cautioned_in_that_mode_after_release(demo):
    log_event(demo, unit="NB-0001", kind="overvoltage", mode="vdc", voltage=1200.0, by="tech")
    held = _result(demo)
    assert ("NB-0001", "on-hold") in {(e.unit, e.reason) for e in held.excluded}
    assert not any(x.instrument == "NB-0001" for x in held.setups)
    release_hold(demo, unit="NB-0001", result="pass", by="steward")
    after = _result(demo)
    assert [f.status for f in _history(after, "NB-0001", "vdc")] == ["caution"]
    assert _history(after, "NB-0001", "lowz") == []  # another mode: no caution
    assert _history(after, "NB-0002", "vdc") == []  # another unit: none


def test_three_clamped_transients_are_a_caution(demo):
    # 2 kV is within kx-7's 8 kV impulse withstand but above RV1's 1800 V varistor voltage
    for i in range(3):
        logged = log_event(demo, unit="NB-0002", kind="transient", mode="vdc", voltage=2000.0,
                           symptoms=["none"], by="tech")
        assert logged.hold_id is None and logged.assessment.clamp_conducted
        found = _history(_result(demo), "NB-0002", "vdc")
        assert (len(found) == 1) is (i == 2)
    assert "clamped 3 transients" in found[0].message
