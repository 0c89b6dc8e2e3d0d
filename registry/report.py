"""The human text of a check result (what ``withstand check`` prints without ``--json``)."""

from __future__ import annotations

from .engine.quantity import (CAPACITANCE, CURRENT, ENERGY, LENGTH, RESISTANCE, TIME, VOLTAGE,
                              format_quantity as qtext)
from .engine.result import Result, SetupResult, format_ratio, margin_ratio, result_parts

DEFAULT_LIMIT = 20  # setups shown without --all
ACCESSORY_FOLD = 40  # above this many accessory units, like rows fold into one without --all
_MARK = {"pass": "ok", "caution": "CAUTION", "fail": "FAIL", "unknown": "UNKNOWN",
         "not-run": "not run"}


def exit_code(result: Result) -> int:
    """0 when some setup is suitable or conditional, else 1 (docs/rules.md, "Verdicts")."""
    return 0 if result.any_fit else 1


def _margin(m: float | None) -> str:
    """A headroom (available - required) / required shown as the ratio available / required."""
    return format_ratio(margin_ratio(m))


def _reason(s: SetupResult) -> str:
    f = s.deciding
    if f is None:
        return ""
    return f.message


def _table(rows: list[list[str]], headers: list[str], wrap_last: int = 70) -> list[str]:
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h)
              for i, h in enumerate(headers[:-1])]
    def line(cells):
        head = "  ".join(c.ljust(w) for c, w in zip(cells[:-1], widths, strict=True))
        return f"{head}  {cells[-1]}".rstrip()
    out = [line(headers), line(["-" * w for w in widths] + ["-" * len(headers[-1])])]
    indent = " " * (sum(widths) + 2 * len(widths))
    # A fleet of copies repeats the same few reasons thousands of times: wrap each distinct
    # last cell once (the output is the same, the work is per distinct text, not per row).
    wrapped: dict[str, list[str]] = {}
    for r in rows:
        last = wrapped.get(r[-1])
        if last is None:
            last = wrapped[r[-1]] = _wrap(r[-1], wrap_last, indent)
        out.append(line(r[:-1] + [last[0]]))
        out.extend(last[1:])
    return out


def _wrap(text: str, width: int, indent: str) -> list[str]:
    """``text`` cut into lines of at most ``width`` characters at spaces (a longer word
    stands alone); every line after the first carries ``indent``."""
    last, chunk = [], ""
    for w in text.split():
        if chunk and len(chunk) + 1 + len(w) > width:
            last.append(chunk)
            chunk = w
        else:
            chunk = f"{chunk} {w}" if chunk else w
    last.append(chunk)
    return last[:1] + [indent + x for x in last[1:]]


def derived_lines(result: Result) -> list[str]:
    plan, d, c = result.plan, result.derived, result.plan.circuit
    supply = (f"mains CAT {c.category}" if c.supply == "mains" else "isolated")
    volts = qtext(c.voltage, VOLTAGE) + (" rms" if c.waveform == "ac" else " dc")
    if c.to_earth != c.voltage:
        volts += f", {qtext(c.to_earth, VOLTAGE)} to earth"
    out = [f"Plan: {plan.title or '(untitled)'}",
           f"  task {plan.task}; {supply}, {volts}; site {plan.site or '-'} at "
           f"{qtext(plan.altitude, LENGTH)}{' (wet)' if plan.wet else ''}; connected "
           f"{qtext(plan.duration, TIME)}; on {result.on.isoformat() if result.on else '-'}"]
    if d.transient is not None:
        out.append(f"  expected transient   {qtext(d.transient, VOLTAGE)} peak; "
                   f"source: {d.transient_source}")
    else:
        out.append(f"  expected transient   not known: {d.transient_source}")
    if d.prospective_current is not None:
        out.append(f"  prospective current  {qtext(d.prospective_current, CURRENT)} "
                   f"(source impedance {qtext(d.source_impedance, RESISTANCE)})")
    else:
        out.append("  prospective current  not known (give circuit.source_impedance)")
    if d.energy is not None:
        out.append(f"  stored energy        {qtext(d.energy, ENERGY)} in "
                   f"{qtext(d.capacitance, CAPACITANCE)} at {qtext(d.peak_voltage, VOLTAGE)}")
    else:
        out.append("  stored energy        not given")
    unit = " rms" if c.waveform == "ac" else " dc"
    out.append(f"  hazardous live       above {qtext(d.hazardous_live, VOLTAGE)}{unit}: "
               f"the circuit {'IS' if d.hazardous else 'is not'} hazardous live; "
               f"source: {d.hazardous_live_source}")
    if plan.task == "discharge":
        out.append(f"  safe level           {qtext(d.safe_level, VOLTAGE)}; "
                   f"source: {d.safe_level_source}")
    return out


def accessory_lines(result: Result, *, fold: bool = False) -> list[str]:
    """Every accessory unit that could join a setup, its best verdict and, when none fits,
    the reason (so "do not use these leads" is said).

    With ``fold`` the units of one model that share a verdict and a reason are one row (the
    first unit named, with how many more; the margin only when they all share it), so a lab
    of thousands of copied leads reads as a page; every distinct verdict and reason of every
    model is still printed."""
    if fold:
        return _folded_accessory_lines(result)
    rows = []
    for a in result.accessories:
        setup = f"{a.instrument} {a.mode}" + (
            " with " + ", ".join(t for t in a.accessories if t != a.unit)
            if len(a.accessories) > 1 else "")
        why = "" if a.reason is None else f"{a.reason.check}: {a.reason.message} " \
                                         f"Source: {a.reason.source}."
        rows.append([a.unit, a.kind, a.verdict, _margin(a.margin), setup,
                     why or "fits"])
    return _table(rows, ["unit", "kind", "best verdict", "margin", "in setup",
                         "reason when none fits"])


def _folded_accessory_lines(result: Result) -> list[str]:
    # the accessory units in order, read as runs of units whose rows are alike but for the
    # unit (result_parts: each unit alone unless the result keeps them as runs), so a fleet
    # of thousands of copied leads is folded without a row made per unit
    groups: dict[tuple, list] = {}
    for a, n in result_parts(result.accessories):
        why = "" if a.reason is None else f"{a.reason.check}: {a.reason.message} " \
                                         f"Source: {a.reason.source}."
        groups.setdefault((a.model, a.kind, a.verdict, why), []).append((a, n))
    rows = []
    for (_, kind, verdict, why), parts in groups.items():
        a = parts[0][0]
        count = sum(n for _, n in parts)
        setup = f"{a.instrument} {a.mode}" + (
            " with " + ", ".join(t for t in a.accessories if t != a.unit)
            if len(a.accessories) > 1 else "")
        margins = {u.margin for u, _ in parts}
        margin = _margin(a.margin) if len(margins) == 1 else "varies"
        name = a.unit if count == 1 else f"{a.unit} and {count - 1} more {a.model}"
        rows.append([name, kind, verdict, margin, setup, why or "fits"])
    return _table(rows, ["unit", "kind", "best verdict", "margin", "in setup (first unit)",
                         "reason when none fits"])


def _accessory_explain(result: Result, tag: str) -> list[str]:
    a = result.accessory(tag)
    others = [t for t in a.accessories if t != a.unit]
    out = [f"{a.unit} ({a.kind} {a.model}): best verdict {a.verdict.upper()}, in "
           f"{a.instrument} {a.mode}" + (f" with {', '.join(others)}" if others else "")
           + f", margin {_margin(a.margin)}"]
    if a.reason is not None:
        f = a.reason
        req = needs_has(f)
        out.append(f"  do not use {a.unit}: {f.message}{req}")
        out.append(f"  source: {f.source}")
    out.append("  every finding of that setup:")
    out += _finding_lines(a.findings)
    return out


def needs_has(f) -> str:
    """" [needs X; has Y]" for a finding, naming only the sides it states (no empty half)."""
    parts = ([f"needs {f.required}"] if f.required else []) + \
        ([f"has {f.available}"] if f.available else [])
    return f" [{'; '.join(parts)}]" if parts else ""


def _finding_lines(findings) -> list[str]:
    out = []
    for f in findings:
        req = needs_has(f)
        out.append(f"  {_MARK[f.status]:8} {f.check:10} {f.subject}: {f.message}{req}")
        out.append(f"  {'':8} {'':10} source: {f.source}")
    return out


def explain_lines(result: Result, tag: str) -> list[str]:
    setups = result.setups_for(tag)
    out = [f"Findings for {tag}:"]
    if result.accessory(tag) is not None:
        out += _accessory_explain(result, tag)
        if not setups:
            return out
        out += ["", f"Ranked setups with {tag}:"]
    if not setups:
        why = next((e.reason for e in result.excluded if e.unit == tag), None)
        out.append(f"  {tag} is not offered for this plan"
                   + (f": {why}." if why else ": no setup of it fits the task."))
        return out
    for s in setups:
        acc = ", ".join(s.accessories) or "no accessories"
        out.append("")
        out.append(f"{s.instrument} {s.mode} ({s.mode_label}) with {acc}: {s.verdict.upper()}, "
                   f"margin {_margin(s.margin)}")
        out += _finding_lines(s.findings)
    return out


def render_text(result: Result, *, show_all: bool = False, explain: str | None = None) -> str:
    """The ranked table, the plan's derived values, then the cautions (and with ``explain``
    every finding of that unit's setups)."""
    lines = [result.summary, ""] + derived_lines(result)
    lines.append("")
    shown = result.setups if show_all else result.setups[:DEFAULT_LIMIT]
    if not result.setups:
        lines.append("No setup in the fleet fits this task.")
    else:
        rows = [[str(i), s.instrument, s.mode, ", ".join(s.accessories) or "-",
                 s.verdict, _margin(s.margin), _reason(s)]
                for i, s in enumerate(shown, 1)]
        lines += _table(rows, ["#", "unit", "mode", "accessories", "verdict", "margin",
                               "deciding reason"])
        if len(shown) < len(result.setups):
            lines.append(f"... {len(result.setups) - len(shown)} more setups (use --all)")
    if result.accessories:
        lines.append("")
        lines.append("Accessories (each unit's best setup; the reason when none fits):")
        fold = not show_all and len(result.accessories) > ACCESSORY_FOLD
        lines += accessory_lines(result, fold=fold)
        if fold:
            lines.append(f"... {len(result.accessories)} accessory units: the units of one "
                         "model with the same verdict and reason share a row (use --all to "
                         "list each unit)")
    if result.excluded:
        lines.append("")
        lines.append("Not offered: " + ", ".join(f"{e.unit} ({e.reason})"
                                                for e in result.excluded))
    lines.append("")
    lines.append("Cautions:")
    lines += [f"  - {c}" for c in result.cautions]
    if explain is not None:
        lines.append("")
        lines += explain_lines(result, explain)
    return "\n".join(lines) + "\n"
