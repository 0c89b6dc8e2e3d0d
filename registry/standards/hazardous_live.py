"""Hazardous-live levels: above these a touchable voltage counts as hazardous.

Pure: SI floats (V).
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class LiveLevels:
    rms: float   # V rms (ac)
    peak: float  # V peak (ac)
    dc: float    # V dc
    source: str


# Read: the IEC webstore abstract of IEC 61010-031:2015 says its levels changed to 30 V r.m.s.,
# 42,4 V peak, 60 V d.c. "instead of 33 V r.m.s., 46,7 V peak, or 70 V d.c." (the Part 1
# levels); a data-recorder manual lists 33 / 46.7 / 70 V against IEC 61010-1:2010.
IEC_61010_1 = LiveLevels(33.0, 46.7, 70.0, "IEC 61010-1:2010 6.3.1, normal condition")
# From memory: the lower levels IEC 61010-1 6.3.1 gives for equipment used in wet locations.
IEC_61010_1_WET = LiveLevels(16.0, 22.6, 35.0, "IEC 61010-1:2010 6.3.1, wet locations")
# Read: IEC 61010-031:2015 (webstore abstract; scope of type A probe assemblies).
IEC_61010_031 = LiveLevels(30.0, 42.4, 60.0, "IEC 61010-031:2015, probe assemblies")


def plan_level(waveform: str, wet: bool = False) -> tuple[float, str]:
    """The hazardous-live level (V) a plan's working voltage is compared with, and its source.

    ``waveform`` is ``ac`` (the level is in V rms, as a plan's ac voltage is) or ``dc``.
    The lowest level that applies is taken, so that a circuit is never called safe to touch
    when one of the standards says otherwise: in wet locations Part 1's wet levels, else the
    probe-assembly levels of IEC 61010-031 (the part in the hand), which are below Part 1's.
    """
    if waveform not in ("ac", "dc"):
        raise ValueError(f"waveform must be ac or dc, not {waveform!r}")
    chosen = IEC_61010_1_WET if wet else IEC_61010_031
    return (chosen.rms if waveform == "ac" else chosen.dc), chosen.source


def dc_level(wet: bool = False) -> tuple[float, str]:
    """The dc hazardous-live level (V): the default safe level a discharge must reach."""
    return plan_level("dc", wet)
