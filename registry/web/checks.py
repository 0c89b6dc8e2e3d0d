"""Check a job: the plan form, the ranked result, the discharge curve, the job card, and plan
files saved and loaded.

The check has no side effects, so the form is sent with GET and every result page (and its job
card and plots) is a plain link that carries the plan as typed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date

import yaml
from flask import Blueprint, Response, abort, render_template, request

from ..engine.result import VERDICT_ORDER, format_ratio, margin_ratio
from ..engine.spec import PLAN_WAVEFORMS, SUPPLIES, TASKS
from ..errors import InvalidInput, shown
from ..extensions import db
from ..formats.common import not_utf8, parse_date, parse_text
from ..plans import CIRCUIT_QUANTITIES, FORMAT
from ..store import queries
from ..services.checks import plan_from, run_check
from ..store.loading import engine_fleet
from ..store.solves import kept_solves
from ..store.versions import fleet_version
from .access import role_required
from .forms import FieldErrors
from .limits import check_texts, int_arg
from .params import list_links
from .page_cache import page
from .plots import DischargePath, discharge_svg, needs_has_svg
from .result_cache import results

bp = Blueprint("checks", __name__, url_prefix="/checks")

QUANTITY_FIELDS = tuple(CIRCUIT_QUANTITIES)
FIELDS = (("title", "task", "supply", "category", "waveform") + QUANTITY_FIELDS
          + ("site", "altitude", "wet", "duration", "discharge_to", "on"))
SHOWN = 20  # setups listed before "show all", as report.DEFAULT_LIMIT in the CLI
MAX_PLOTS = 4
# Where a plan path's problem is shown on the form.
PATH_FIELDS = {"circuit": "voltage", "site": "altitude", "site.name": "site",
               "site.altitude": "altitude", "site.wet": "wet", "format": "_form"}
EXAMPLES = {"voltage": "480 V", "voltage_to_earth": "277 V", "frequency": "60 Hz",
            "transient": "6 kV", "source_impedance": "0.02 ohm", "prospective_current": "12 kA",
            "capacitance": "470 uF", "stored_energy": "50 J", "current": "40 A"}


def fields_from(args) -> dict[str, str]:
    return {k: (args.get(k) or "").strip() for k in FIELDS}


def doc_from_fields(f: dict[str, str]) -> dict:
    """A ``withstand-plan/1`` document of the form as typed (quantities stay text)."""
    doc: dict = {"format": FORMAT}
    if f["title"]:
        doc["title"] = f["title"]
    if f["task"]:
        doc["task"] = f["task"]
    circuit: dict = {}
    for k in ("supply", "category", "waveform") + QUANTITY_FIELDS:
        if f.get(k):
            circuit[k] = f[k]
    doc["circuit"] = circuit
    site: dict = {}
    if f["site"]:
        site["name"] = f["site"]
    if f["altitude"]:
        site["altitude"] = f["altitude"]
    site["wet"] = f["wet"] in ("1", "on", "true", "yes")
    doc["site"] = site
    for k in ("duration", "discharge_to"):
        if f[k]:
            doc[k] = f[k]
    return doc


def fields_from_doc(doc) -> dict[str, str]:
    """The form's fields for a plan document read from a file (the reverse of the above)."""
    f = {k: "" for k in FIELDS}
    if not isinstance(doc, dict):
        return f
    def text(v):
        return "" if v is None else (str(v).lower() if isinstance(v, bool) else str(v))
    for k in ("title", "task", "duration", "discharge_to"):
        f[k] = text(doc.get(k))
    circuit = doc.get("circuit") if isinstance(doc.get("circuit"), dict) else {}
    for k in ("supply", "category", "waveform") + QUANTITY_FIELDS:
        f[k] = text(circuit.get(k))
    site = doc.get("site") if isinstance(doc.get("site"), dict) else {}
    f["site"] = text(site.get("name"))
    f["altitude"] = text(site.get("altitude"))
    f["wet"] = "1" if site.get("wet") is True else ""
    return f


def field_of(path: str) -> str:
    if path in PATH_FIELDS:
        return PATH_FIELDS[path]
    if path.startswith("circuit."):
        return path.split(".", 1)[1]
    return path if path in FIELDS else "_form"


def parse_on(text: str, errors: FieldErrors) -> date | None:
    try:
        return parse_date(text, "on")
    except InvalidInput as exc:
        errors.extend(exc.problems, {"on": "on"})
        return None


def _form(fields, errors, status=200):
    return render_template("checks/form.html", f=fields, errors=errors, tasks=TASKS,
                           supplies=SUPPLIES, waveforms=PLAN_WAVEFORMS,
                           sites=queries.site_names(db.session), examples=EXAMPLES), status


def check_with_fleet(session, plan):
    """The shared job check (check 10 included) of ``plan``, with the fleet it ran against,
    whose models the discharge curves and the job card need; a result already computed for
    this plan on this fleet version is reused (:mod:`.result_cache`)."""

    def check():
        fleet = engine_fleet(session)
        with kept_solves(session.get_bind().engine):  # the solves other processes made
            return run_check(plan, fleet), fleet

    # kept per (plan, fleet version): the page, its plots and its job card run one check
    return results().get((plan, plan.on or date.today(), fleet_version(session)), check)


def checked(fields: dict):
    """(result, fleet, errors): the check of the typed plan, or the problems by field."""
    errors = FieldErrors()
    errors.extend(check_texts({k: request.args.get(k, "") for k in fields}),
                  {k: field_of(k) for k in fields})
    if errors:
        return None, None, errors
    on = parse_on(fields["on"], errors)
    try:
        plan = plan_from(doc_from_fields(fields), db.session, on)
    except InvalidInput as exc:
        for p in exc.problems:
            errors.add(field_of(p.path), p.message)
        return None, None, errors
    if errors:
        # a refused request runs no check: the check keeps its solves in the database, and a
        # refused request writes nothing (the plan's own problems are reported beside these)
        return None, None, errors
    result, fleet = check_with_fleet(db.session, plan)
    return result, fleet, errors


def setup_profile(res, fleet, s):
    """The engine's discharge profile of ranked setup ``s`` (what check 9 states for it), or
    None: no capacitance, no resistance recorded, or a front end that could not be solved
    (check 9 then says ``unknown`` with the reason)."""
    from ..engine.discharge import DischargeUnsolved, discharge_profile
    from ..engine.protection import context_of
    if not res.derived.capacitance:
        return None
    model = fleet.models[s.instrument_model]
    if model.kind != "discharge-tool" and model.mode(s.mode) is None:
        return None
    ctx = context_of(res.plan, res.derived, fleet, s.instrument_model, s.mode,
                     s.accessory_models)
    if ctx.mode.clamp or ctx.current_clamp is not None:
        return None
    try:
        with kept_solves(db.database.engine):
            return discharge_profile(ctx)
    except DischargeUnsolved:
        return None


def discharge_paths(result, fleet) -> list[DischargePath]:
    """The ranked setups whose path would drain the plan's capacitance: every setup of a
    discharge task, else those with R*C under ten times the connection time (check 9's
    drain rule); one plot per distinct path, at most MAX_PLOTS."""
    from ..engine.checks import DRAIN_FACTOR
    if not result.derived.capacitance:
        return []
    out, seen = [], set()
    for s in result.setups:
        prof = setup_profile(result, fleet, s)
        if prof is None:
            continue
        if result.plan.task != "discharge" and prof.tau >= DRAIN_FACTOR * result.plan.duration:
            continue
        key = (s.instrument_model, s.mode) if prof.method == "front-end" else \
            ("rc", prof.resistance)
        if key in seen:
            continue
        seen.add(key)
        out.append(DischargePath(f"{s.instrument} {s.mode_label or s.mode} "
                                 f"({s.instrument_model})", prof, s.verdict))
        if len(out) == MAX_PLOTS:
            break
    return out


@bp.route("/")
@role_required("viewer")
def form():
    fields = fields_from(request.args)
    if not any(fields.values()):
        fields.update({"task": "measure-voltage", "supply": "mains", "category": "III",
                       "waveform": "ac", "duration": "60 s"})
    return _form(fields, FieldErrors())


@bp.route("/result")
@role_required("viewer")
def result():
    """The ranked result. Its rendered page is kept per plan, query, role and fleet version
    (:mod:`.page_cache`), and on a large fleet its long lists come a page at a time, with a
    count and a link for each verdict and each reason a unit is not offered, so every unit's
    verdict stays one link away and none that forbids a use is summarised away."""
    fields = fields_from(request.args)

    def context():
        res, fleet, errors = checked(fields)
        if res is None:
            return _form(fields, errors, 400)
        return result_context(res, fleet, fields)

    return page("checks/result.html", context, large=True)


GRID_ROWS = 100  # instrument units in the verdict grid at once
LIST_ROWS = 100  # accessory units, and units not offered for one reason, at once
EXCLUDED_INLINE = 20  # units not offered for one reason named before "all N"
ALL_AT_ONCE = 500  # "show all" setups on one page up to this many; pages beyond


@dataclass(frozen=True)
class Paged:
    """One page of a list: its items, which page of how many, and the first item's offset."""

    items: list
    page: int
    pages: int
    total: int
    start: int


def paged(items: list, number: int, size: int) -> Paged:
    pages = max((len(items) + size - 1) // size, 1)
    number = min(max(number, 1), pages)
    start = (number - 1) * size
    return Paged(items[start:start + size], number, pages, len(items), start)


LIST_VERDICTS = ("grid", "acc")  # filters by verdict
LIST_PAGES = ("rank", "grid_page", "acc_page", "ex_page")  # page numbers, from 1


def list_args(errors: FieldErrors) -> dict:
    """The result page's list arguments: a verdict (or "") for each of ``LIST_VERDICTS``, a
    whole number for each of ``LIST_PAGES`` (1 when blank); each problem named by its
    argument in ``errors``."""
    out: dict = {}
    for name in LIST_VERDICTS:
        value = request.args.get(name, "")
        if value and value not in VERDICT_ORDER:
            errors.add("_form", f"{name}: '{shown(value)}' is not a verdict; it is one of "
                                f"{', '.join(VERDICT_ORDER)}")
            value = ""
        out[name] = value
    for name in LIST_PAGES:
        try:
            out[name] = int_arg(request.args, name, 1)
        except InvalidInput as exc:
            for p in exc.problems:
                errors.add("_form", f"{name}: {p.message}")
            out[name] = 1
    return out


def result_context(res, fleet, fields) -> dict:
    """What the result page shows of ``res``: the plots, and each long list's page (chosen by
    the query: ``rank``, ``grid_page``, ``acc_page``, ``ex_page``) and filter (``grid``
    with ``grid_mode``, ``acc``, ``ex``), with the counts by verdict and by reason."""
    errors = FieldErrors()
    args = list_args(errors)
    if errors:  # the plan was fine, a list's argument was not: the form says which
        return _form(fields, errors, 400)
    show_all = request.args.get("all") == "1" and len(res.setups) <= ALL_AT_ONCE
    paths = discharge_paths(res, fleet)
    plots = [{"path": p, "index": i, "outcome": p.profile.outcome()}
             for i, p in enumerate(paths, 1)]
    grid = verdict_grid(res.setups)
    grid_verdict, grid_mode = args["grid"], request.args.get("grid_mode", "")
    units = grid["units"]
    if grid_verdict:
        modes = [grid_mode] if grid_mode else list(grid["modes"])
        units = [u for u in units if any(grid["cells"].get((u, k)) == grid_verdict
                                         for k in modes)]
    acc_verdict = args["acc"]
    accessories = [a for a in res.accessories if not acc_verdict or a.verdict == acc_verdict]
    reasons: dict[str, list] = {}
    for e in res.excluded:
        reasons.setdefault(e.reason, []).append(e)
    ex_reason = request.args.get("ex", "")
    ranked = paged(list(res.setups), 1 if show_all else args["rank"],
                   ALL_AT_ONCE if show_all else SHOWN)
    return dict(r=res, f=fields, show_all=show_all, needs_has=needs_has_svg,
                grid=grid, grid_units=paged(units, args["grid_page"], GRID_ROWS),
                grid_whole=len(grid["units"]) <= GRID_ROWS, grid_verdict=grid_verdict,
                grid_mode=grid_mode, grid_counts=grid_counts(grid),
                ranked=ranked, shown=SHOWN, all_at_once=ALL_AT_ONCE,
                acc=paged(accessories, args["acc_page"], LIST_ROWS),
                acc_whole=len(res.accessories) <= LIST_ROWS, acc_verdict=acc_verdict,
                acc_counts={v: sum(1 for a in res.accessories if a.verdict == v)
                            for v in VERDICT_ORDER},
                reasons=reasons, ex_reason=ex_reason,
                ex=paged(reasons.get(ex_reason, []), args["ex_page"], LIST_ROWS),
                ex_inline=EXCLUDED_INLINE, plots=plots, models=fleet.models,
                query=_query(fields), link=_result_link)


def _result_link(anchor: str = "", **changes) -> str:
    """This result page's address with ``changes`` to its query (None drops an argument)."""
    url = list_links("checks.result", request.args.to_dict())(**changes)
    return url + (f"#{anchor}" if anchor else "")


def verdict_grid(setups) -> dict:
    """Units down, modes across, each cell the verdict of that unit in that mode (its best
    setup), in the ranked order: the whole result at a glance."""
    units: dict[str, None] = {}  # in first-seen order; a dict, as a list's `in` is O(n)
    modes: dict[str, str] = {}  # mode key -> the label first seen
    cells: dict[tuple[str, str], str] = {}
    for s in setups:
        units.setdefault(s.instrument, None)
        modes.setdefault(s.mode, s.mode_label or s.mode)
        cells.setdefault((s.instrument, s.mode), s.verdict)
    return {"units": list(units), "modes": modes, "cells": cells}


def grid_counts(grid) -> dict:
    """(verdict, mode key) -> how many units have that verdict in that mode; (verdict, "")
    -> how many have it in at least one mode."""
    counts: dict[tuple[str, str], int] = {}
    any_mode: dict[str, set] = {v: set() for v in VERDICT_ORDER}
    for (unit, mode), v in grid["cells"].items():
        counts[(v, mode)] = counts.get((v, mode), 0) + 1
        any_mode[v].add(unit)
    counts.update({(v, ""): len(us) for v, us in any_mode.items()})
    return counts


def _query(fields) -> dict:
    return {k: v for k, v in fields.items() if v}


@bp.route("/discharge.svg")
@role_required("viewer")
def discharge_plot():
    fields = fields_from(request.args)
    res, fleet, errors = checked(fields)
    if res is None:
        abort(400)
    paths = discharge_paths(res, fleet)
    index = _index_arg("path")
    if not paths or not 1 <= index <= len(paths):
        abort(404)
    svg = discharge_svg(paths[index - 1])
    return Response(svg, mimetype="image/svg+xml")


def _index_arg(name: str) -> int:
    """A 1-based index from the query string; text that is not a whole number is a 400."""
    try:
        return int_arg(request.args, name, 1)
    except InvalidInput:
        abort(400)


def chosen_setup(res):
    """(index, setup) named by the ``setup`` argument, counted from 1 in the ranked order."""
    index = _index_arg("setup")
    if not 1 <= index <= len(res.setups):
        abort(404)
    return index, res.setups[index - 1]


@bp.route("/card")
@role_required("viewer")
def card():
    fields = fields_from(request.args)
    res, fleet, errors = checked(fields)
    if res is None:
        return _form(fields, errors, 400)
    index, s = chosen_setup(res)
    prof = setup_profile(res, fleet, s)
    return render_template("checks/card.html", r=res, s=s, index=index,
                           discharge=prof.outcome() if prof is not None else None,
                           models=fleet.models, query=_query(fields), today=date.today())


@bp.route("/front-end.svg")
@role_required("viewer")
def front_end_plot():
    """The front end of a ranked setup's instrument in its mode, with the elements that fail
    or come closest to their limits under this plan marked with a symbol and a label."""
    from ..drawing import front_end_svg
    from ..engine.protection import context_of, setup_marks
    from .security import IMAGE_POLICY
    fields = fields_from(request.args)
    res, fleet, errors = checked(fields)
    if res is None:
        abort(400)
    _, s = chosen_setup(res)
    ctx = context_of(res.plan, res.derived, fleet, s.instrument_model, s.mode,
                     s.accessory_models)
    if not ctx.instrument.front_end or ctx.mode.clamp:
        abort(404)
    svg = front_end_svg(ctx.instrument, ctx.mode, setup_marks(ctx))
    return Response(svg, mimetype="image/svg+xml",
                    headers={"Content-Security-Policy": IMAGE_POLICY})


@bp.route("/plan.yaml")
@role_required("viewer")
def save_plan():
    fields = fields_from(request.args)
    res, _fleet, errors = checked(fields)
    if res is None:
        return _form(fields, errors, 400)
    doc = doc_from_fields(fields)
    text = yaml.safe_dump(doc, sort_keys=False, allow_unicode=True)
    name = "".join(ch if ch.isalnum() else "-" for ch in (fields["title"] or "plan").lower())
    name = "-".join(part for part in name.split("-") if part)[:60] or "plan"
    return Response(text, mimetype="application/x-yaml",
                    headers={"Content-Disposition": f'attachment; filename="{name}.yaml"'})


@bp.route("/load", methods=["POST"])
@role_required("viewer")
def load_plan():
    errors = FieldErrors()
    upload = request.files.get("plan_file")
    try:
        text = upload.read().decode("utf-8-sig") if upload and upload.filename else \
            request.form.get("plan_text", "")
    except UnicodeDecodeError as exc:
        errors.add("plan_file", not_utf8(upload.filename, exc))
        return _form(fields_from({}), errors, 400)
    if not text.strip():
        errors.add("plan_file", "choose a plan file (YAML or JSON) to load")
        return _form(fields_from({}), errors, 400)
    try:
        doc = parse_text(text)
    except InvalidInput as exc:
        for p in exc.problems:
            errors.add("plan_file", p.message)
        return _form(fields_from({}), errors, 400)
    fields = fields_from_doc(doc)
    try:
        plan_from(doc, db.session)
    except InvalidInput as exc:
        for p in exc.problems:
            errors.add(field_of(p.path), p.message)
        return _form(fields, errors, 400)
    return _form(fields, errors)


@bp.app_template_filter("ratio")
def ratio_filter(margin):
    """A headroom (available - required) / required shown as available / required, "x1.33"."""
    text = format_ratio(margin_ratio(margin))
    return "—" if text == "-" else text


@bp.app_template_filter("finite")
def finite(value):
    return value is not None and not (isinstance(value, float) and math.isinf(value))
