"""The rules' direction (hypothesis): more stress never makes a setup fitter, better ratings
never make it less fit, missing instrument data never yields suitable."""

import dataclasses

from hypothesis import HealthCheck, given, settings, strategies as st

from registry.engine.derived import derive
from registry.engine.evaluate import evaluate
from registry.engine.spec import Circuit, Fuse, Mode, ModelSpec, Plan, Rating

from helpers.builders import JOB_DAY, fleet_of, unit

SEVERITY = {"suitable": 0, "conditional": 1, "unverified": 2, "unsuitable": 3}
FIT = ("suitable", "conditional")

cats = st.sampled_from(["II", "III", "IV"])
volts = st.floats(10.0, 1000.0)
# One strong rating (so that many setups fit and a change can show) plus random others.
strong = st.builds(Rating, st.sampled_from(["IV", "none"]), st.floats(800.0, 2000.0),
                   st.floats(8e3, 30e3), st.sampled_from([None, 2000.0, 3000.0, 5000.0]))
ratings = st.tuples(strong, st.lists(st.builds(
    Rating, st.sampled_from(["II", "III", "IV", "none"]), st.floats(50.0, 2000.0),
    st.one_of(st.none(), st.floats(500.0, 20e3)),
    st.one_of(st.none(), st.floats(1000.0, 6000.0))), max_size=2)).map(
    lambda t: (t[0],) + tuple(t[1]))
def maybe(s):
    return st.one_of(st.none(), s)


@st.composite
def models(draw):
    modes = [Mode("v", "Volts", "voltage", "both", ("V", "COM"),
                  input_resistance=draw(st.sampled_from([2e3, 3e3, 200e3, 1e6, 10e6])),
                  max_input=draw(st.one_of(st.none(), st.floats(100.0, 2000.0),
                                           st.just(3000.0))),
                  max_duration=draw(maybe(st.floats(5.0, 300.0))),
                  discharge_energy=draw(maybe(st.floats(1.0, 5e3)))),
             Mode("v2", "Other volts", "voltage", "both", ("V", "COM"),
                  input_resistance=10e6, max_input=draw(maybe(st.floats(100.0, 2000.0)))),
             Mode("a", "Amps", "current", "both", ("A", "COM"), max_current=10.0,
                  input_resistance=0.01,
                  fuse=Fuse(current=11.0, voltage=draw(st.floats(100.0, 1500.0)),
                            voltage_dc=draw(maybe(st.floats(100.0, 1500.0))),
                            breaking_capacity=draw(st.floats(1e3, 50e3))))]
    inst = ModelSpec("m", "multimeter", ratings=tuple(draw(ratings)), modes=tuple(modes),
                     connectors=("4mm",), max_altitude=draw(st.sampled_from([2000.0, 5000.0])))
    lead = ModelSpec("l", "test-leads", ratings=tuple(draw(ratings)), connector="4mm",
                     tip_exposure=draw(maybe(st.sampled_from([1e-3, 2e-3, 4e-3, 19e-3]))))
    return inst, lead


@st.composite
def plans(draw):
    supply = draw(st.sampled_from(["mains", "isolated"]))
    waveform = draw(st.sampled_from(["ac", "dc"]))
    v = draw(volts)
    task = draw(st.sampled_from(["measure-voltage", "verify-absence", "measure-current",
                                 "discharge"]))
    cap = draw(maybe(st.floats(1e-9, 1e-2)))
    if task == "discharge" and cap is None:
        cap = 1e-4
    circuit = Circuit(supply=supply, waveform=waveform, voltage=v,
                      category=draw(cats) if supply == "mains" else None,
                      voltage_to_earth=draw(maybe(st.floats(10.0, 1000.0))),
                      transient=draw(maybe(st.floats(500.0, 20e3))),
                      source_impedance=draw(maybe(st.floats(0.001, 100.0))),
                      capacitance=cap,
                      current=draw(st.floats(0.1, 50.0)) if task == "measure-current" else None)
    return Plan(task=task, circuit=circuit, altitude=draw(st.floats(0.0, 4000.0)),
                duration=draw(st.floats(1.0, 600.0)), on=JOB_DAY, site="North bench")


def verdicts(plan, inst, lead):
    fleet = fleet_of([inst, lead], [unit("M1", "m"), unit("L1", "l")])
    return {(s.mode, s.accessories): s.verdict for s in evaluate(plan, fleet).setups}


def assert_not_fitter(before, after):
    """For every setup offered both times: not less severe after, and never unfit -> fit."""
    for key in before.keys() & after.keys():
        assert SEVERITY[after[key]] >= SEVERITY[before[key]], (key, before[key], after[key])


FAST = settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def _raise_circuit(plan, **changes):
    return dataclasses.replace(plan, circuit=dataclasses.replace(plan.circuit, **changes))


@FAST
@given(models(), plans(), st.floats(1.0, 3.0))
def test_raising_the_voltage_never_makes_a_setup_fitter(m, plan, k):
    c = plan.circuit
    higher = _raise_circuit(plan, voltage=c.voltage * k,
                            voltage_to_earth=None if c.voltage_to_earth is None
                            else max(c.voltage_to_earth, c.voltage * k))
    assert_not_fitter(verdicts(plan, *m), verdicts(higher, *m))


@FAST
@given(models(), plans(), st.floats(1.0, 5.0))
def test_raising_the_transient_never_makes_a_setup_fitter(m, plan, k):
    t = plan.circuit.transient or 1000.0
    base = _raise_circuit(plan, transient=t)
    assert_not_fitter(verdicts(base, *m), verdicts(_raise_circuit(plan, transient=t * k), *m))


@FAST
@given(models(), plans(), st.floats(1.0, 100.0))
def test_raising_the_energy_never_makes_a_setup_fitter(m, plan, k):
    c = plan.circuit.capacitance or 1e-6
    base = _raise_circuit(plan, capacitance=c)
    assert_not_fitter(verdicts(base, *m), verdicts(_raise_circuit(plan, capacitance=c * k), *m))


@FAST
@given(models(), plans(), st.floats(0.0, 4000.0))
def test_raising_the_altitude_never_makes_a_setup_fitter(m, plan, dh):
    higher = dataclasses.replace(plan, altitude=plan.altitude + dh)
    assert_not_fitter(verdicts(plan, *m), verdicts(higher, *m))


@FAST
@given(models(), plans(), st.floats(1.0, 3.0))
def test_raising_a_rating_or_a_limit_never_makes_a_setup_less_fit(m, plan, k):
    inst, lead = m
    better_inst = dataclasses.replace(
        inst, ratings=tuple(dataclasses.replace(r, voltage=r.voltage * k) for r in inst.ratings),
        modes=tuple(dataclasses.replace(
            md, max_input=None if md.max_input is None else md.max_input * k,
            max_duration=None if md.max_duration is None else md.max_duration * k,
            discharge_energy=None if md.discharge_energy is None else md.discharge_energy * k)
            for md in inst.modes),
        max_altitude=inst.max_altitude * k)
    better_lead = dataclasses.replace(
        lead, ratings=tuple(dataclasses.replace(r, voltage=r.voltage * k,
                                                transient=None if r.transient is None
                                                else r.transient * k)
                            for r in lead.ratings))
    before, after = verdicts(plan, inst, lead), verdicts(plan, better_inst, better_lead)
    for key in before.keys() & after.keys():
        assert SEVERITY[after[key]] <= SEVERITY[before[key]], (key, before[key], after[key])


@FAST
@given(models(), plans(), st.sampled_from(["ratings", "max_input", "input_resistance",
                                           "fuse", "tip_exposure"]))
def test_missing_instrument_data_never_yields_suitable(m, plan, missing):
    inst, lead = m
    if missing == "ratings":
        inst = dataclasses.replace(inst, ratings=())
    elif missing == "tip_exposure":
        lead = dataclasses.replace(lead, tip_exposure=None)
    else:
        inst = dataclasses.replace(inst, modes=tuple(
            dataclasses.replace(md, **{missing: None}) for md in inst.modes))
    fleet = fleet_of([inst, lead], [unit("M1", "m"), unit("L1", "l")])
    for s in evaluate(plan, fleet).setups:
        needed = {"ratings": True,
                  "max_input": s.mode in ("v", "v2"),
                  "input_resistance": s.mode in ("v", "v2") and plan.task != "measure-current"
                  and (plan.circuit.source_impedance is not None
                       or plan.circuit.capacitance is not None),
                  "fuse": s.mode == "a" and plan.circuit.source_impedance is not None,
                  # the tip rule: every CAT III/IV circuit and every hazardous-live one
                  "tip_exposure": plan.circuit.category in ("III", "IV")
                  or derive(plan).hazardous}[missing]
        if needed:
            assert s.verdict != "suitable", (missing, s.mode, s.findings)
