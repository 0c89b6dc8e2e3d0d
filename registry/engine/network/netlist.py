"""A model's front end in one mode, as a netlist the solver takes.

The netlist is the model's front-end elements (the fleet format's ``front_end``), the mode's
terminals (the first is driven, the second is the return and the reference node) and the
switches the mode closes.
Everything is frozen and hashable, and it does not carry the model's key: two models with the
same front end share their solves (see :mod:`registry.engine.network.check`).
"""

from __future__ import annotations

from dataclasses import dataclass

from ...errors import WithstandError
from ..spec import Element, Mode, ModelSpec
from .devices import PowerLaw

OPEN_RESISTANCE = 1e12  # ohm: gmin of 1e-12 S from every node, as circuit simulators add


class NetworkError(WithstandError):
    """A front end that cannot be solved as given (a node missing, a solve that fails)."""


class SolveFailed(NetworkError):
    """A solve of a described front end that did not succeed: no convergence, a singular
    matrix, no bracket for a root, a numerical error in numpy or scipy. The analysis turns it
    into an ``unknown`` finding for that mode and scenario; it never reaches a user."""


@dataclass(frozen=True)
class Netlist:
    elements: tuple[Element, ...]
    drive: str  # the terminal the source drives
    ret: str  # the return terminal, the reference node (0 V)
    closed: frozenset[str] = frozenset()  # switches closed in this mode

    @property
    def nodes(self) -> tuple[str, ...]:
        """Every node but the reference, in order of first appearance."""
        seen: dict[str, None] = {}
        for e in self.elements:
            for n in e.between:
                if n != self.ret:
                    seen.setdefault(n, None)
        return tuple(seen)

    def element(self, id: str) -> Element:
        return next(e for e in self.elements if e.id == id)

    def of_type(self, *types: str) -> tuple[Element, ...]:
        return tuple(e for e in self.elements if e.type in types)

    def is_closed(self, e: Element) -> bool:
        return e.type == "switch" and e.id in self.closed


def build_netlist(model: ModelSpec, mode: Mode) -> Netlist:
    """The netlist of ``model``'s front end in ``mode``; raises :class:`NetworkError` when the
    mode has no terminals or a terminal is not a node of the front end."""
    if not model.front_end:
        raise NetworkError(f"model {model.key} has no front end")
    if len(mode.terminals) != 2:
        raise NetworkError(f"mode {mode.key} has no terminals (a clamp-jaw mode)")
    nodes = {n for e in model.front_end for n in e.between}
    missing = [t for t in mode.terminals if t not in nodes]
    if missing:
        raise NetworkError(f"the front end of {model.key} does not reach terminal "
                           f"{', '.join(missing)} of mode {mode.key}")
    return Netlist(tuple(model.front_end), mode.terminals[0], mode.terminals[1],
                   frozenset(mode.closes))


def clamp_law(e: Element) -> PowerLaw | None:
    """The power law of a varistor or TVS from its datasheet values, or None when a value is
    missing or contradictory (the element is then solved as open and its stress is unknown).

    Varistor: through (V1mA, 1 mA) and (clamp_voltage, clamp_current). TVS: through
    (breakdown_voltage, 1 mA) and the clamp point, the issue's "TVS diodes alike"."""
    ref = e.get("varistor_voltage") if e.type == "varistor" else e.get("breakdown_voltage")
    vc, ic = e.get("clamp_voltage"), e.get("clamp_current")
    if ref is None or vc is None or ic is None:
        return None
    try:
        return PowerLaw(ref, vc, ic)
    except ValueError:
        return None


def solve_gaps(net: Netlist) -> list[tuple[str, str]]:
    """What the solver assumes for elements that lack a value it needs: (element id, text).

    Resistors and PTCs without a resistance cannot be assumed anything for; they raise
    :class:`NetworkError` in :func:`check_solvable` instead."""
    notes = []
    for e in net.elements:
        if e.type in ("varistor", "tvs") and clamp_law(e) is None:
            what = "varistor_voltage" if e.type == "varistor" else "breakdown_voltage"
            notes.append((e.id, f"no usable {what} and clamp point (clamp_voltage at "
                                "clamp_current): solved as open"))
        elif e.type == "input" and e.get("resistance") is None:
            notes.append((e.id, "no resistance: solved as open"))
    return notes


def check_solvable(net: Netlist) -> None:
    """Raise :class:`NetworkError` naming every series element that has no resistance."""
    lacking = [e.id for e in net.elements
               if e.type in ("resistor", "ptc") and e.get("resistance") is None]
    if lacking:
        raise NetworkError(f"{', '.join(lacking)} {'has' if len(lacking) == 1 else 'have'} no "
                           "resistance: the front end cannot be solved")
