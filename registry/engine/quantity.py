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
