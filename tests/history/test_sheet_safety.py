"""Spreadsheet safety: registry text that looks like a formula is written as text.

The rule is OWASP's guidance on CSV injection (owasp.org/www-community/attacks/CSV_Injection):
a cell whose text begins with '=', '+', '-', '@', a tab or a carriage return is read by
spreadsheet programs as a formula; in a CSV file such text gets a leading apostrophe, and in
the xlsx workbook the cell is typed as a string. The hostile text goes in through the real
paths (the `withstand import` and `withstand event add` commands) and the exported workbook is
read back by openpyxl, pandas, LibreOffice and as raw sheet XML.
"""

import csv
import io
import json
import re
import subprocess
import zipfile
from datetime import date

import openpyxl
import pandas as pd
import pytest

from registry.cli import main
from registry.store.audit import export_audit
from registry.store.cells import (FORMULA_START, formula_like, safe_cell, safe_frame,
                                   write_csv)

from helpers.libreoffice import libreoffice_csvs, soffice

ON = date(2026, 12, 2)

# The six ways a cell starts a formula, per OWASP's CSV injection guidance.
HOSTILE = ['=HYPERLINK("http://example.invalid","x")', "+1+1", "-2+3", "@SUM(A1)", "\t=1",
           "\r=1"]
ORDINARY = "Annex shelf, row 2"
TEXTS = HOSTILE + [ORDINARY]
TAGS = [f"ZZ-{i:04d}" for i in range(len(TEXTS))]


MULTILINE = ("notes",)  # a note may hold tabs and line breaks; every other text is one line


def one_line(text: str) -> str:
    """The text as a one-line field takes it: those refuse a tab or a carriage return (the
    fleet format's text rule), so those two leaders become '-' and '@', still ones that start a
    formula."""
    lead = {"\t": "-", "\r": "@"}.get(text[:1])
    return lead + text[1:] if lead else text


def as_field(field: str, text: str) -> str:
    return text if field in MULTILINE else one_line(text)


def escaped(text: str) -> str:
    """The CSV cell OWASP's guidance asks for: an apostrophe before a formula-like text."""
    return "'" + text if text[:1] in ("=", "+", "-", "@", "\t", "\r") else text


def read_back(text: str) -> str:
    """What an XML reader gives back for the text: XML 1.0 section 2.11 (end-of-line
    handling) turns a raw carriage return into a line feed, and openpyxl without lxml writes
    the CR raw. The cell is still text, which is what this file checks."""
    return text.replace("\r", "\n")


def fleet_doc(custodian):
    return {"format": "withstand-fleet/1",
            "sites": [{"name": one_line(t)} for t in TEXTS],
            "models": [{"key": f"zz-{i}", "maker": one_line(t), "name": one_line(t),
                        "kind": "test-leads"} for i, t in enumerate(TEXTS)],
            "units": [{"tag": tag, "model": f"zz-{i}", "serial": one_line(t),
                       "site": one_line(t), "custodian": one_line(custodian(t)), "notes": t}
                      for i, (tag, t) in enumerate(zip(TAGS, TEXTS, strict=True))]}


@pytest.fixture
def hostile(runner, demo, tmp_path):
    """The demo fleet plus a site, a model and a unit for every hostile text, imported with
    the CLI; a re-import sets the custodians (so the Changes sheet carries them too), and an
    event with the text as its note is logged on each unit."""
    for n, custodian in enumerate((lambda t: "Mara Vell", lambda t: t)):
        path = tmp_path / f"fleet-{n}.json"
        path.write_text(json.dumps(fleet_doc(custodian)), encoding="utf-8")
        result = runner.invoke(main, ["import", str(path)])
        assert result.exit_code == 0, result.output
    for tag, t in zip(TAGS, TEXTS, strict=True):
        result = runner.invoke(main, ["event", "add", "--unit", tag, "--kind", "mechanical",
                                      f"--note={t}", "--by", "tech",
                                      "--at", "2026-11-30T10:00:00"])
        assert result.exit_code == 0, result.output
    return demo


def _rows(ws):
    header = [c.value for c in ws[1]]
    return header, list(ws.iter_rows(min_row=2))


def test_workbook_holds_text_not_formulas(hostile, tmp_path):
    out = tmp_path / "audit.xlsx"
    export_audit(hostile, out, on=ON, source="test")
    wb = openpyxl.load_workbook(out)
    formulas = [f"{ws.title}!{c.coordinate}" for ws in wb for row in ws.iter_rows()
                for c in row if c.data_type == "f"]
    assert formulas == []

    header, rows = _rows(wb["Units"])
    col = {h: i for i, h in enumerate(header)}
    units = {r[col["tag"]].value: r for r in rows}
    for tag, t in zip(TAGS, TEXTS, strict=True):
        for field in ("serial", "site", "custodian", "notes", "model_name", "maker"):
            cell = units[tag][col[field]]
            assert (cell.value, cell.data_type) == (read_back(as_field(field, t)), "s"), \
                (tag, field)
    header, rows = _rows(wb["Models"])
    names = {r[header.index("key")].value: r[header.index("name")] for r in rows}
    assert [names[f"zz-{i}"].value for i in range(len(TEXTS))] == [one_line(t) for t in TEXTS]
    header, rows = _rows(wb["Events"])
    notes = {r[header.index("unit")].value: r[header.index("notes")].value for r in rows}
    assert [notes[tag] for tag in TAGS] == [read_back(t) for t in TEXTS]
    header, rows = _rows(wb["Changes"])
    new = {r[header.index("key")].value: r[header.index("new")].value for r in rows
           if r[header.index("field")].value == "custodian"}
    assert [new[tag] for tag in TAGS] == [one_line(t) for t in TEXTS]
    # numbers stay numbers
    days = units["NB-0007"][col["days_overdue"]]
    assert (days.value, days.data_type) == (62, "n")

    # pandas reads the same text
    frame = pd.read_excel(out, sheet_name="Units", dtype=object).set_index("tag")
    assert list(frame.loc[TAGS, "serial"]) == [one_line(t) for t in TEXTS]
    assert list(frame.loc[TAGS, "site"]) == [one_line(t) for t in TEXTS]

    # the raw XML of every sheet: no formula element (<f>, ECMA-376 Part 1, 18.3.1.40, the
    # clause number from memory)
    with zipfile.ZipFile(out) as z:
        sheets = [n for n in z.namelist() if n.startswith("xl/worksheets/sheet")]
        assert len(sheets) == len(wb.sheetnames)
        for name in sheets:
            assert not re.search(rb"<(\w+:)?f[\s>/]", z.read(name)), name


def test_csvs_prefix_formula_text_with_an_apostrophe(hostile, tmp_path):
    folder = tmp_path / "audit"
    export_audit(hostile, str(folder) + "/", on=ON)
    files = sorted(folder.glob("*.csv"))
    assert len(files) == 9
    for path in files:
        with path.open(newline="", encoding="utf-8") as f:
            rows = list(csv.reader(f))
        # a CR inside a field is quoted, so it does not split the record (RFC 4180, 2)
        assert {len(r) for r in rows} == {len(rows[0])}, path.name
        for row in rows:
            for value in row:
                if value.startswith(FORMULA_START):
                    float(value)  # only a number may begin so (a negative number)
    with (folder / "units.csv").open(newline="", encoding="utf-8") as f:
        units = {r["tag"]: r for r in csv.DictReader(f)}
    for tag, t in zip(TAGS, TEXTS, strict=True):
        for field in ("serial", "site", "custodian", "notes", "model_name", "maker"):
            # OWASP: the apostrophe marks the cell as text
            assert units[tag][field] == escaped(as_field(field, t)), (tag, field)
    assert units["NB-0007"]["days_overdue"] == "62"
    events = pd.read_csv(folder / "events.csv", dtype=str, keep_default_na=False)
    assert sorted(events.loc[events["unit"].isin(TAGS), "notes"]) == sorted(
        "'" + t if t in HOSTILE else t for t in TEXTS)


def test_libreoffice_computes_no_formula(hostile, tmp_path):
    out = tmp_path / "audit.xlsx"
    export_audit(hostile, out, on=ON)
    libreoffice_csvs(out, tmp_path)
    with (tmp_path / "lo" / "audit-Units.csv").open(newline="", encoding="utf-8") as f:
        units = {r["tag"]: r for r in csv.DictReader(f)}
    for tag, t in zip(TAGS, TEXTS, strict=True):
        for field in ("serial", "site", "custodian", "notes", "model_name"):
            # the literal text, not a result: '=HYPERLINK(...)' would show "x", '+1+1' "2"
            assert units[tag][field] == read_back(as_field(field, t)), \
                (tag, field, units[tag][field])
    with (tmp_path / "lo" / "audit-Events.csv").open(newline="", encoding="utf-8") as f:
        notes = {r["unit"]: r["notes"] for r in csv.DictReader(f)}
    assert [notes[tag] for tag in TAGS] == [read_back(t) for t in TEXTS]


def test_safe_cell_escapes_text_only(tmp_path):
    # OWASP CSV injection guidance: text starting with = + - @ tab CR gets an apostrophe
    assert [safe_cell(t) for t in HOSTILE] == ["'" + t for t in HOSTILE]
    assert safe_cell(ORDINARY) == ORDINARY
    assert safe_cell("") == "" and safe_cell(None) is None
    # a negative number is a number, not text beginning with '-'
    assert safe_cell(-2.5) == -2.5 and safe_cell(-3) == -3
    assert not formula_like(-1) and formula_like("-1")
    frame = pd.DataFrame({"v": [-2.5, 1.0], "n": pd.array([-3, None], dtype="Int64"),
                          "t": ["-2+3", "ok"]})
    assert safe_frame(frame).to_csv(index=False).splitlines() == [
        "v,n,t", "-2.5,-3,'-2+3", "1.0,,ok"]
    path = tmp_path / "t.csv"
    write_csv(pd.DataFrame({"t": ["\r=1", "a\nb"], "v": [-1.5, 2.0]}), path, index=False)
    # RFC 4180, 2: CRLF line breaks; a field holding CR or LF is enclosed in double quotes
    assert path.read_bytes() == b't,v\r\n"\'\r=1",-1.5\r\n"a\nb",2.0\r\n'


def test_safe_cell_types_an_openpyxl_cell_as_text():
    ws = openpyxl.Workbook().active
    for i, t in enumerate(HOSTILE + ["#N/A"], 1):
        cell = ws.cell(row=i, column=1)
        safe_cell(t, cell=cell)
        assert (cell.value, cell.data_type) == (t, "s")
    number = ws.cell(row=20, column=1)
    safe_cell(-2.5, cell=number)
    assert (number.value, number.data_type) == (-2.5, "n")


def test_libreoffice_opens_the_csvs_with_no_formula(hostile, tmp_path):
    """LibreOffice reads the CSV files with formula evaluation switched on (the 13th token of
    its CSV filter options): the unescaped text would become formula cells there (checked on
    a control file), the escaped text stays text (OWASP CSV injection guidance)."""
    exe = soffice()
    folder = tmp_path / "audit"
    export_audit(hostile, str(folder) + "/", on=ON)
    control = tmp_path / "control.csv"
    control.write_text('a\r\n"=1+1"\r\n', encoding="utf-8")
    names = ["units", "models", "events", "changes", "findings"]
    inputs = [str(folder / f"{n}.csv") for n in names] + [str(control)]
    proc = subprocess.run(
        [exe, f"-env:UserInstallation=file://{tmp_path / 'lo-profile'}", "--headless",
         "--infilter=CSV:44,34,76,1,,0,false,true,false,false,false,,true",
         "--convert-to", "xlsx", "--outdir", str(tmp_path / "lo"), *inputs],
        capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    ctrl = openpyxl.load_workbook(tmp_path / "lo" / "control.xlsx").active["A2"]
    assert ctrl.data_type == "f"  # the control: evaluation is on, bare '=1+1' is a formula
    for n in names:
        ws = openpyxl.load_workbook(tmp_path / "lo" / f"{n}.xlsx").active
        assert [c.coordinate for row in ws.iter_rows() for c in row
                if c.data_type == "f"] == [], n
    header, rows = _rows(openpyxl.load_workbook(tmp_path / "lo" / "units.xlsx").active)
    units = {r[header.index("tag")].value: r for r in rows}
    serials = [units[tag][header.index("serial")] for tag in TAGS]
    assert [(c.value, c.data_type) for c in serials] == [
        (escaped(one_line(t)), "s") for t in TEXTS]
    days = units["NB-0007"][header.index("days_overdue")]
    assert (days.value, days.data_type) == (62, "n")  # numbers are still numbers


def test_web_download_holds_no_formula(hostile, client, login_as):
    """The audit download of the web (and the API, which serves the same bytes) holds the
    text as text; a note typed into the web's event form is hostile too."""
    login_as(client, "technician")
    page = client.get("/units/NB-0003/events/new").get_data(as_text=True)
    token = re.search(r'name="csrf_token"[^>]*value="([^"]+)"', page).group(1)
    posted = client.post("/units/NB-0003/events/new", data={
        "csrf_token": token, "kind": "mechanical", "note": HOSTILE[0]})
    assert posted.status_code in (200, 302)
    response = client.get("/audit/workbook.xlsx")
    assert response.status_code == 200
    with zipfile.ZipFile(io.BytesIO(response.data)) as z:
        for name in z.namelist():
            if name.startswith("xl/worksheets/sheet"):
                assert not re.search(rb"<(\w+:)?f[\s>/]", z.read(name)), name
    header, rows = _rows(openpyxl.load_workbook(io.BytesIO(response.data))["Events"])
    notes = [(r[header.index("notes")].value, r[header.index("notes")].data_type)
             for r in rows if r[header.index("unit")].value == "NB-0003"]
    assert notes == [(HOSTILE[0], "s")]
