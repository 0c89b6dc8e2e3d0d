"""Quantities at the edges: the package's one pint registry.

Text that people type ("2 kV", "4.7 uF", "3 kohm", "2000 m") becomes an SI float in the
canonical unit of its dimension, and SI floats become readable text again. Nothing inside
``registry/engine/`` imports this module: the engine works on floats only.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import pint

from .engine.quantity import (  # noqa: F401  (re-exported for the edges)
    CAPACITANCE, CURRENT, DIMENSIONS, ENERGY, FREQUENCY, I2T, LENGTH, POWER, RESISTANCE, TIME,
    VOLTAGE, Dimension, format_quantity)
from .errors import InvalidInput

ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
# Spellings the trade writes that pint does not know by itself.
ureg.define("Mohm = 1e6 * ohm")
ureg.define("kohm = 1e3 * ohm")
ureg.define("mohm = 1e-3 * ohm")


_MICRO = re.compile(r"(?<![A-Za-z])u(?=[A-Za-z])")
_OHM_SIGNS = {"Ω": "ohm", "Ω": "ohm"}


def _normalise(text: str) -> str:
    text = text.strip().replace("µ", "u").replace("μ", "u")
    for sign, word in _OHM_SIGNS.items():
        text = text.replace(sign, "ohm")
    text = text.replace("Ohm", "ohm").replace("ohms", "ohm")
    # "4.7uF" and "4.7 uF" both mean micro; pint reads "u" as micro already, but a stray
    # space between a prefix and its unit ("4.7 k ohm") is not something we guess at.
    return _MICRO.sub("u", text)


def _dimensionality(dim: Dimension):
    return ureg.Quantity(1, dim.unit).dimensionality


def _describe(dimensionality) -> str:
    for dim in DIMENSIONS:
        if _dimensionality(dim) == dimensionality:
            return f"{dim.article} {dim.name}"
    if not dimensionality:
        return "a bare number"
    return f"a quantity of {dimensionality}"


def parse_quantity(value, dim: Dimension, field: str = "", *, default_unit: str | None = None,
                   allow_negative: bool = False, allow_zero: bool = True) -> float:
    """Parse ``value`` (text, or a number where ``default_unit`` is documented) into SI.

    Raises :class:`InvalidInput` naming ``field`` for empty or garbage text, a wrong dimension
    ("'2 kA' is a current; this field needs a voltage"), a bare number without a documented
    default unit, a negative, zero (when not allowed) or non-finite value.
    """
    if value is None or (isinstance(value, str) and not value.strip()):
        raise InvalidInput(f"is empty; give {dim.article} {dim.name} such as "
                           f"'{example_text(dim)}'", field)
    if isinstance(value, bool):
        raise InvalidInput(f"'{value}' is not {dim.article} {dim.name}", field)
    if isinstance(value, (int, float)):
        if default_unit is None:
            raise InvalidInput(f"'{value}' has no unit; write it with one, such as "
                               f"'{example_text(dim)}'", field)
        text = f"{value!r} {default_unit}"
        shown = str(value)
    elif isinstance(value, str):
        text = _normalise(value)
        shown = value.strip()
    else:
        raise InvalidInput(f"must be text such as '{example_text(dim)}', not {type(value).__name__}",
                           field)
    try:
        q = ureg.Quantity(text)
        float(getattr(q, "magnitude", q))  # an integer past a double's range: OverflowError
    except Exception:
        raise InvalidInput(f"'{shown}' is not a quantity this field understands; "
                           f"write {dim.article} {dim.name} such as '{example_text(dim)}'", field) \
            from None
    if not isinstance(q, ureg.Quantity):
        q = ureg.Quantity(q, "")
    if q.dimensionless and not isinstance(value, (int, float)):
        if default_unit is None:
            raise InvalidInput(f"'{shown}' has no unit; write it with one, such as "
                               f"'{example_text(dim)}'", field)
        q = ureg.Quantity(q.magnitude, default_unit)
    if q.dimensionality != _dimensionality(dim):
        raise InvalidInput(f"'{shown}' is {_describe(q.dimensionality)}; this field needs "
                           f"{dim.article} {dim.name}", field)
    si = float(q.to(dim.unit).magnitude)
    if not math.isfinite(si):
        raise InvalidInput(f"'{shown}' is not a finite {dim.name}", field)
    if si < 0 and not allow_negative:
        raise InvalidInput(f"'{shown}' is negative; {dim.article} {dim.name} here cannot be",
                           field)
    if si == 0 and not allow_zero:
        raise InvalidInput(f"'{shown}' is zero; this {dim.name} must be more than zero", field)
    return si


_EXAMPLES = {"voltage": "600 V", "current": "10 A", "resistance": "10 Mohm",
             "capacitance": "470 uF", "energy": "10 J", "power": "2 W", "duration": "60 s",
             "length": "2000 m", "frequency": "50 Hz", "I²t": "300 A^2*s"}


def example_text(dim: Dimension) -> str:
    return _EXAMPLES[dim.name]


