"""The steward's model form: its fields, and the model document of a fleet file they make.

Every field a fleet file's model can hold has a field here: quantities are one-line text
with their unit ("600 V", "10 Mohm"), enumerations are select boxes, the ratings, modes and
front-end elements are rows named ``ratings-0-voltage``, ``modes-1-fuse-current``,
``front_end-2-between-0``. :func:`document_from_form` turns a posted form into the document
(``models[i]`` of ``withstand-fleet/1``) that the fleet file's validator then checks, and a
problem's path (``modes[1].max_input``) comes back to its field through :func:`place`. The
form is rendered from a document too, so edit -> save -> edit shows what was saved.
"""

from __future__ import annotations

import re

from .. import units as u
from ..engine import spec
from ..errors import FieldProblem
from .forms import FieldErrors

# (name, label, dimension) of the quantities; a dimension of None is plain text or a ratio.
FUSE_FIELDS = (("current", "Current", u.CURRENT), ("voltage", "Voltage (AC)", u.VOLTAGE),
               ("voltage_dc", "Voltage (DC)", u.VOLTAGE),
               ("breaking_capacity", "Breaking capacity", u.CURRENT),
               ("i2t", "I²t", u.I2T))
RATING_FIELDS = (("voltage", "Voltage", u.VOLTAGE),
                 ("transient", "Impulse withstand (peak)", u.VOLTAGE),
                 ("max_altitude", "Up to altitude", u.LENGTH))
MODE_FIELDS = (("input_resistance", "Input resistance", u.RESISTANCE),
               ("input_capacitance", "Input capacitance", u.CAPACITANCE),
               ("max_input", "Maximum input", u.VOLTAGE),
               ("max_current", "Maximum current", u.CURRENT),
               ("max_duration", "Longest connection", u.TIME),
               ("discharge_energy", "Discharge energy", u.ENERGY))
ACCESSORY_FIELDS = (("connector", "Plug (connector it fits into)", None),
                    ("current_rating", "Current rating", u.CURRENT),
                    ("tip_exposure", "Exposed tip length", u.LENGTH),
                    ("attenuation", "Attenuation (input:output)", None),
                    ("required_load", "Calibrated into (load)", u.RESISTANCE),
                    ("output_resistance", "Output resistance", u.RESISTANCE),
                    ("min_voltage", "Lowest specified voltage", u.VOLTAGE))
DISCHARGE_FIELDS = (("resistance", "Resistance", u.RESISTANCE),
                    ("energy", "Energy per discharge", u.ENERGY),
                    ("power", "Power", u.POWER),
                    ("max_voltage", "Maximum voltage", u.VOLTAGE))
EXAMPLES = {"V": "600 V", "A": "11 A", "ohm": "10 Mohm", "F": "100 pF", "J": "2 J",
            "W": "5 W", "s": "60 s", "m": "2000 m", "A^2*s": "400 A²s"}
CATEGORY_CHOICES = tuple((c, f"CAT {c}" if c != "none" else "none (give the impulse withstand)")
                         for c in spec.CATEGORIES)
SECTIONS = ("ratings", "modes", "front_end")
ROWS_MAX = 200  # more rows than any instrument has; a form that asks for more is refused


def example(dim: u.Dimension | None, name: str = "") -> str:
    if name == "attenuation":
        return "1000:1"
    return EXAMPLES.get(dim.unit, dim.unit) if dim is not None else ""


def element_params(element: dict) -> list[str]:
    """The parameters a row of the front end shows: those its type takes, then any other one
    the row holds (typed before the type changed), so that its problem has a field."""
    names = list(spec.ELEMENT_PARAMS.get(element.get("type"), ()))
    return names + [k for k in spec.ELEMENT_PARAM_DIMS if k in element and k not in names]


def param_label(name: str) -> str:
    return name.replace("_", " ").capitalize()


# -- form -> document ------------------------------------------------------------------------

def _text(form, name: str) -> str:
    # spaces only: a tab, a line break or a control character stays, for the validator to
    # refuse (str.strip would quietly drop U+0085 and friends and take a blank for a value)
    return (form.get(name) or "").strip(" ")


def _put(out: dict, name: str, value: str) -> None:
    if value:
        out[name] = value


def _indices(form, section: str) -> list[int]:
    pattern = re.compile(rf"{section}-(\d{{1,4}})(?:-|$)")
    found = {int(m.group(1)) for k in form.keys() if (m := pattern.match(k))}
    return sorted(found)


def _fuse(form, prefix: str) -> dict | None:
    out: dict = {}
    for name, _label, _dim in FUSE_FIELDS:
        _put(out, name, _text(form, f"{prefix}fuse-{name}"))
    return out if out or form.get(f"{prefix}fused") else None


def _names(text: str) -> list[str]:
    """A list typed in one box: names separated by commas (connector names, switch ids)."""
    return [x.strip() for x in text.split(",") if x.strip()]


def _rating(form, p: str) -> dict:
    out: dict = {}
    _put(out, "category", _text(form, p + "category"))
    for name, _label, _dim in RATING_FIELDS:
        _put(out, name, _text(form, p + name))
    return out


def _mode(form, p: str) -> dict:
    out: dict = {"key": _text(form, p + "key"), "label": _text(form, p + "label")}
    _put(out, "measures", _text(form, p + "measures"))
    _put(out, "waveform", _text(form, p + "waveform"))
    terminals = [_text(form, f"{p}terminals-{i}") for i in (0, 1)]
    if any(terminals):
        out["terminals"] = [t for t in terminals if t]
    for name, _label, _dim in MODE_FIELDS:
        _put(out, name, _text(form, p + name))
    if form.get(p + "clamp"):
        out["clamp"] = True
    fuse = _fuse(form, p)
    if fuse is not None:
        out["fuse"] = fuse
    closes = _names(_text(form, p + "closes"))
    if closes:
        out["closes"] = closes
    return out


def _element(form, p: str) -> dict:
    out: dict = {"id": _text(form, p + "id"), "type": _text(form, p + "type"),
                 "between": [_text(form, f"{p}between-{i}") for i in (0, 1)]}
    for name in spec.ELEMENT_PARAM_DIMS:
        _put(out, name, _text(form, p + name))
    return out


_ROW_READERS = {"ratings": _rating, "modes": _mode, "front_end": _element}
# what a row's select boxes always send: a row holding nothing else is an empty row
_SELECTS = {"ratings": {"category"}, "modes": {"measures", "waveform"},
            "front_end": {"type"}}


def blank_row(section: str, row: dict) -> bool:
    """Whether a row holds nothing but its select boxes' choices. A row shown blank carries a
    hidden ``-new`` mark: posted back still blank, it is dropped (a row added and not filled
    in); a row that held something and was emptied is kept, for the validator to refuse."""
    rest = {k: v for k, v in row.items() if k not in _SELECTS[section]}
    return not any(v for v in rest.values() if not isinstance(v, list)) and not any(
        any(x) for x in rest.values() if isinstance(x, list))


def document_from_form(form, key: str | None = None, *, saving: bool = True) -> dict:
    """The model document the posted ``form`` describes, as a fleet file would hold it: a
    blank optional field is left out (its default applies), a new row left blank is dropped,
    and the rest is the text as typed, for the validator to judge. ``key`` is the edited
    model's. Not ``saving`` (a button that adds, removes or shows rows), every row stays."""
    doc: dict = {"key": key if key is not None else _text(form, "key"),
                 "maker": _text(form, "maker"), "name": _text(form, "name"),
                 "kind": _text(form, "kind")}
    connectors = [_text(form, f"connectors-{i}") for i in _indices(form, "connectors")]
    if any(connectors):
        doc["connectors"] = [c for c in connectors if c][:ROWS_MAX + 1]
    if form.get("integrated_leads"):
        doc["integrated_leads"] = True
    _put(doc, "max_altitude", _text(form, "max_altitude"))
    degree = _text(form, "pollution_degree")
    if degree:
        # the select sends text; the file's field is a number (a long or odd text stays text,
        # for the validator to refuse with its own message)
        doc["pollution_degree"] = int(degree) if degree.isdigit() and len(degree) < 4 else degree
    for section in SECTIONS:
        rows = [(_ROW_READERS[section](form, f"{section}-{i}-"), form.get(f"{section}-{i}-new"))
                for i in _indices(form, section)[:ROWS_MAX + 1]]
        doc[section] = [r for r, new in rows
                        if not (saving and new and blank_row(section, r))]
    for name, _label, _dim in ACCESSORY_FIELDS + DISCHARGE_FIELDS:
        _put(doc, name, _text(form, name))
    fuse = _fuse(form, "")
    if fuse is not None:
        doc["fuse"] = fuse
    return doc


def too_many_rows(doc: dict) -> list[FieldProblem]:
    return [FieldProblem(s, f"holds more than {ROWS_MAX} rows") for s in SECTIONS + ("connectors",)
            if len(doc.get(s) or ()) > ROWS_MAX]


# -- the buttons that change the rows --------------------------------------------------------

_ACTION = re.compile(r"(add|remove)-(ratings|modes|front_end)(?:-(\d{1,4}))?")


def apply_action(doc: dict, action: str) -> bool:
    """Add or remove a row as the button ``action`` asks (``add-modes``,
    ``remove-front_end-2``); ``False`` when it is no such button."""
    m = _ACTION.fullmatch(action)
    if not m:
        return False
    verb, section, index = m.groups()
    rows = doc.setdefault(section, [])
    if verb == "add":
        rows.append({"type": "resistor", "between": ["", ""]} if section == "front_end"
                    else {"terminals": ["", ""]} if section == "modes" else {})
    elif index is not None and int(index) < len(rows):
        del rows[int(index)]
    return True


# -- problems -> fields ----------------------------------------------------------------------

_TOP = ("key", "kind", "maker", "name", "connectors", "integrated_leads", "max_altitude",
        "pollution_degree", "fuse") + tuple(f"fuse-{n}" for n, _l, _d in FUSE_FIELDS) + tuple(
        n for n, _l, _d in ACCESSORY_FIELDS + DISCHARGE_FIELDS) + SECTIONS


def field_names(doc: dict) -> set[str]:
    """Every name beside which the form template shows messages."""
    out = set(_TOP) | {f"connectors-{i}" for i in range(len(doc.get("connectors") or ()) + 1)}
    for i, _r in enumerate(doc.get("ratings") or ()):
        p = f"ratings-{i}"
        out |= {p, f"{p}-category"} | {f"{p}-{n}" for n, _l, _d in RATING_FIELDS}
    for i, _x in enumerate(doc.get("modes") or ()):
        p = f"modes-{i}"
        out |= {p, f"{p}-key", f"{p}-label", f"{p}-measures", f"{p}-waveform",
                f"{p}-terminals", f"{p}-clamp", f"{p}-fuse", f"{p}-closes"}
        out |= {f"{p}-{n}" for n, _l, _d in MODE_FIELDS}
        out |= {f"{p}-fuse-{n}" for n, _l, _d in FUSE_FIELDS}
    for i, e in enumerate(doc.get("front_end") or ()):
        p = f"front_end-{i}"
        out |= {p, f"{p}-id", f"{p}-type", f"{p}-between"}
        out |= {f"{p}-{n}" for n in element_params(e if isinstance(e, dict) else {})}
    return out


def place(problems, doc: dict, errors: FieldErrors) -> None:
    """Each problem beside the field its path names (``modes[1].max_input`` ->
    ``modes-1-max_input``), or beside the nearest row or section that is shown, the message
    led by the path exactly as an import would report it."""
    names = field_names(doc)
    for p in problems:
        name = re.sub(r"\[(\d+)\]", r"-\1", p.path).replace(".", "-")
        while name and name not in names:
            name = name.rpartition("-")[0]
        errors.add(name or "_form", f"{p.path}: {p.message}" if p.path else p.message)


def new_document(kind: str = "multimeter") -> dict:
    """What the form for a new model starts from: one empty rating, and for an instrument
    one empty mode."""
    doc: dict = {"key": "", "maker": "", "name": "", "kind": kind, "ratings": [{}]}
    if kind in spec.INSTRUMENT_KINDS and kind != "discharge-tool":
        doc["modes"] = [{"terminals": ["", ""]}]
    return doc
