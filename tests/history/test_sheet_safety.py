"""Text that looks like a formula is written as text: in the audit workbook (openpyxl's string
type, no <f> element in the sheet XML) and in the CSVs (a leading apostrophe), following
OWASP's guidance on CSV injection ("CSV Injection", OWASP community pages: cells beginning
with =, +, -, @, tab or carriage return). Read back with openpyxl, pandas and LibreOffice."""

import csv
import re
import subprocess
import zipfile
from datetime import date, datetime

import openpyxl
import pandas as pd
import pytest
import yaml

from registry.demo import demo_fleet_path
from registry.store.audit import csv_cell, export_audit
from registry.store.events import log_event
from registry.store.fleet import import_fleet

from test_history_audit import _soffice

ON = date(2026, 12, 2)
LINK = '=HYPERLINK("http://example.invalid","x")'
HOSTILE = {"model name": LINK, "serial": "+1+1", "site": "@SUM(A1)", "custodian": "-2+3",
           "note": "\t=1+1"}


@pytest.fixture
def hostile(demo):
    doc = yaml.safe_load(demo_fleet_path().read_text(encoding="utf-8"))
    for site in doc["sites"]:
        if site["name"] == "North bench":
            site["name"] = HOSTILE["site"]
    for model in doc["models"]:
        if model["key"] == "hd-c40":
            model["name"] = HOSTILE["model name"]
    for unit in doc["units"]:
        if unit.get("site") == "North bench":
            unit["site"] = HOSTILE["site"]
        if unit["tag"] == "NB-0002":
            unit["serial"] = HOSTILE["serial"]
            unit["custodian"] = HOSTILE["custodian"]
    import_fleet(demo, doc, actor="steward")
    log_event(demo, unit="NB-0001", kind="overvoltage", mode="vdc", voltage=1200.0,
              by="tech", note=HOSTILE["note"], at=datetime(2026, 11, 20, 9, 0))
    return demo


def _cells(book):
    for ws in book.worksheets:
        for row in ws.iter_rows():
            yield from row


def test_workbook_keeps_formula_like_text_as_text(hostile, tmp_path):
    out = tmp_path / "audit.xlsx"
    export_audit(hostile, out, on=ON)
    book = openpyxl.load_workbook(out)
    cells = list(_cells(book))
    assert not [c.coordinate for c in cells if c.data_type == "f"]
    values = {c.value for c in cells}
    for text in HOSTILE.values():
        assert text in values, text
    # no formula element in any sheet's XML
    with zipfile.ZipFile(out) as z:
        for name in z.namelist():
            if name.startswith("xl/worksheets/"):
                assert "<f>" not in z.read(name).decode() and "<f " not in z.read(name).decode()
    units = pd.read_excel(out, sheet_name="Units", dtype=object)
    assert HOSTILE["serial"] in set(units["serial"]) and HOSTILE["site"] in set(units["site"])
    # a negative number is still a number: demo margins and counts are not turned into text
    assert all(not isinstance(c.value, str) or not c.value.startswith("'") for c in cells)


def test_csvs_prefix_formula_like_text_with_an_apostrophe(hostile, tmp_path):
    folder = tmp_path / "csv"
    export_audit(hostile, str(folder) + "/", on=ON)
    seen = set()
    for path in folder.glob("*.csv"):
        with path.open(encoding="utf-8", newline="") as f:
            for row in csv.reader(f):
                for cell in row:
                    assert not re.match(r"[=+\-@\t\r]", cell), (path.name, cell)
                    seen.add(cell)
    for text in HOSTILE.values():
        assert "'" + text in seen, text


@pytest.mark.parametrize("value, written", [
    ("=1+1", "'=1+1"), ("+1", "'+1"), ("-x", "'-x"), ("@A1", "'@A1"), ("\t=1", "'\t=1"),
    ("\r=1", "'\r=1"), ("plain", "plain"), ("a=b", "a=b"), (-3.5, -3.5), (-2, -2), (None, None),
])
def test_csv_cell(value, written):
    assert csv_cell(value) == written


def test_libreoffice_computes_nothing_from_the_workbook(hostile, tmp_path):
    exe = _soffice()
    out = tmp_path / "audit.xlsx"
    export_audit(hostile, out, on=ON)
    profile = tmp_path / "lo-profile"
    proc = subprocess.run(
        [exe, f"-env:UserInstallation=file://{profile}", "--headless", "--convert-to",
         "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,false,true,false,false,false,-1",
         "--outdir", str(tmp_path / "lo"), str(out)],
        capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    text = "".join(p.read_text(encoding="utf-8") for p in (tmp_path / "lo").glob("*.csv"))
    # LibreOffice shows the literal text; a formula would have become its result
    for needle in (HOSTILE["serial"], HOSTILE["site"], HOSTILE["custodian"], "HYPERLINK"):
        assert needle in text, needle
