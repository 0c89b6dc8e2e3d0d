"""Benchmark: a check over a lab with many different lead and probe models.

    .venv/bin/python -m bench.bench_accessories            # 10 instruments x 200 leads x 200 tips
    .venv/bin/python -m bench.bench_accessories --smoke    # 3 x 12 x 12, for CI

Every lead and probe model is its own (random ratings, some with none, tip exposures, current
ratings), so sharing copies of a model saves nothing and the setups grow as instruments x
leads x tips. The check (`evaluate`, the accessory models judged alone first and only the ones
a choice or an offer can need combined) runs on the whole lab; the same evaluation with every
accessory model combined (`prune=False`) runs on a slice of it that it can finish (the same
instruments, fewer leads and tips, 30 x 30 at full size), from which its cost per
combination and so its time on the whole lab follow. Both results on the slice are compared:
they must be the same. Prints the times, the combinations each judged and their ratio; asserts
only that the two results agree.
"""

from __future__ import annotations

import argparse
import dataclasses
import random
import time
from datetime import date
from importlib import resources

from registry.demo import demo_fleet_path
from registry.engine.derived import derive
from registry.engine.evaluate import evaluate
from registry.engine.setups import enumerate_setups
from registry.engine.spec import Fleet, ModelSpec, Rating, UnitState
from registry.formats.fleet import fleet_from_file
from registry.plans import load_plan

INSTRUMENTS = ("kx-7", "kx-3", "hd-c40", "tm-ir10", "hd-vt2")
SITES = ("North bench", "Substation yard")
CATEGORIES = ("II", "III", "IV")
VOLTAGES = (300.0, 600.0, 1000.0)
EXPOSURES = (None, 1e-3, 2e-3, 4e-3, 19e-3)


def lab(instruments: int, leads: int, tips: int, seed: int = 7) -> Fleet:
    """Copies of the demo lab's instruments (ratings scaled per copy) and ``leads`` lead and
    ``tips`` probe models, each different, with one unit of each at one of two sites."""
    rng = random.Random(seed)
    demo = fleet_from_file(demo_fleet_path())
    models: dict[str, ModelSpec] = {}
    for i in range(instruments):
        base = demo.models[INSTRUMENTS[i % len(INSTRUMENTS)]]
        scale = 1.0 + 0.05 * (i // len(INSTRUMENTS))
        models[f"inst-{i:02d}"] = dataclasses.replace(base, key=f"inst-{i:02d}", ratings=tuple(
            dataclasses.replace(r, voltage=r.voltage * scale) for r in base.ratings))

    def ratings():
        if rng.random() < 0.05:
            return ()  # none recorded: unverified
        return tuple(Rating(rng.choice(CATEGORIES), rng.choice(VOLTAGES) * rng.uniform(0.9, 1.1))
                     for _ in range(rng.randint(1, 2)))

    for i in range(leads):
        models[f"lead-{i:03d}"] = ModelSpec(
            f"lead-{i:03d}", "test-leads", ratings=ratings(), connector="4mm-shrouded",
            connectors=("4mm-tip",), tip_exposure=rng.choice(EXPOSURES), current_rating=10.0)
    for i in range(tips):
        models[f"tip-{i:03d}"] = ModelSpec(
            f"tip-{i:03d}", rng.choice(("probe", "probe", "clip")), ratings=ratings(),
            connector="4mm-tip", tip_exposure=rng.choice(EXPOSURES), current_rating=10.0)
    units = [UnitState(tag=f"U{n:04d}", model=key, site=rng.choice(SITES),
                       verification_due=date(2027, 6, 1)) for n, key in enumerate(models)]
    return Fleet(models=models, units=tuple(units))


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="3 x 12 x 12 instead of 10 x 200 x 200")
    args = ap.parse_args(argv)
    n_inst, n_acc, n_slice = (3, 12, 12) if args.smoke else (10, 200, 30)
    plan = load_plan(resources.files("registry.seeddata") / "plans" / "mains-panel.yaml",
                     on=date(2026, 12, 3))
    whole = lab(n_inst, n_acc, n_acc)
    every = sum(1 for _ in enumerate_setups(plan, derive(plan), whole.models.values()))
    evaluate(plan, lab(n_inst, 2, 2))  # warm the front-end solves both runs share

    t = time.perf_counter()
    result = evaluate(plan, whole)
    pruned = time.perf_counter() - t

    part = lab(n_inst, n_slice, n_slice)
    t = time.perf_counter()
    sliced = evaluate(plan, part)
    slice_pruned = time.perf_counter() - t
    t = time.perf_counter()
    combined = evaluate(plan, part, prune=False)
    slice_whole = time.perf_counter() - t
    same = ([(s.instrument, s.mode, s.accessories, s.verdict, s.margin) for s in sliced.setups]
            == [(s.instrument, s.mode, s.accessories, s.verdict, s.margin)
                for s in combined.setups]
            and [(a.unit, a.verdict, a.instrument, a.mode, a.accessories, a.margin)
                 for a in sliced.accessories]
            == [(a.unit, a.verdict, a.instrument, a.mode, a.accessories, a.margin)
                for a in combined.accessories])
    assert same, "setting accessory models aside changed the result"
    per_combination = slice_whole / combined.combinations
    projected = per_combination * every

    print(f"bench_accessories: {n_inst} instruments x {n_acc} leads x {n_acc} tips "
          f"({len(whole.units)} units), plan mains-panel")
    print(f"  check with accessories judged alone first: {pruned:.3f} s, "
          f"{result.combinations} combinations judged of {every} "
          f"({every / max(result.combinations, 1):.0f}x fewer); "
          f"{len(result.setups)} setups, {len(result.accessories)} accessory units")
    print(f"  every accessory combined, on {n_inst} x {n_slice} x {n_slice}: {slice_whole:.3f} s "
          f"for {combined.combinations} combinations ({per_combination * 1e3:.3f} ms each), "
          f"against {slice_pruned:.3f} s with them judged alone first "
          f"({sliced.combinations} combinations): ratio {slice_whole / slice_pruned:.1f}x, "
          f"the same result")
    print(f"  every accessory combined on the whole lab, at that cost per combination: about "
          f"{projected:.3g} s, against {pruned:.3f} s: ratio {projected / pruned:.0f}x")


if __name__ == "__main__":
    main()
