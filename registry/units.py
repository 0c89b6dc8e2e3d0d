"""Quantities at the edges: the package's one pint registry.

Text that people type ("2 kV", "4.7 uF", "3 kohm", "2000 m") becomes an SI float in the
canonical unit of its dimension, and SI floats become readable text again. Nothing inside
``registry/engine/`` imports this module: the engine works on floats only.
"""

from __future__ import annotations

import functools
import math
import re
from pathlib import Path
from typing import TYPE_CHECKING

import platformdirs

from .engine.quantity import (  # noqa: F401  (re-exported for the edges)
    CAPACITANCE, CURRENT, DIMENSIONS, ENERGY, FREQUENCY, I2T, LENGTH, POWER, RESISTANCE, TIME,
    VOLTAGE, Dimension, bound_for, bound_problem, format_quantity)
from .errors import InvalidInput, shown

if TYPE_CHECKING:
    import pint

# Spellings the trade writes that pint does not know by itself.
_OUR_DEFINITIONS = ("Mohm = 1e6 * ohm", "kohm = 1e3 * ohm", "mohm = 1e-3 * ohm")


@functools.cache
def registry() -> pint.UnitRegistry:
    """The package's one pint registry, built when a text first needs a unit.

    Building pint's default registry parses its whole definitions file (about 0.2 s, most of a
    short command's start-up), so pint is asked to keep the parsed definitions in this user's
    cache folder (one folder per pint version, readable by the user only) and reads them back in
    a few milliseconds. Those files only spare the parse: should one be unreadable (another
    process writing it at that moment, a disk fault), the registry is built from the
    definitions file as before.
    """
    import pint  # here, not at the top: a command that reads no unit text does not load pint
    try:
        folder = _cache_folder(pint.__version__)
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=folder)
    except Exception:  # noqa: BLE001  (any fault of the cache: parse the definitions instead)
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    for line in _OUR_DEFINITIONS:
        ureg.define(line)
    return ureg


def _cache_folder(version: str) -> Path:
    folder = Path(platformdirs.user_cache_dir("withstand")) / f"pint-{version}"
    folder.mkdir(mode=0o700, parents=True, exist_ok=True)
    return folder


_MICRO = re.compile(r"(?<![A-Za-z])u(?=[A-Za-z])")
# GREEK CAPITAL LETTER OMEGA and OHM SIGN (U+2126, which Unicode makes canonically equivalent
# to it, so an editor that normalises text turns one into the other: hence the escapes)
_OHM_SIGNS = ("\u03a9", "\u2126")


def _normalise(text: str) -> str:
    text = text.strip().replace("µ", "u").replace("μ", "u")
    for sign in _OHM_SIGNS:
        text = text.replace(sign, "ohm")
    text = text.replace("Ohm", "ohm").replace("ohms", "ohm")
    # "4.7uF" and "4.7 uF" both mean micro; pint reads "u" as micro already, but a stray
    # space between a prefix and its unit ("4.7 k ohm") is not something we guess at.
    return _MICRO.sub("u", text)


def _dimensionality(dim: Dimension):
    return _unit_dimensionality(dim.unit)


# A unit's dimensionality and its factor to a canonical unit, worked out by pint once per
# spelling (pint's parse is most of a fleet file's reading time otherwise). Every unit of the
# package's dimensions is multiplicative, so SI = magnitude x factor is pint's own conversion.
@functools.lru_cache(maxsize=1024)
def _unit_dimensionality(unit: str):
    ureg = registry()
    return ureg.Quantity(1.0, unit).dimensionality if unit else ureg.Quantity(1.0).dimensionality


@functools.lru_cache(maxsize=1024)
def _factor(unit: str, canonical: str) -> float:
    return float(registry().Quantity(1.0, unit).to(canonical).magnitude)


def _describe(dimensionality) -> str:
    for dim in DIMENSIONS:
        if _dimensionality(dim) == dimensionality:
            return f"{dim.article} {dim.name}"
    if not dimensionality:
        return "a bare number"
    return f"a quantity of {dimensionality}"


# What a quantity's text may be: one number (decimal, optionally with an exponent) and a
# unit. pint would evaluate any arithmetic ("10**400 V", "9**9**9 V"), which can overflow or
# run for hours, so the number is read here and pint sees only the unit, whose digits may only
# be short exponents (A^2*s, A**2 s).
_NUMBER = re.compile(r"\s*([-+]?(?:(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?"
                     r"|(?i:nan|inf(?:inity)?)(?![A-Za-z])))\s*(.*)", re.S)
_EXPONENT = re.compile(r"(?:\*\*|\^)\s*[-+]?[0-9]{1,2}(?![0-9])")
_UNIT_TEXT = re.compile(r"[A-Za-z_²³ */()]*")
MAX_QUANTITY_TEXT = 100  # characters; a unit and a number are never longer (no source)


def _split(text: str):
    """(magnitude, unit text) of a quantity's text, or ``None`` when it is not one number
    followed by a unit."""
    if len(text) > MAX_QUANTITY_TEXT:
        return None
    m = _NUMBER.fullmatch(text)
    if not m:
        return None
    unit = m.group(2).strip()
    bare = _EXPONENT.sub("", unit)
    if not _UNIT_TEXT.fullmatch(bare) or bare[:1] in ("*", "/") or \
            bare.rstrip()[-1:] in ("*", "/"):
        return None
    return float(m.group(1)), unit  # float() of a huge exponent is inf: refused below


def parse_quantity(value, dim: Dimension, field: str = "", *, default_unit: str | None = None,
                   allow_negative: bool = False, allow_zero: bool = True,
                   bound: str | None = None) -> float:
    """Parse ``value`` (text, or a number where ``default_unit`` is documented) into SI.

    Raises :class:`InvalidInput` naming ``field`` for empty or garbage text, a wrong dimension
    ("'2 kA' is a current; this field needs a voltage"), a bare number without a documented
    default unit, a negative, zero (when not allowed) or non-finite value, and a value outside
    the field's range (``engine.quantity.bound_for``: the field's own bound in
    ``FIELD_BOUNDS``, looked up by the last part of ``field`` or by ``bound`` when given,
    else the dimension's in ``DIMENSION_BOUNDS``).
    """
    if value is None or (isinstance(value, str) and not value.strip()):
        raise InvalidInput(f"is empty; give {dim.article} {dim.name} such as "
                           f"'{example_text(dim)}'", field)
    if isinstance(value, bool):
        raise InvalidInput(f"'{value}' is not {dim.article} {dim.name}", field)
    def not_understood() -> InvalidInput:  # built only when raised: most values are fine
        return InvalidInput(
            f"'{shown(value)}' is not a quantity this field understands; write {dim.article} "
            f"{dim.name} such as '{example_text(dim)}'", field)
    if isinstance(value, (int, float)):
        if default_unit is None:
            raise InvalidInput(f"'{shown(value)}' has no unit; write it with one, such as "
                               f"'{example_text(dim)}'", field)
        try:
            magnitude = float(value)
        except (OverflowError, ValueError):
            magnitude = math.inf
        unit, text = default_unit, shown(value)
    elif isinstance(value, str):
        parts = _split(_normalise(value))
        if parts is None:
            raise not_understood()
        magnitude, unit = parts
        text = shown(value.strip())
    else:
        raise InvalidInput(
            f"must be text such as '{example_text(dim)}', not {type(value).__name__}", field)
    if not math.isfinite(magnitude):
        raise InvalidInput(f"'{text}' is not a finite {dim.name}", field)
    try:
        dimensionality = _unit_dimensionality(unit)
    except Exception:
        raise not_understood() from None
    if not dimensionality and not isinstance(value, (int, float)):
        if default_unit is None:
            raise InvalidInput(f"'{text}' has no unit; write it with one, such as "
                               f"'{example_text(dim)}'", field)
        unit, dimensionality = default_unit, _unit_dimensionality(default_unit)
    if dimensionality != _dimensionality(dim):
        raise InvalidInput(f"'{text}' is {_describe(dimensionality)}; this field needs "
                           f"{dim.article} {dim.name}", field)
    si = magnitude * _factor(unit, dim.unit) + 0.0  # + 0.0: "-0 V" is 0, not -0
    if not math.isfinite(si):
        raise InvalidInput(f"'{text}' is not a finite {dim.name}", field)
    if si < 0 and not allow_negative:
        raise InvalidInput(f"'{text}' is negative; {dim.article} {dim.name} here cannot be",
                           field)
    if si == 0 and not allow_zero:
        raise InvalidInput(f"'{text}' is zero; this {dim.name} must be more than zero", field)
    problem = bound_problem(si, dim, field if bound is None else bound)
    if problem:
        raise InvalidInput(f"'{text}' {problem}", field)
    return si


_EXAMPLES = {"voltage": "600 V", "current": "10 A", "resistance": "10 Mohm",
             "capacitance": "470 uF", "energy": "10 J", "power": "2 W", "duration": "60 s",
             "length": "2000 m", "frequency": "50 Hz", "I²t": "300 A^2*s"}


def example_text(dim: Dimension) -> str:
    return _EXAMPLES[dim.name]


