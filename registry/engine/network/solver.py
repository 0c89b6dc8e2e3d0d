"""Modified nodal analysis with a damped Newton iteration for the clamps.

Unknowns: the voltage of every node but the reference, and the current of every zero-volt or
fixed-voltage branch (the source, closed switches, intact fuses, arcing gas tubes). Linear
elements are stamped as conductances; a varistor or TVS is linearised at its present voltage
(companion model I = I_k + g_k (V - V_k)). The Newton step is damped by limiting how far a
clamp's current may grow in one step (the voltage is taken from the linearised current through
the inverse law, as circuit simulators limit junction voltages), and falls back on source
stepping if that does not converge. Source: the MNA formulation of Ho, Ruehli and Brennan
(IEEE Trans. Circuits Syst., 1975) and the junction-limiting Newton of SPICE (Nagel, 1975).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from .devices import I_REF, PowerLaw
from .netlist import OPEN_RESISTANCE, Netlist, NetworkError, SolveFailed, clamp_law

GMIN = 1.0 / OPEN_RESISTANCE  # S, from every node to the reference, and across each clamp
RELTOL = 1e-9
VABSTOL = 1e-9  # V
IABSTOL = 1e-12  # A
MAXITER = 300


@dataclass(frozen=True)
class State:
    """What the scenario decides about the elements whose state changes.

    ``ptc``: (id, resistance) for PTCs not at their cold resistance (tripped). ``arcs``: (id,
    signed arc voltage) for gas tubes that have fired; the sign is that of the voltage that
    fired them. ``blown``: fuses that have opened."""

    ptc: tuple[tuple[str, float], ...] = ()
    arcs: tuple[tuple[str, float], ...] = ()
    blown: frozenset[str] = frozenset()

    def ptc_resistance(self, id: str) -> float | None:
        return dict(self.ptc).get(id)

    @property
    def fired(self) -> frozenset[str]:
        return frozenset(i for i, _ in self.arcs)

    def with_ptc(self, id: str, r: float) -> State:
        d = dict(self.ptc)
        d[id] = r
        return State(tuple(sorted(d.items())), self.arcs, self.blown)

    def with_arc(self, id: str, v: float | None) -> State:
        d = dict(self.arcs)
        if v is None:
            d.pop(id, None)
        else:
            d[id] = v
        return State(self.ptc, tuple(sorted(d.items())), self.blown)

    def with_blown(self, id: str) -> State:
        return State(self.ptc, self.arcs, self.blown | {id})


COLD = State()


@dataclass(eq=False)  # hashed by identity: one per (netlist, state) from the cache
class _Compiled:
    """A netlist in one state, reduced to index lists for fast stamping."""

    index: dict[str, int]  # node -> row; the reference is row ``ground``
    ground: int
    n_nodes: int  # rows of node equations (without the reference)
    conductances: list[tuple[str, int, int, float]]  # (id, a, b, G)
    clamps: list[tuple[str, int, int, PowerLaw]]
    branches: list[tuple[str, int, int, float]]  # (id, a, b, E): v_a - v_b = E
    src: int  # row of the source node (the driven terminal, or the node behind Rs)
    drive: int

    @property
    def clamp_rows(self):
        n = self.n_nodes
        return [(a if a < n else None, b if b < n else None, law)
                for _, a, b, law in self.clamps]


def _resistance(net: Netlist, e, state: State) -> float | None:
    if e.type == "ptc":
        r = state.ptc_resistance(e.id)
        return e.get("resistance") if r is None else r
    if e.type in ("resistor", "input"):
        return e.get("resistance")
    return None


@lru_cache(maxsize=4096)
def _compile(net: Netlist, state: State, with_rs: bool) -> _Compiled:
    nodes = list(net.nodes)
    if with_rs:
        nodes.append("\0source")  # behind the source impedance; no element can name it
    index = {n: i for i, n in enumerate(nodes)}
    ground = len(nodes)
    index[net.ret] = ground
    conductances, clamps, branches = [], [], []
    for e in net.elements:
        a, b = index[e.between[0]], index[e.between[1]]
        if e.type in ("resistor", "input", "ptc"):
            r = _resistance(net, e, state)
            if r is None:
                if e.type == "input":
                    continue  # solved as open (noted by the analysis)
                raise NetworkError(f"{e.id} has no resistance: the front end cannot be solved")
            if r <= 0:
                branches.append((e.id, a, b, 0.0))
            else:
                conductances.append((e.id, a, b, 1.0 / r))
        elif e.type in ("varistor", "tvs"):
            law = clamp_law(e)
            if law is not None:
                clamps.append((e.id, a, b, law))
        elif e.type == "switch":
            if net.is_closed(e):
                branches.append((e.id, a, b, 0.0))
        elif e.type == "fuse":
            if e.id not in state.blown:
                branches.append((e.id, a, b, 0.0))
        elif e.type == "gas-tube":
            arcs = dict(state.arcs)
            if e.id in arcs:
                branches.append((e.id, a, b, arcs[e.id]))
    src = index["\0source"] if with_rs else index[net.drive]
    return _Compiled(index, ground, len(nodes), conductances, clamps, branches, src,
                     index[net.drive])


@dataclass
class Solution:
    """Node voltages and element stresses of one solve (V, A, W)."""

    node_voltage: dict[str, float]
    voltage: dict[str, float]  # element id -> v(a) - v(b)
    current: dict[str, float]  # element id -> current from a to b through it
    source_current: float  # A delivered by the source
    iterations: int
    raw: tuple = field(default=(), repr=False)  # for a warm start

    def power(self, id: str) -> float:
        return abs(self.voltage[id] * self.current[id])


def _limit(law: PowerLaw, v_new: float, v_old: float) -> float:
    """Damping: let a clamp's current grow at most to what its linearisation at ``v_old``
    predicts for ``v_new`` (and to at least twice its present current or 1 mA), reading the
    voltage back from the inverse law."""
    i_new = law.current(v_new)
    i_old = law.current(v_old)
    cap = 2.0 * max(abs(i_old), I_REF)
    if abs(i_new) <= cap:
        return v_new
    i_lin = i_old + max(law.conductance(v_old), GMIN) * (v_new - v_old)
    if i_lin * v_new > 0 and abs(i_lin) > cap:
        return law.voltage(i_lin)
    return math.copysign(law.voltage(cap), v_new)


@lru_cache(maxsize=4096)
def _matrix(c: _Compiled, rs: float):
    """The linear part of the MNA system (without the source value), reference row dropped.

    Rows: nodes 0..n-1, then one per branch, the source last."""
    n = c.n_nodes
    allb = c.branches + [("\0vs", c.src, c.ground, 0.0)]
    size = n + 1 + len(allb)  # the reference row sits at index n and is dropped below
    A = np.zeros((size, size))
    for i in range(n):
        A[i, i] += GMIN
    stamps = [(a, b, g) for _, a, b, g in c.conductances]
    if rs > 0:
        stamps.append((c.src, c.drive, 1.0 / rs))
    for a, b, g in stamps:
        A[a, a] += g
        A[b, b] += g
        A[a, b] -= g
        A[b, a] -= g
    b0 = np.zeros(size)
    for k, (_, a, b, e) in enumerate(allb):
        r = n + 1 + k
        A[a, r] += 1.0
        A[b, r] -= 1.0
        A[r, a] += 1.0
        A[r, b] -= 1.0
        b0[r] = e
    keep = [i for i in range(size) if i != n]
    A = A[np.ix_(keep, keep)]
    A.setflags(write=False)
    b0 = b0[keep]
    b0.setflags(write=False)
    return A, b0


def _newton(c: _Compiled, vs: float, rs: float, guess):
    A0, b0 = _matrix(c, rs)
    b0 = b0.copy()
    b0[-1] = vs
    size = len(b0) + 1
    # after dropping the reference row, node k keeps index k (k < c.n_nodes)
    clamps = c.clamp_rows

    x = np.zeros(size - 1) if guess is None else guess[0].copy()
    vcl = [0.0] * len(clamps) if guess is None else list(guess[1])

    def diff(xv, a, b):
        return (xv[a] if a is not None else 0.0) - (xv[b] if b is not None else 0.0)

    for it in range(1, MAXITER + 1):
        A = A0.copy()
        rhs = b0.copy()
        lin = []
        for k, (a, b, law) in enumerate(clamps):
            v = vcl[k]
            i = law.current(v)
            g = law.conductance(v) + GMIN
            ieq = i - g * v
            lin.append((i, g, v))
            if a is not None:
                A[a, a] += g
                rhs[a] -= ieq
            if b is not None:
                A[b, b] += g
                rhs[b] += ieq
            if a is not None and b is not None:
                A[a, b] -= g
                A[b, a] -= g
        try:
            x_new = np.linalg.solve(A, rhs)
        except np.linalg.LinAlgError:
            raise SolveFailed("the network is singular in this state (a loop of closed "
                               "switches and fuses across a stiff source)") from None
        if not np.all(np.isfinite(x_new)):
            raise SolveFailed("the solve overflowed")
        done = bool(np.all(np.abs(x_new - x) <= RELTOL * np.abs(x_new) + VABSTOL)) or it == 1 \
            and not clamps
        new_vcl = []
        for k, (a, b, law) in enumerate(clamps):
            vp = diff(x_new, a, b)
            vl = _limit(law, vp, vcl[k])
            if vl != vp:
                done = False
            i_k, g_k, v_k = lin[k]
            i_true = law.current(vp)
            i_lin = i_k + (g_k - GMIN) * (vp - v_k)
            if abs(i_true - i_lin) > 1e-7 * max(abs(i_true), abs(i_lin)) + IABSTOL:
                done = False
            new_vcl.append(vl)
        x = x_new
        vcl = new_vcl
        if done:
            return x, vcl, it
    return None


def solve(net: Netlist, vs: float, rs: float | None = None, state: State = COLD,
          guess: Solution | None = None) -> Solution:
    """Solve ``net`` driven by ``vs`` (V) behind ``rs`` (ohm; None or 0 is a stiff source)
    with the elements in ``state``. Raises :class:`SolveFailed` (a :class:`NetworkError`) if
    it cannot converge or the matrix is singular."""
    rs = rs or 0.0
    c = _compile(net, state, rs > 0)
    g = guess.raw if guess is not None and guess.raw and guess.raw[2] is c else None
    out = _newton(c, vs, rs, g)
    if out is None:
        # Source stepping: approach the full source voltage from below.
        g = None
        for frac in (0.1, 0.2, 0.35, 0.5, 0.65, 0.8, 0.9, 1.0):
            out = _newton(c, vs * frac, rs, g)
            if out is None:
                raise SolveFailed(f"the solve did not converge at {vs * frac:.4g} V")
            g = out[:2]
    x, vcl, iters = out
    return _solution(net, c, x, vcl, iters, vs, rs)


def _solution(net: Netlist, c: _Compiled, x, vcl, iters, vs, rs) -> Solution:
    n = c.n_nodes

    def nv(i):
        return 0.0 if i == c.ground else float(x[i])

    node_voltage = {name: nv(i) for name, i in c.index.items() if not name.startswith("\0")}
    voltage, current = {}, {}
    for e in net.elements:
        a, b = c.index[e.between[0]], c.index[e.between[1]]
        voltage[e.id] = nv(a) - nv(b)
        current[e.id] = 0.0
    for id, _, _, g in c.conductances:
        current[id] = g * voltage[id]
    for id, _, _, law in c.clamps:
        current[id] = law.current(voltage[id])
    for k, (id, _, _, _) in enumerate(c.branches):
        current[id] = float(x[n + k])
    src_i = -float(x[n + len(c.branches)])
    return Solution(node_voltage, voltage, current, src_i, iters, (x, vcl, c))
