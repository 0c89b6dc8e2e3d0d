"""Units from a spreadsheet: xlsx (written with openpyxl, dates as real date cells) and csv;
a dry run changes nothing; a bad row names its row and column and writes nothing."""

from datetime import date, time, timedelta

import openpyxl
import pytest
from sqlalchemy import func, select

from registry.cli import main
from registry.errors import InvalidInput
from registry.store import models as m
from registry.store.unit_sheet import import_unit_sheet

HEADER = ["tag", "model", "serial", "site", "custodian", "status", "verified_on",
          "verification_due", "notes"]


def snapshot(database):
    with database.transaction() as s:
        units = [(u.tag, u.model.key, u.serial, u.status, u.verified_on, u.verification_due,
                  u.custodian) for u in s.scalars(select(m.Unit).order_by(m.Unit.tag))]
        changes = s.scalar(select(func.count()).select_from(m.Change))
    return units, changes


def xlsx(path, rows):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(HEADER)
    for r in rows:
        ws.append(r)
    wb.save(path)
    return path


GOOD = [
    ["NB-0100", "kx-7", "0419", "North bench", "Ines Marrow", "in-service", date(2026, 11, 1),
     date(2027, 11, 1), None],
    ["NB-0001", "kx-7", "22-0411", "North bench", "Ines Marrow", "in-service",
     date(2026, 3, 1), date(2027, 4, 1), None],
]


def test_xlsx_dry_run_lists_and_changes_nothing(runner, demo, tmp_path):
    before = snapshot(demo)
    path = xlsx(tmp_path / "units.xlsx", GOOD)
    result = runner.invoke(main, ["import", "--dry-run", str(path)])
    assert result.exit_code == 0, result.output
    assert "+ unit NB-0100" in result.output
    assert "~ unit NB-0001 verification_due: 2027-03-01 -> 2027-04-01" in result.output
    assert "nothing was written" in result.output
    assert snapshot(demo) == before


def test_xlsx_import_writes_and_records_changes(demo, tmp_path):
    report = import_unit_sheet(demo, xlsx(tmp_path / "units.xlsx", GOOD), actor="steward")
    assert report.added == ["unit NB-0100"] and report.updated == ["unit NB-0001"]
    with demo.transaction() as s:
        new = s.scalar(select(m.Unit).where(m.Unit.tag == "NB-0100"))
        assert new.serial == "0419" and new.verification_due == date(2027, 11, 1)
        ch = s.scalar(select(m.Change).where(m.Change.entity_key == "NB-0001"))
        assert (ch.field, ch.old, ch.new, ch.actor) == ("verification_due", "2027-03-01",
                                                       "2027-04-01", "steward")


def test_csv_keeps_text_and_columns_it_lacks(demo, tmp_path):
    path = tmp_path / "units.csv"
    path.write_text("tag,model,serial,verification_due\n"
                    "NB-0004,kx-3,K3-1187,2027-02-20\n"
                    "NB-0101,kx-3,007,\n", encoding="utf-8")
    import_unit_sheet(demo, path)
    with demo.transaction() as s:
        u4 = s.scalar(select(m.Unit).where(m.Unit.tag == "NB-0004"))
        # the sheet has no site/custodian/verified_on columns: they stay as they were
        assert u4.site.name == "North bench" and u4.custodian == "Tobias Quell"
        assert u4.verified_on == date(2026, 1, 20) and u4.verification_due == date(2027, 2, 20)
        assert s.scalar(select(m.Unit.serial).where(m.Unit.tag == "NB-0101")) == "007"


@pytest.mark.parametrize("bad_row, message", [
    (["NB-0102", "kx-9", "1", "North bench", "", "in-service", None, None, None],
     "row 3, column model: 'kx-9' is not a model"),
    (["NB-0102", "kx-7", "1", "Moon base", "", "in-service", None, None, None],
     "row 3, column site: 'Moon base' is not a site"),
    (["NB-0102", "kx-7", "1", "North bench", "", "lost", None, None, None],
     "row 3, column status: 'lost' is not allowed"),
    (["NB-0102", "kx-7", "1", "North bench", "", "in-service", date(2027, 1, 1),
      date(2026, 1, 1), None], "row 3, column verification_due: is before verified_on"),
    (["NB-0102", "kx-7", "1", "North bench", "", "in-service", "soon", None, None],
     "row 3, column verified_on"),
])
def test_bad_row_names_row_and_column_and_writes_nothing(runner, demo, tmp_path, bad_row,
                                                         message):
    before = snapshot(demo)
    path = xlsx(tmp_path / "units.xlsx", [GOOD[0], bad_row])
    result = runner.invoke(main, ["import", str(path)])
    assert result.exit_code == 2 and message in result.output, result.output
    assert snapshot(demo) == before


def test_unknown_column_and_missing_tag(demo, tmp_path):
    path = tmp_path / "units.csv"
    path.write_text("model,colour\nkx-7,red\n", encoding="utf-8")
    with pytest.raises(InvalidInput) as err:
        import_unit_sheet(demo, path)
    text = str(err.value)
    assert "column colour: is not a unit field" in text and "column tag: is missing" in text


def test_csv_cells_keep_text_a_yaml_reader_would_convert(demo, tmp_path):
    # YAML 1.1 would read NO as false, 0123 as octal 83 and 10:1 as the base-60 number 601;
    # a spreadsheet cell is text and keeps it exactly.
    path = tmp_path / "units.csv"
    path.write_text("tag,model,serial,notes\nNO,kx-3,0123,10:1 divider\nNB-0103,kx-3,0o17,"
                    "1000:1\n", encoding="utf-8")
    import_unit_sheet(demo, path)
    with demo.transaction() as s:
        rows = dict(s.execute(select(m.Unit.tag, m.Unit.serial)
                              .where(m.Unit.tag.in_(["NO", "NB-0103"]))).all())
        notes = s.scalar(select(m.Unit.notes).where(m.Unit.tag == "NB-0103"))
    assert rows == {"NO": "0123", "NB-0103": "0o17"} and notes == "1000:1"


def test_a_time_cell_is_refused_with_its_row_and_column(runner, demo, tmp_path):
    # A spreadsheet stores 10:1 typed into a cell as the time 10:01 (and 100:1 as a duration
    # of 100 h 1 min); the text is gone, so the cell is refused rather than read as "10:01:00".
    before = snapshot(demo)
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(HEADER)
    ws.append(["NB-0104", "kx-7", time(10, 1), "North bench", "", "in-service", None, None,
               None])
    ws.append(["NB-0105", "kx-7", "1", "North bench", "", "in-service", None, None,
               timedelta(hours=100, minutes=1)])
    ws["I3"].number_format = "[h]:mm"
    wb.save(tmp_path / "units.xlsx")
    result = runner.invoke(main, ["import", str(tmp_path / "units.xlsx")])
    assert result.exit_code == 2, result.output
    assert "row 2, column serial: holds a time (10:01:00)" in result.output
    assert "row 3, column notes: holds a time" in result.output
    assert snapshot(demo) == before


def test_a_csv_that_is_not_utf8_is_a_message(runner, demo, tmp_path):
    path = tmp_path / "units.csv"
    path.write_bytes("tag,model,custodian\nNB-0106,kx-7,Jörg Wendt\n".encode("latin-1"))
    result = runner.invoke(main, ["import", str(path)])
    assert result.exit_code == 2 and "is not UTF-8 text" in result.output
    assert str(path) in result.output and "Traceback" not in result.output
