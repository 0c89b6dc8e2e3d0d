"""The front end of a model in one mode as a SPICE deck, so a circuit simulator can check the
solver: the same elements and values the solver uses, varistors and TVS diodes as behavioural
current sources following the same power law.

Pure text. The deck runs in ngspice batch mode (``ngspice -b deck.cir``) and prints what it
solved: every node voltage for the operating point, the capacitor voltage over time for a
discharge.
"""

from __future__ import annotations

import math
import re

from ..spec import Mode, ModelSpec
from .netlist import OPEN_RESISTANCE, Netlist, build_netlist, clamp_law
from .devices import I_REF
from .solver import COLD, State

DEFAULT_VOLTAGE = 1000.0  # V, when neither the caller nor the mode's max_input gives one


def _num(v: float) -> str:
    return f"{v:.10g}"


def node_names(net: Netlist) -> dict[str, str]:
    """Our node names -> SPICE node names: the return terminal is 0; the others lower case
    alphanumerics (SPICE folds case), made unique with a suffix."""
    out = {net.ret: "0"}
    used = {"0"}
    for n in net.nodes:
        base = re.sub(r"[^a-z0-9_]", "_", n.lower()) or "n"
        if base[0].isdigit() or base == "0":
            base = "n" + base
        name, k = base, 1
        while name in used:
            k += 1
            name = f"{base}_{k}"
        used.add(name)
        out[n] = name
    return out


def _vdiff(a: str, b: str) -> str:
    return f"V({a})" if b == "0" else f"V({a},{b})"


def netlist_deck(net: Netlist, *, title: str, scenario: str = "steady", voltage: float,
                 source_impedance: float | None = None, capacitance: float | None = None,
                 duration: float | None = None, state: State = COLD,
                 control: bool = True) -> str:
    """A SPICE deck of ``net`` in ``state`` driven by ``voltage`` behind ``source_impedance``.

    ``scenario`` "steady" (or "impulse"): a dc operating point. "discharge": a capacitor
    ``capacitance`` charged to ``voltage`` discharged through the front end for ``duration``
    (a transient analysis; PTCs stay at the resistance ``state`` gives them, since a SPICE
    resistor does not heat)."""
    nodes = node_names(net)
    lines = [f"* {title}", "* written by withstand; elements and values as the solver uses "
             "them", "* node map: " + ", ".join(f"{k}={v}" for k, v in nodes.items())]
    drive = nodes[net.drive]
    rs = source_impedance or 0.0
    if scenario == "discharge":
        if not capacitance:
            raise ValueError("a discharge deck needs the capacitance")
        top = "cbank" if rs > 0 else drive
        lines.append(f"CBANK {top} 0 {_num(capacitance)} IC={_num(voltage)}")
        if rs > 0:
            lines.append(f"RSOURCE {top} {drive} {_num(rs)}")
    else:
        if rs > 0:
            lines.append(f"VSOURCE src 0 DC {_num(voltage)}")
            lines.append(f"RSOURCE src {drive} {_num(rs)}")
        else:
            lines.append(f"VSOURCE {drive} 0 DC {_num(voltage)} ; stiff source")
    arcs = dict(state.arcs)
    for e in net.elements:
        a, b = nodes[e.between[0]], nodes[e.between[1]]
        tag = re.sub(r"[^A-Za-z0-9_]", "_", e.id)
        if e.type in ("resistor", "input", "ptc"):
            r = state.ptc_resistance(e.id) if e.type == "ptc" else None
            note = ""
            if r is not None:
                note = " ; tripped"
            else:
                r = e.get("resistance")
            if r is None:
                lines.append(f"* {e.id}: no resistance, left open")
                continue
            lines.append(f"R_{tag} {a} {b} {_num(r)}{note}")
        elif e.type in ("varistor", "tvs"):
            law = clamp_law(e)
            if law is None:
                lines.append(f"* {e.id}: no clamp law (values missing), left open")
                continue
            lines.append(f"B_{tag} {a} {b} I = {_num(I_REF)}*pwr({_vdiff(a, b)}/"
                         f"{_num(law.v_ref)}, {_num(law.alpha)})")
        elif e.type == "switch":
            if net.is_closed(e):
                lines.append(f"V_{tag} {a} {b} DC 0 ; closed switch")
            else:
                lines.append(f"* {e.id}: open switch between {a} and {b}")
        elif e.type == "fuse":
            if e.id in state.blown:
                lines.append(f"* {e.id}: fuse open")
            else:
                lines.append(f"V_{tag} {a} {b} DC 0 ; intact fuse")
        elif e.type == "gas-tube":
            if e.id in arcs:
                lines.append(f"V_{tag} {a} {b} DC {_num(arcs[e.id])} ; gas tube arcing")
            else:
                lines.append(f"* {e.id}: gas tube not fired")
    # The solver's gmin: 1e-12 S from every node to the reference.
    for n in net.nodes:
        lines.append(f"RGMIN_{nodes[n]} {nodes[n]} 0 {_num(OPEN_RESISTANCE)}")
    lines.append(".options reltol=1e-6 abstol=1e-12 vntol=1e-9 itl1=500")
    if control:
        lines.append(".control")
        if scenario == "discharge":
            tstop = duration or 1.0
            step = tstop / 2000
            lines.append(f"tran {_num(step)} {_num(tstop)} 0 {_num(step)} uic")
            cap = "cbank" if rs > 0 else drive
            lines.append(f"print v({cap})")
        else:
            lines.append("op")
            lines.append("print all")
        lines.append(".endc")
    lines.append(".end")
    return "\n".join(lines) + "\n"


def spice_deck(model: ModelSpec, mode: Mode, *, scenario: str = "steady",
               voltage: float | None = None, source_impedance: float | None = None,
               capacitance: float | None = None, duration: float | None = None,
               state: State = COLD, control: bool = True) -> str:
    """``withstand model spice KEY --mode MODE``: the model's front end in ``mode`` as a SPICE
    deck. ``voltage`` defaults to the mode's ``max_input`` (else 1000 V). Raises
    :class:`~registry.engine.network.netlist.NetworkError` when the mode has no path in the
    front end."""
    net = build_netlist(model, mode)
    if voltage is None:
        voltage = mode.max_input if mode.max_input else DEFAULT_VOLTAGE
    title = (f"{model.key} front end, mode {mode.key}, {scenario} at {_num(voltage)} V"
             + (f" behind {_num(source_impedance)} ohm" if source_impedance else ""))
    return netlist_deck(net, title=title, scenario=scenario, voltage=voltage,
                        source_impedance=source_impedance, capacitance=capacitance,
                        duration=duration, state=state, control=control)


def parse_op(output: str) -> dict[str, float]:
    """Node voltages from ngspice's ``print all`` after ``op``: lines "name = value"."""
    out = {}
    for m in re.finditer(r"^\s*([A-Za-z0-9_#]+)\s*=\s*([-+0-9.eE]+)\s*$", output, re.M):
        out[m.group(1).lower()] = float(m.group(2))
    return out


def parse_print_table(output: str) -> list[tuple[float, float]]:
    """(time, value) rows from ngspice's ``print v(x)`` after ``tran``."""
    rows = []
    for m in re.finditer(r"^\s*\d+\s+([-+0-9.eE]+)\s+([-+0-9.eE]+)\s*$", output, re.M):
        t, v = float(m.group(1)), float(m.group(2))
        if math.isfinite(t) and math.isfinite(v):
            rows.append((t, v))
    return rows
