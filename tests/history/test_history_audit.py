"""The audit workbook read back with openpyxl and pandas, the CSV form, and LibreOffice.

The coverage counts are checked against a count made by hand from seeddata/fleet.yaml (listed
below), not against the code that computes them.
"""

from datetime import date, datetime

import openpyxl
import pandas as pd
import pytest
import yaml

from registry.cli import main
from registry.demo import demo_fleet_path
from registry.store.audit import SHEETS, export_audit
from registry.services.events import log_event

from helpers.libreoffice import libreoffice_csvs

ON = date(2026, 12, 2)

# Hand count, in-service units of the demo fleet (NB-0003 and LD-0011 are on hold, NB-0005
# and BL-0003 retired, SY-0002 and CR-0002 away):
#   instruments: kx-7 x7 (CAT III 900 V, CAT IV 500 V: NB-0001, NB-0002, NB-0007, SY-0005,
#   BL-0001, BL-0006, CR-0001), kx-3 x2 (CAT II 600 V, CAT III 300 V: NB-0004, SY-0007),
#   hd-c40 x1 (CAT IV 600 V, CAT III 1000 V), hd-vt2 x2 (CAT IV 650 V, CAT III 950 V),
#   tm-ir10 x1 (CAT IV 600 V); tm-sc2, ks-dr1, ks-dr25 have 'none' ratings only.
#   accessories: bw-ld4 x5, bw-guard2 x3, bw-jaw5 x1, bw-fx30 x1 (all CAT IV 600 V, CAT III
#   1000 V), bw-ld2 x1 (CAT II 600 V), bw-bare19 x1 (CAT II 1000 V); ks-hv30 is 'none'.
# A higher category stands in for a lower one at the same voltage, not the other way round
# (docs/rules.md, check 2).
HAND_COUNT = {
    ("instruments", "CAT II"): [13, 13, 13, 1],
    ("instruments", "CAT III"): [13, 13, 11, 1],
    ("instruments", "CAT IV"): [11, 11, 4, 0],
    ("accessories", "CAT II"): [12, 12, 12, 11],
    ("accessories", "CAT III"): [10, 10, 10, 10],
    ("accessories", "CAT IV"): [10, 10, 10, 0],
}


@pytest.fixture
def demo_doc():
    return yaml.safe_load(demo_fleet_path().read_text())


@pytest.fixture
def with_events(demo):
    log_event(demo, unit="NB-0001", kind="overvoltage", mode="vdc", voltage=1200.0, by="tech",
              at=datetime(2026, 11, 20, 9, 0))
    log_event(demo, unit="NB-0002", kind="transient", mode="vdc", voltage=2000.0,
              symptoms=["none"], by="tech", at=datetime(2026, 11, 25, 9, 0))
    log_event(demo, unit="SY-0001", kind="mechanical", by="tech", at=datetime(2026, 1, 5, 9, 0))
    return demo


def test_workbook_sheets_rows_types_and_format(with_events, demo_doc, tmp_path):
    out = tmp_path / "audit.xlsx"
    export_audit(with_events, out, on=ON, source="test")
    wb = openpyxl.load_workbook(out)
    assert wb.sheetnames == list(SHEETS)
    units = wb["Units"]
    header = [c.value for c in units[1]]
    assert units.freeze_panes == "A2" and units.auto_filter.ref.startswith("A1:")
    assert units.max_row - 1 == len(demo_doc["units"])  # one row per unit
    col = {name: header.index(name) for name in header}
    rows = {r[0].value: r for r in units.iter_rows(min_row=2)}
    nb7 = rows["NB-0007"]  # due 2026-10-01: 62 days overdue on 2026-12-02 (calendar count)
    assert nb7[col["verification_due"]].is_date
    assert nb7[col["verification_due"]].value.date() == date(2026, 10, 1)
    assert nb7[col["days_overdue"]].value == 62 and nb7[col["days_overdue"]].data_type == "n"
    assert nb7[0].fill.start_color.rgb.endswith("F8CBAD")  # overdue highlight
    assert rows["NB-0001"][col["open_hold"]].value is True
    assert rows["NB-0001"][0].fill.start_color.rgb.endswith("FFE699")  # held highlight
    assert rows["NB-0002"][0].fill.fill_type is None
    assert rows["NB-0001"][col["events_in_period"]].value == 1
    assert units.column_dimensions["A"].width >= len("NB-0001")

    events = pd.read_excel(out, sheet_name="Events")
    assert len(events) == 3  # one row per event
    assert pd.api.types.is_datetime64_any_dtype(events["occurred_at"])
    assert pd.api.types.is_numeric_dtype(events["voltage_V"])
    assert events.loc[events["unit"] == "NB-0001", "voltage_V"].item() == 1200.0
    assert list(events["within_rating"]) == ["no", "yes", "unknown"]
    assert list(events["clamp_conducted"]) == [False, True, False]

    summary = pd.read_excel(out, sheet_name="Summary", nrows=40, usecols="A:C")
    value = {(r.section, r.item): r.value for r in summary.itertuples()
             if isinstance(r.section, str)}
    assert value[("chain", "state")] == "intact"
    assert value[("events", "in the period")] == 3
    assert value[("units", "overdue")] == 1  # NB-0007 (retired units are not counted)
    assert value[("status", "on-hold")] == 4  # NB-0003, LD-0011 by status; NB-0001, SY-0001 held

    findings = pd.read_excel(out, sheet_name="Findings")
    kinds = set(zip(findings["finding"], findings["subject"], strict=True))
    assert ("overdue", "NB-0007") in kinds and ("due soon", "SY-0004") in kinds
    assert ("accessory below instrument", "bw-ld2") in kinds
    assert ("missing data", "tm-sc2") in kinds  # 'none' rating without a transient
    assert ("long hold", "SY-0001") not in kinds  # its hold opened when it was logged, today


def _coverage_from_sheet(path):
    ws = openpyxl.load_workbook(path)["Summary"]
    rows = [[c.value for c in r] for r in ws.iter_rows()]
    start = next(i for i, r in enumerate(rows) if r[0] == "units" and r[1] == "category")
    header = rows[start]
    assert header[2:6] == ["150 V", "300 V", "600 V", "1000 V"]
    return {(r[0], r[1]): r[2:6] for r in rows[start + 1:start + 7]}


def test_coverage_against_the_hand_count(demo, tmp_path):
    out = tmp_path / "audit.xlsx"
    export_audit(demo, out, on=ON)
    assert _coverage_from_sheet(out) == HAND_COUNT


def test_csv_form(with_events, demo_doc, tmp_path):
    folder = tmp_path / "audit"
    result = export_audit(with_events, str(folder) + "/", on=ON)
    assert "9 CSV files" in result
    units = pd.read_csv(folder / "units.csv")
    assert len(units) == len(demo_doc["units"])
    assert units.loc[units["tag"] == "NB-0007", "verification_due"].item() == "2026-10-01"
    assert units.loc[units["tag"] == "NB-0007", "days_overdue"].item() == 62
    coverage = pd.read_csv(folder / "coverage.csv")
    assert {(r["units"], r["category"]): [r["150 V"], r["300 V"], r["600 V"], r["1000 V"]]
            for _, r in coverage.iterrows()}[("instruments", "CAT III")] == [11, 11, 9, 0]
    # NB-0001 (kx-7, CAT III 900 V) and SY-0001 (hd-c40, CAT III 1000 V) are held now: two
    # fewer than the hand count up to 600 V, and the 1000 V column loses the C40, its only one
    assert len(pd.read_csv(folder / "events.csv")) == 3


def test_since_and_site_filter(with_events, tmp_path):
    out = tmp_path / "a.xlsx"
    export_audit(with_events, out, on=ON, since=date(2026, 11, 1), site="North bench")
    units = pd.read_excel(out, sheet_name="Units")
    assert set(units["site"]) == {"North bench"}
    events = pd.read_excel(out, sheet_name="Events")
    assert sorted(events["unit"]) == ["NB-0001", "NB-0002"]  # SY-0001's is elsewhere, earlier


def test_cli_export_and_bad_out(runner, demo, tmp_path):
    ok = runner.invoke(main, ["audit", "export", "--out", str(tmp_path / "x.xlsx")])
    assert ok.exit_code == 0 and (tmp_path / "x.xlsx").exists()
    bad = runner.invoke(main, ["audit", "export", "--out", str(tmp_path / "x.pdf")])
    assert bad.exit_code == 2 and "--out" in bad.output
    site = runner.invoke(main, ["audit", "export", "--out", str(tmp_path / "y.xlsx"),
                                "--site", "Moon base"])
    assert site.exit_code == 2 and "'Moon base' is not a site" in site.output


def test_demo_workbook_opens_in_libreoffice(with_events, demo_doc, tmp_path):
    out = tmp_path / "audit.xlsx"
    export_audit(with_events, out, on=ON)
    libreoffice_csvs(out, tmp_path)
    units = tmp_path / "lo" / "audit-Units.csv"
    assert units.exists(), sorted(p.name for p in (tmp_path / "lo").iterdir())
    read = pd.read_csv(units)
    assert len(read) == len(demo_doc["units"])
    # LibreOffice shows the date cells in the format the workbook set
    assert read.loc[read["tag"] == "NB-0007", "verification_due"].item() == "2026-10-01"
    summary = (tmp_path / "lo" / "audit-Summary.csv").read_text()
    assert "made at (UTC)" in summary and "intact" in summary


def test_days_open_is_in_days_to_one_decimal_and_dates_are_dates(demo, tmp_path):
    from sqlalchemy import update
    from registry.store import models as m
    from registry.services.holds import release_hold
    log_event(demo, unit="NB-0002", kind="overvoltage", mode="vdc", voltage=400.0,
              symptoms=["smell"], by="tech", at=datetime(2026, 11, 1, 8, 0))
    release_hold(demo, unit="NB-0002", result="pass", by="steward")
    # opened 2026-11-01 08:00, released 36 hours later: 1.5 days (arithmetic)
    with demo.engine.begin() as conn:
        conn.execute(update(m.Hold).where(m.Hold.unit_id == select_unit_id(conn, "NB-0002"))
                     .values(opened_at=datetime(2026, 11, 1, 8, 0),
                             released_at=datetime(2026, 11, 2, 20, 0)))
    out = tmp_path / "audit.xlsx"
    export_audit(demo, out, on=ON)
    ws = openpyxl.load_workbook(out)["Holds"]
    head = [c.value for c in ws[1]]
    rows = [r for r in ws.iter_rows(min_row=2) if r[head.index("unit")].value == "NB-0002"
            and r[head.index("released_at")].value is not None]
    days = rows[-1][head.index("days_open")]
    assert days.value == 1.5 and days.number_format == "0.0"
    assert isinstance(rows[-1][head.index("opened_at")].value, datetime)


def select_unit_id(conn, tag):
    from sqlalchemy import select
    from registry.store import models as m
    return conn.execute(select(m.Unit.id).where(m.Unit.tag == tag)).scalar_one()
