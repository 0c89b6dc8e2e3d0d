"""Dimensions and the readable form of SI floats, without pint.

The engine writes its findings' numbers with :func:`format_quantity`; the edges parse text with
``registry.units`` (pint), which re-exports these names so there is one formatter.
"""

from __future__ import annotations

import math
from dataclasses import dataclass


@dataclass(frozen=True)
class Dimension:
    """What a field holds: its name in messages and its canonical SI unit."""

    name: str
    unit: str
    article: str = "a"


VOLTAGE = Dimension("voltage", "V")
CURRENT = Dimension("current", "A")
RESISTANCE = Dimension("resistance", "ohm")
CAPACITANCE = Dimension("capacitance", "F")
ENERGY = Dimension("energy", "J", "an")
POWER = Dimension("power", "W")
TIME = Dimension("duration", "s")
LENGTH = Dimension("length", "m")
FREQUENCY = Dimension("frequency", "Hz")
I2T = Dimension("I²t", "A**2 * s", "an")

DIMENSIONS = (VOLTAGE, CURRENT, RESISTANCE, CAPACITANCE, ENERGY, POWER, TIME, LENGTH,
              FREQUENCY, I2T)

# Prefixes used when formatting, by the canonical unit's symbol. Length uses m and mm only,
# since altitudes and contact gaps are what the package shows.
_PREFIXES = [(1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "u"),
             (1e-9, "n"), (1e-12, "p")]
_SYMBOL = {"ohm": "ohm", "A**2 * s": "A²s"}


def format_quantity(value: float | None, dim: Dimension, digits: int = 4) -> str:
    """An SI float as text people read: ``format_quantity(2000, VOLTAGE) == '2 kV'``.

    The text parses back to the same value to ``digits`` significant figures.
    """
    if value is None:
        return ""
    if not math.isfinite(value):
        return f"{value} {dim.unit}"
    symbol = _SYMBOL.get(dim.unit, dim.unit)
    if dim is LENGTH:
        scale, prefix = (1e-3, "m") if 0 < abs(value) < 1 else (1.0, "")
    elif dim is TIME or dim is I2T:
        scale, prefix = next(((s, p) for s, p in _PREFIXES if s <= 1 and abs(value) >= s),
                             (1.0, "")) if 0 < abs(value) < 1 else (1.0, "")
    elif dim is RESISTANCE and abs(value) < 1000:
        # "500 mohm" reads too much like megohms on a bench: small resistances stay in ohms.
        scale, prefix = 1.0, ""
    else:
        scale, prefix = 1.0, ""
        if value != 0:
            for s, p in _PREFIXES:
                if abs(value) >= s * 0.9999999:
                    scale, prefix = s, p
                    break
            else:
                scale, prefix = _PREFIXES[-1]
    number = f"{value / scale:.{digits}g}"
    if "e" in number:
        number = f"{value / scale:.{digits}f}".rstrip("0").rstrip(".")
    return f"{number} {prefix}{symbol}"


# -- the range each quantity may take ------------------------------------------------------------
#
# The one table of bounds: every quantity the package takes (files, plans, the CLI, the web
# forms and the API through ``registry.units.parse_quantity``; the spec dataclasses through
# :func:`bound_problem`) is zero or has a magnitude between ``smallest`` and ``largest`` of its
# dimension, or of its field where :data:`FIELD_BOUNDS` names the field. The smallest values
# keep every product and quotient the engine forms finite (the largest magnitude is 1e15 and
# the smallest 1e-18, so a quotient of two stays below 1e33 and a product of three below
# 1e45); they are far below any instrument's resolution. Lengths (altitudes, gaps, tips) are
# only looked up in tables, never divided by, so they have no smallest value.


@dataclass(frozen=True)
class Bound:
    """The magnitudes a field takes: zero (where the field allows it) or from ``smallest`` to
    ``largest`` in the canonical SI unit; ``reason`` says where the limit comes from."""

    smallest: float
    largest: float
    reason: str


DIMENSION_BOUNDS: dict[str, Bound] = {
    "voltage": Bound(1e-9, 10e6,
                     "10 MV: above the highest ac transmission voltages (1.2 MV) and their "
                     "lightning impulse test levels (about 2.4 MV); common practice (no source)"),
    "current": Bound(1e-15, 1e6,
                     "1 MA: above lightning stroke currents (a few hundred kA) and the "
                     "breaking capacity of any fuse (tens of kA); common practice (no source)"),
    "resistance": Bound(1e-9, 1e15,
                        "1 Pohm: above the range of insulation testers (tens of Tohm); 1 nohm is "
                        "below micro-ohmmeter resolution; common practice (no source)"),
    "capacitance": Bound(1e-18, 1e4,
                         "10 kF: above the largest supercapacitor cells (about 3000 F); common "
                         "practice (no source)"),
    "energy": Bound(1e-12, 1e9,
                    "1 GJ: above the largest pulsed-power capacitor banks (hundreds of MJ); "
                    "common practice (no source)"),
    "power": Bound(1e-12, 1e10,
                   "10 GW: above the peak pulse power of any protection element or event "
                   "(TVS diodes: kW to MW); common practice (no source)"),
    "duration": Bound(1e-15, 1e8,
                      "1e8 s (about 3 years): longer than any connection, stress or trip time "
                      "of a job; common practice (no source)"),
    "length": Bound(0.0, 20e3,
                    "20 km: the last row of the altitude correction table (IEC 60664-1 Table "
                    "A.2); no site or gap is larger"),
    "frequency": Bound(1e-6, 1e10,
                       "10 GHz: above the bandwidth of any bench instrument; common practice "
                       "(no source)"),
    "I²t": Bound(1e-12, 1e9,
                 "1e9 A²s: above the I²t of the largest industrial fuses (about 1e8 A²s); "
                 "common practice (no source)"),
}

# Fields narrower than their dimension, by the field's own name (the last part of its path:
# ``models[0].tip_exposure`` and ``--tip-exposure`` are both ``tip_exposure``).
FIELD_BOUNDS: dict[str, Bound] = {
    "altitude": Bound(0.0, 20e3, "20 000 m: the last row of IEC 60664-1 Table A.2"),
    "max_altitude": Bound(0.0, 20e3, "20 000 m: the last row of IEC 60664-1 Table A.2"),
    "tip_exposure": Bound(0.0, 0.1,
                          "100 mm: far above the exposed tips of IEC 61010-031 probes (4 mm "
                          "and 19 mm, from memory); common practice (no source)"),
    "gap": Bound(0.0, 1.0,
                 "1 m: far above the largest clearance of IEC 60664-1 Table F.2 (hundreds of "
                 "mm for 100 kV and more, from memory); common practice (no source)"),
    "attenuation": Bound(1.0, 1e7,
                         "10 000 000:1: above any high-voltage divider's ratio (1000:1 to "
                         "100 000:1); common practice (no source)"),
}


def field_name(field: str) -> str:
    """The last part of a field path, as :data:`FIELD_BOUNDS` names it:
    ``models[2].modes[1].max_input`` -> ``max_input``, ``--source-impedance`` ->
    ``source_impedance``."""
    last = field.rsplit(".", 1)[-1]
    last = last.split("[", 1)[0] if not last.startswith("[") else ""
    return last.lstrip("-").replace("-", "_").lower()


def bound_for(dim: Dimension | str, field: str = "") -> Bound:
    """The bound of a field: its own entry in :data:`FIELD_BOUNDS`, else its dimension's."""
    name = dim if isinstance(dim, str) else dim.name
    own = FIELD_BOUNDS.get(field_name(field))
    return own if own is not None else DIMENSION_BOUNDS[name]


def bound_problem(value: float, dim: Dimension | str, field: str = "") -> str | None:
    """What is wrong with ``value`` (SI) for the field, or ``None`` when it is within its
    bound (zero and the sign are the caller's rules)."""
    if not isinstance(value, (int, float)) or isinstance(value, bool):
        return f"must be a number in SI units, not {value!r}"
    if not math.isfinite(value):
        return "is not a finite number"
    bound = bound_for(dim, field)
    name = dim if isinstance(dim, str) else dim.name
    d = next((x for x in DIMENSIONS if x.name == name), None)
    unit = f" {_SYMBOL.get(d.unit, d.unit)}" if d is not None else ""
    size = abs(value)
    if size > bound.largest:
        shown = format_quantity(bound.largest, d) if d is not None else f"{bound.largest:g}"
        return f"is more than {shown}, the most this field takes"
    if 0 < size < bound.smallest:
        return (f"is less than {bound.smallest:g}{unit}, the least this field takes other "
                "than zero")
    return None
