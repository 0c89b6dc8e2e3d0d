"""The front end of a model in one mode, drawn as a ladder (SVG, schemdraw's own SVG backend).

The driven terminal sits at the left of the top rail, the return terminal (COM) is the bottom
bus. Series elements lie on the rail from node to node; an element to the return hangs from its
node as a rung. A series element that does not continue the rail from one column to the next
(a branch, or a parallel path) is drawn as a bridge above the rail. Switches are drawn open or
closed as the mode sets them. Marked elements get a symbol and a text label (not colour alone).
"""

from __future__ import annotations


import schemdraw
import schemdraw.elements as elm

from .engine.network import NetworkError, build_netlist
from .engine.quantity import (CURRENT, LENGTH, RESISTANCE, VOLTAGE, format_quantity)
from .engine.spec import Mode, ModelSpec

schemdraw.use("svg")

COLUMN = 3.0  # drawing units between columns
RUNG = 3.0  # rail to bus
BRIDGE = 1.6  # height of each bridge level above the rail
FAIL_SYMBOL = "✖"
MARK_SYMBOL = "▲"


def _summary(e) -> str:
    """A short value text for the element's label."""
    g = e.get
    if e.type in ("resistor", "input", "ptc") and g("resistance") is not None:
        return format_quantity(g("resistance"), RESISTANCE, 3)
    if e.type == "varistor" and g("varistor_voltage") is not None:
        return format_quantity(g("varistor_voltage"), VOLTAGE, 3)
    if e.type == "tvs" and g("breakdown_voltage") is not None:
        return format_quantity(g("breakdown_voltage"), VOLTAGE, 3)
    if e.type == "fuse" and g("current") is not None:
        return format_quantity(g("current"), CURRENT, 3)
    if e.type == "switch":
        if g("gap") is not None:
            return f"gap {format_quantity(g('gap'), LENGTH, 3)}"
        if g("withstand") is not None:
            return format_quantity(g("withstand"), VOLTAGE, 3)
    if e.type == "gas-tube" and g("sparkover_dc") is not None:
        return format_quantity(g("sparkover_dc"), VOLTAGE, 3)
    return ""


def _symbol(e, closed: bool):
    if e.type == "resistor":
        return elm.Resistor()
    if e.type == "ptc":
        return elm.Thermistor()
    if e.type == "varistor":
        return elm.ResistorVar()
    if e.type == "tvs":
        return elm.DiodeTVS()
    if e.type == "gas-tube":
        return elm.SparkGap()
    if e.type == "fuse":
        return elm.Fuse()
    if e.type == "input":
        return elm.RBox()
    if e.type == "switch":
        return elm.Line() if closed else elm.Switch()
    return elm.Line()


def _layout(net):
    """Columns of the rail: (node order, rail edges, other series edges, shunts per node,
    elements off the path)."""
    ret = net.ret
    series = [e for e in net.elements if ret not in e.between]
    shunts: dict[str, list] = {}
    for e in net.elements:
        if ret in e.between:
            node = e.between[0] if e.between[1] == ret else e.between[1]
            shunts.setdefault(node, []).append(e)
    # Depth-first from the driven terminal, so that a chain stays on the rail.
    order, rail, used = [], [], set()
    seen = {net.drive}
    stack = [net.drive]
    adjacency: dict[str, list] = {}
    for e in series:
        a, b = e.between
        adjacency.setdefault(a, []).append((e, b))
        adjacency.setdefault(b, []).append((e, a))
    while stack:
        n = stack.pop()
        order.append(n)
        nxt = [(e, m) for e, m in adjacency.get(n, []) if m not in seen]
        for e, m in reversed(nxt):
            if m not in seen:
                seen.add(m)
                stack.append(m)
                used.add(e.id)
    parent_edge = {}
    for e in series:
        if e.id in used:
            a, b = e.between
            parent_edge[(a, b)] = parent_edge[(b, a)] = e
    reach = set(order)
    # rail: the edge between consecutive columns; others become bridges
    rail_ids = set()
    for i in range(len(order) - 1):
        e = parent_edge.get((order[i], order[i + 1]))
        if e is not None:
            rail.append((i, e))
            rail_ids.add(e.id)
    bridges = [e for e in series if e.id not in rail_ids and set(e.between) <= reach]
    off = [e for e in net.elements
           if e.id not in rail_ids and e not in bridges
           and not (ret in e.between and (set(e.between) - {ret}) <= reach)]
    return order, rail, bridges, shunts, off


def front_end_svg(model: ModelSpec, mode: Mode, marks: dict[str, str] | None = None) -> str:
    """SVG of ``model``'s front end in ``mode``: a ladder from the mode's first terminal to its
    return; ``marks`` maps element ids to a label (e.g. from
    :func:`registry.engine.network.drawing_marks`), drawn with a symbol beside the element.
    Raises :class:`~registry.engine.network.NetworkError` if the mode has no path in it."""
    marks = marks or {}
    net = build_netlist(model, mode)
    order, rail, bridges, shunts, off = _layout(net)
    # columns: each node takes as many columns as it has rungs (at least one)
    col_of: dict[str, tuple[float, float]] = {}
    x = 0.0
    for n in order:
        k = max(1, len(shunts.get(n, [])))
        col_of[n] = (x, x + COLUMN * (k - 1))
        x += COLUMN * k
    d = schemdraw.Drawing(show=False)
    d.config(fontsize=11)
    legend: list[str] = []
    bus_y = -RUNG

    def place(e, start, end, label_loc="top"):
        closed = net.is_closed(e)
        sym = _symbol(e, closed).endpoints(start, end)
        state = " (closed)" if closed else " (open)" if e.type == "switch" else ""
        text = f"{e.id}{state}"
        val = _summary(e)
        if val:
            text += f"\n{val}"
        mark = marks.get(e.id)
        if mark:
            # the symbol goes on the element's own label; the words go in the legend below,
            # where long texts cannot run into the neighbouring rungs
            failed = mark.lower().startswith("fail")
            symbol = FAIL_SYMBOL if failed else MARK_SYMBOL
            text = f"{symbol} {text}"
            sym = sym.color("#b00020" if failed else "#8a5a00")
            legend.append(f"{symbol} {e.id}: {mark}")
        sym = sym.label(text, loc=label_loc)
        d.add(sym)
        if closed:
            d.add(elm.Dot().at(start))
            d.add(elm.Dot().at(end))

    # rail segments within a node's own columns, and rungs
    for n in order:
        x0, x1 = col_of[n]
        if x1 > x0:
            d.add(elm.Line().endpoints((x0, 0), (x1, 0)))
        for k, e in enumerate(shunts.get(n, [])):
            cx = x0 + COLUMN * k
            a, b = e.between
            start, end = ((cx, 0), (cx, bus_y)) if b == net.ret else ((cx, bus_y), (cx, 0))
            place(e, start, end, label_loc="right" if e.type != "switch" else "left")
        if not shunts.get(n):
            # a node without a rung still shows where it is
            d.add(elm.Dot().at((x0, 0)))
    for i, e in rail:
        a, b = order[i], order[i + 1]
        start = (col_of[a][1], 0)
        end = (col_of[b][0], 0)
        if e.between[0] != a:
            start, end = end, start
        place(e, start, end)
    for level, e in enumerate(bridges, start=1):
        a, b = e.between
        y = BRIDGE * level
        xa, xb = col_of[a][0], col_of[b][0]
        d.add(elm.Line().endpoints((xa, 0), (xa, y)))
        d.add(elm.Line().endpoints((xb, y), (xb, 0)))
        place(e, (xa, y), (xb, y))
    # the return bus and the terminals
    right = max(x - COLUMN, 0.0)
    d.add(elm.Line().endpoints((0, bus_y), (right, bus_y)))
    d.add(elm.Line().endpoints((-COLUMN / 2, 0), (0, 0)))
    d.add(elm.Line().endpoints((-COLUMN / 2, bus_y), (0, bus_y)))
    d.add(elm.Dot(open=True).at((-COLUMN / 2, 0)).label(net.drive, loc="left"))
    d.add(elm.Dot(open=True).at((-COLUMN / 2, bus_y)).label(net.ret, loc="left"))
    title = f"{model.key}, mode {mode.key}"
    if mode.closes:
        title += f" (closes {', '.join(mode.closes)})"
    d.add(elm.Label().at((right / 2, bus_y - 1.2)).label(title, fontsize=11))
    below = bus_y - 2.0
    if off:
        d.add(elm.Label().at((right / 2, below)).label(
            "not on this mode's path: " + ", ".join(
                f"{e.id} ({e.between[0]}–{e.between[1]})" for e in off), fontsize=9))
        below -= 0.8
    for line in legend:
        d.add(elm.Label().at((-COLUMN / 2, below)).label(line, fontsize=10, halign="left"))
        below -= 0.7
    svg = d.get_imagedata("svg")
    return svg.decode("utf-8") if isinstance(svg, bytes) else svg


__all__ = ["front_end_svg", "NetworkError"]
