"""Logged events: whether the applied stress was within the unit's rating, whether a clamp
conducted, and whether a hold opens (docs/rules.md, check 11).

The stress is held against the model the way a job plan would be:

- ``overvoltage``: an isolated source at the applied voltage. Some rating's voltage (any
  category) must cover it (check 2 for isolated circuits), and so must the mode's
  ``max_input`` (check 5); a stated duration must not exceed the mode's ``max_duration``
  (check 8).
- ``transient``: an impulse of the applied peak against the model's impulse withstand (the
  IEC 61010-2-030 table value for a category rating, or a ``none`` rating's stated transient:
  check 3).
- ``discharge``: the stated energy against the mode's ``discharge_energy`` (or a discharge
  tool's ``energy``), and a stated voltage against the tool's ``max_voltage`` (check 9).
- ``fuse-open``, ``mechanical``, ``other``: a stated voltage is held as an overvoltage;
  without one nothing shows the unit stayed within its rating.
- A current input without ``max_input`` is held against its fuse's voltage rating: the ac
  rating for an ``ac`` event, the dc rating for a ``dc`` one, and the lower of the two when
  the event's ``waveform`` is not given (a fuse's ac rating says nothing of dc).

``within_rating`` is ``True``, ``False`` or ``None`` (the data to decide is missing). ``None``
opens a hold like ``False``: a stress not shown to be within rating is treated as one that was
not (docs/rules.md, "Verdicts": missing data is "unknown", never "fine").

Pure: SI floats only (V, J, s).
"""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import FieldProblem, InvalidInput
from .checks import withstand_of
from .quantity import ENERGY, TIME, VOLTAGE, format_quantity as qtext
from .spec import EVENT_KINDS, EVENT_WAVEFORMS, SYMPTOMS, Fuse, Mode, ModelSpec

SRC_RATING = "IEC 61010-1:2010 rated voltage; isolated source, any category"
SRC_MODE = "maker's rating for the mode"
SRC_IMPULSE = "IEC 61010-2-030:2010 Table 102 impulse test voltage, or the stated withstand"

HOLD_KINDS = ("fuse-open", "mechanical")  # these open a hold whatever the stress
CLAMP_TYPES = ("varistor", "tvs", "gas-tube")


@dataclass(frozen=True)
class AppliedStress:
    """What was applied: ``voltage`` V (rms or dc; peak for a transient), ``energy`` J,
    ``duration`` s, ``waveform`` ``ac`` or ``dc``; ``None`` where not known."""

    kind: str
    voltage: float | None = None
    energy: float | None = None
    duration: float | None = None
    waveform: str | None = None

    def __post_init__(self):
        if self.kind not in EVENT_KINDS:
            raise InvalidInput(f"'{self.kind}' is not an event kind; use "
                               f"{', '.join(EVENT_KINDS)}", "kind")
        if self.waveform is not None and self.waveform not in EVENT_WAVEFORMS:
            raise InvalidInput(f"'{self.waveform}' is not a waveform; use "
                               f"{' or '.join(EVENT_WAVEFORMS)}, or leave it out", "waveform")
        for name in ("voltage", "energy", "duration"):
            v = getattr(self, name)
            if v is not None and (isinstance(v, bool) or not isinstance(v, (int, float))
                                  or v != v or v < 0 or v == float("inf")):
                raise InvalidInput(f"must be a finite non-negative number, not {v!r}", name)


@dataclass(frozen=True)
class Assessment:
    """The engine's judgement of one event, stored with it."""

    within_rating: bool | None
    reasons: tuple[str, ...]  # one sentence per limit looked at, failures first
    clamp_conducted: bool
    hold: bool
    hold_reason: str  # "" when no hold opens

    @property
    def reason(self) -> str:
        return " ".join(self.reasons)


def check_symptoms(symptoms) -> tuple[str, ...]:
    """The symptoms as a tuple, each from ``spec.SYMPTOMS``; ``none`` stands alone."""
    out = tuple(symptoms or ())
    problems = [FieldProblem("symptoms", f"'{s}' is not a symptom; use {', '.join(SYMPTOMS)}")
                for s in out if s not in SYMPTOMS]
    if "none" in out and len(set(out)) > 1:
        problems.append(FieldProblem("symptoms", "'none' cannot be given with other symptoms"))
    if problems:
        raise InvalidInput(problems)
    return tuple(dict.fromkeys(out))  # repeated symptoms once, in the order given


def mode_of(model: ModelSpec, mode_key: str | None) -> Mode | None:
    """The model's mode ``mode_key``; InvalidInput (path ``mode``) if the model has none such."""
    if mode_key is None:
        return None
    mode = model.mode(mode_key)
    if mode is None:
        known = ", ".join(x.key for x in model.modes) or "none"
        raise InvalidInput(f"'{mode_key}' is not a mode of {model.key} (its modes: {known})",
                           "mode")
    return mode


# -- the single limits ----------------------------------------------------------------------

Verdict = tuple[bool | None, str]  # (within?, the sentence saying why)


def _limit(what: str, have: float | None, applied: float, dim, source: str,
           peak: bool = False) -> Verdict:
    tail = " peak" if peak else ""
    if have is None:
        return None, (f"{what}: not recorded, so {qtext(applied, dim)}{tail} cannot be held "
                      f"against it ({source}).")
    ok = applied <= have
    return ok, (f"{what} {qtext(have, dim)}{tail} {'covers' if ok else 'is below'} the applied "
                f"{qtext(applied, dim)}{tail} ({source}).")


def rating_voltage_verdict(model: ModelSpec, voltage: float) -> Verdict:
    """An isolated source at ``voltage`` V: some rating's voltage, of any category, covers it
    (docs/rules.md, check 2, isolated circuits)."""
    if not model.ratings:
        return None, f"{model.key} has no rating recorded ({SRC_RATING})."
    best = max(model.ratings, key=lambda r: r.voltage)
    shown = "no category" if best.category == "none" else f"CAT {best.category}"
    return _limit(f"{model.key} rated voltage ({shown})", best.voltage, voltage, VOLTAGE,
                  SRC_RATING)


def fuse_voltage_for(fuse: Fuse, waveform: str | None) -> tuple[float | None, str]:
    """The fuse voltage rating (V) an event of ``waveform`` is held against, and its name:
    ``voltage`` for ac, ``voltage_dc`` for dc, and for an unknown waveform the lower of the
    two (``None`` if either is missing, since the lower is then not known)."""
    if waveform == "ac":
        return fuse.voltage, "fuse voltage rating (ac)"
    if waveform == "dc":
        return fuse.voltage_dc, "fuse dc voltage rating"
    if fuse.voltage is None or fuse.voltage_dc is None:
        return None, "lower of the fuse's ac and dc voltage ratings (waveform not given)"
    return (min(fuse.voltage, fuse.voltage_dc),
            "lower of the fuse's ac and dc voltage ratings (waveform not given)")


def mode_input_verdicts(model: ModelSpec, mode: Mode, voltage: float,
                        duration: float | None, waveform: str | None = None) -> list[Verdict]:
    """The mode's overload rating for ``voltage`` V and its time limit for ``duration`` s.

    A clamp-jaw mode has no electrical contact: only the model's ratings apply. A current
    input without ``max_input`` is held against its fuse's voltage rating, the most the
    input is rated to interrupt: for ``waveform`` ac or dc that rating, for an unknown
    waveform the lower of the two (:func:`fuse_voltage_for`)."""
    label = f"{model.key}/{mode.key} ({mode.label or mode.key})"
    if mode.clamp:
        return []
    out = []
    if mode.max_input is not None or mode.fuse is None:
        out.append(_limit(f"{label} max input", mode.max_input, voltage, VOLTAGE, SRC_MODE))
    else:
        have, what = fuse_voltage_for(mode.fuse, waveform)
        out.append(_limit(f"{label} {what}", have, voltage, VOLTAGE, SRC_MODE))
    if duration is not None and mode.max_duration is not None:
        out.append(_limit(f"{label} max duration", mode.max_duration, duration, TIME,
                          SRC_MODE))
    return out


def transient_verdict(model: ModelSpec, peak: float) -> Verdict:
    """An impulse of ``peak`` V against the model's impulse withstand (check 3's values)."""
    return _limit(f"{model.key} impulse withstand", withstand_of(model), peak, VOLTAGE,
                  SRC_IMPULSE, peak=True)


def discharge_verdicts(model: ModelSpec, mode: Mode | None, energy: float | None,
                       voltage: float | None) -> list[Verdict]:
    """A capacitor discharge: ``energy`` J against the mode's ``discharge_energy`` or a
    discharge tool's ``energy``; a tool's ``max_voltage`` against ``voltage`` V."""
    out: list[Verdict] = []
    if model.kind == "discharge-tool":
        limit, what = model.energy, f"{model.key} energy per discharge"
    elif mode is not None:
        limit, what = mode.discharge_energy, f"{model.key}/{mode.key} discharge energy"
    else:
        limit, what = None, f"{model.key} discharge energy (no mode given)"
    if energy is None:
        out.append((None, f"The energy discharged was not given, so {what} cannot be checked "
                          f"({SRC_MODE})."))
    else:
        out.append(_limit(what, limit, energy, ENERGY, SRC_MODE))
    if voltage is not None:
        if model.kind == "discharge-tool":
            out.append(_limit(f"{model.key} max voltage", model.max_voltage, voltage, VOLTAGE,
                              SRC_MODE))
        out.append(rating_voltage_verdict(model, voltage))
    return out


# -- clamps ---------------------------------------------------------------------------------

def clamp_threshold(element) -> float | None:
    """The voltage (V) above which a clamp element conducts: a varistor's voltage at 1 mA, a
    TVS's breakdown voltage, a gas tube's impulse sparkover (else its dc sparkover)."""
    if element.type == "varistor":
        return element.get("varistor_voltage")
    if element.type == "tvs":
        return element.get("breakdown_voltage")
    if element.type == "gas-tube":
        return element.get("sparkover_impulse") or element.get("sparkover_dc")
    return None


def clamps_in_path(model: ModelSpec, mode: Mode | None):
    """Clamp elements reachable from the mode's input terminal through the front end's
    conducting elements (resistors, PTCs, fuses, closed switches); every clamp of the front
    end when no mode is given."""
    clamps = [e for e in model.front_end if e.type in CLAMP_TYPES]
    if mode is None or not mode.terminals:
        return clamps
    start, ret = mode.terminals
    conducting = [e for e in model.front_end
                  if e.type in ("resistor", "ptc", "fuse") or (e.type == "switch"
                                                               and e.id in mode.closes)]
    reached, frontier = {start}, [start]
    while frontier:
        node = frontier.pop()
        for e in conducting:
            a, b = e.between
            for here, there in ((a, b), (b, a)):
                if here == node and there not in reached and there != ret:
                    reached.add(there)
                    frontier.append(there)
    def in_path(e) -> bool:
        a, b = e.between
        return (a in reached and (b in reached or b == ret)) or (b in reached and a == ret)
    return [e for e in clamps if in_path(e)]


def clamp_conducted(model: ModelSpec, mode: Mode | None, peak: float | None) -> bool:
    """Whether a transient of ``peak`` V made a clamp conduct: it exceeded the threshold of a
    clamp in the input's path; without a front end, it exceeded the mode's ``max_input``,
    beyond which the maker's own protection must have acted (common practice, no source)."""
    if peak is None:
        return False
    clamps = clamps_in_path(model, mode)
    if clamps:
        return any((t := clamp_threshold(e)) is not None and peak > t for e in clamps)
    if not model.front_end and mode is not None and mode.max_input is not None:
        return peak > mode.max_input
    return False


# -- the whole judgement --------------------------------------------------------------------

def _combine(verdicts: list[Verdict]) -> tuple[bool | None, tuple[str, ...]]:
    """False if any limit is exceeded; else None if any is unknown; else True."""
    if not verdicts:
        return None, ("Nothing was given to hold the stress against.",)
    values = [v for v, _ in verdicts]
    within = False if False in values else (None if None in values else True)
    order = {False: 0, None: 1, True: 2}
    return within, tuple(text for _, text in sorted(verdicts, key=lambda v: order[v[0]]))


def _voltage_verdicts(model: ModelSpec, mode: Mode | None, voltage: float,
                      duration: float | None, waveform: str | None = None) -> list[Verdict]:
    out = [rating_voltage_verdict(model, voltage)]
    if mode is not None:
        out += mode_input_verdicts(model, mode, voltage, duration, waveform)
    elif model.is_instrument and model.modes and model.kind != "discharge-tool":
        # The mode is not known: within only if it would be within in every mode.
        per_mode = [_combine(mode_input_verdicts(model, x, voltage, duration, waveform))[0]
                    for x in model.modes]
        if all(v is True for v in per_mode):
            out.append((True, f"Every mode of {model.key} takes {qtext(voltage, VOLTAGE)} "
                              f"({SRC_MODE})."))
        else:
            short = [x.key for x, v in zip(model.modes, per_mode, strict=True) if v is not True]
            out.append((None, f"No mode was given and {', '.join(short)} of {model.key} "
                              f"may not take {qtext(voltage, VOLTAGE)} ({SRC_MODE})."))
    return out


def assess(model: ModelSpec, mode_key: str | None, stress: AppliedStress,
           symptoms=()) -> Assessment:
    """Decide ``within_rating`` for ``stress`` on a unit of ``model`` in ``mode_key``, whether
    a clamp conducted, and whether a hold opens (docs/rules.md, check 11)."""
    mode = mode_of(model, mode_key)
    symptoms = check_symptoms(symptoms)
    kind, v = stress.kind, stress.voltage
    verdicts: list[tuple[bool | None, str]]
    if kind == "transient":
        verdicts = [transient_verdict(model, v)] if v is not None else [
            (None, "The transient's peak voltage was not given, so the impulse withstand "
                   f"cannot be checked ({SRC_IMPULSE}).")]
    elif kind == "discharge":
        verdicts = discharge_verdicts(model, mode, stress.energy, v)
    elif v is not None:
        verdicts = _voltage_verdicts(model, mode, v, stress.duration, stress.waveform)
    elif kind == "overvoltage":
        verdicts = [(None, "The applied voltage was not given, so the ratings cannot be "
                           f"checked ({SRC_RATING}).")]
    else:
        verdicts = [(None, f"A {kind} event with no applied voltage: nothing shows the unit "
                           "stayed within its rating.")]
    within, reasons = _combine(verdicts)
    conducted = kind == "transient" and clamp_conducted(model, mode, v)
    hold_reasons = []
    real_symptoms = [s for s in symptoms if s != "none"]
    if real_symptoms:
        hold_reasons.append("symptoms: " + ", ".join(real_symptoms))
    if kind in HOLD_KINDS:
        hold_reasons.append(f"a {kind} event")
    if within is False:
        hold_reasons.append("the stress was not within rating")
    elif within is None:
        hold_reasons.append("the stress is not shown to be within rating (data missing)")
    return Assessment(within, reasons, conducted, bool(hold_reasons),
                      "; ".join(hold_reasons))
