"""Tasks done on a circuit that should be dead: proving it dead (verify-absence) and measuring
resistance, continuity or insulation on it.

Three rules live here, run by :func:`~registry.engine.evaluate.evaluate` beside checks 2 to 9:

- a resistance, continuity or insulation test is made on an isolated circuit proved dead; the
  plan's voltage is then what the circuit could deliver if it is unexpectedly live, and check 5
  (:func:`~registry.engine.checks.check_mode_input`) already holds the mode's maximum input
  against it, check 6 the other modes on the same terminals: that is misuse protection, and
  the caution says so;
- for verify-absence, at equal verdicts a purpose-built voltage tester ranks ahead of other
  instruments (:func:`tester_rank`);
- a multimeter (or clamp meter) used to prove dead carries a caution finding
  (:func:`check_proving_dead`).
"""

from __future__ import annotations

from .findings import Finding
from .quantity import VOLTAGE, format_quantity as qtext

DEAD_TASKS = ("measure-resistance",)  # resistance, continuity and insulation modes
PROVING_TASK = "verify-absence"
TESTER_KIND = "voltage-tester"
# Instruments whose function switch and ranges can be set wrong while proving dead.
SELECTABLE_KINDS = ("multimeter", "clamp-meter")

SRC_ISOLATE = ("isolate, secure and prove dead before a dead test; instrument makers' "
               "manuals say not to measure resistance on a live circuit (common practice, "
               "no source)")
# From memory: HSE Guidance Note GS38 (fourth edition, 2015) on voltage indicators gives the
# same advice; its paragraph was not read, so the source shown is common practice.
SRC_PROVING = ("a purpose-built two-pole voltage tester is preferred for proving dead over a "
               "multimeter, whose function or range can be set wrong (common practice, "
               "no source)")


def isolation_caution(voltage: float, waveform: str) -> str:
    """The caution of a resistance, continuity or insulation task; ``voltage`` in V."""
    return (f"Resistance, continuity and insulation tests are made on a dead circuit: isolate "
            f"it, secure the isolation and prove it dead before connecting. The plan's "
            f"{qtext(voltage, VOLTAGE)} {waveform} is taken as what the circuit could deliver if "
            "it is unexpectedly live: each setup's mode is checked to withstand it (its "
            "maximum input, and the other modes on the same terminals) as misuse protection, "
            f"not as a reason to measure live ({SRC_ISOLATE}).")


def tester_rank(task: str | None, kind: str) -> int:
    """0 ranks first. For verify-absence, a purpose-built voltage tester (kind
    ``voltage-tester``, the two-pole kind) before every other instrument; for other tasks
    every instrument alike. Source as :data:`SRC_PROVING`."""
    if task != PROVING_TASK:
        return 0
    return 0 if kind == TESTER_KIND else 1


def check_proving_dead(ctx) -> list[Finding]:
    """A caution on a multimeter or clamp meter set up to prove dead: a wrong function or
    range, a flat battery or a blown fuse can show nothing on a live circuit. ``ctx`` is a
    :class:`~registry.engine.setups.SetupContext`."""
    inst = ctx.instrument
    if ctx.plan.task != PROVING_TASK or inst.kind not in SELECTABLE_KINDS:
        return []
    return [Finding("proving-dead", "caution", inst.key,
                    f"{inst.key} is a {inst.kind}, not a purpose-built two-pole voltage "
                    f"tester: set to {ctx.mode.label}, a wrong function or range, a flat "
                    "battery or an open fuse can read nothing on a live circuit. Prefer a "
                    "voltage tester; if this is used, check the function before each test and "
                    "prove it on a known live source before and after.", SRC_PROVING,
                    TESTER_KIND, inst.kind)]
