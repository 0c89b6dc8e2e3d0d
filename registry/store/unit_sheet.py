"""Units from a spreadsheet (xlsx or csv), one row per unit, with the unit fields of the fleet
file as column headers: tag, model, serial, site, custodian, status, verified_on,
verification_due, notes.

Rows are validated by the fleet file's own rules (``formats.fleet.parse_fleet``) and written by
the same code as a fleet import (``store.fleet.apply_fleet``), so a unit means the same thing
whichever way it arrives. An error names the spreadsheet row (the header is row 1) and the
column, and nothing is written.
"""

from __future__ import annotations

import math
import re
from datetime import date, datetime, time, timedelta
from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import FieldProblem, InvalidInput
from ..formats.common import not_utf8
from ..formats.fleet import FORMAT, UnitDoc, parse_fleet, unit_to_document
from .db import Database
from .fleet import ImportReport, apply_fleet, known_keys
from .specs import all_units, unit_record

if TYPE_CHECKING:
    import pandas as pd

SHEET_SUFFIXES = (".xlsx", ".csv")
COLUMNS = tuple(UnitDoc.model_fields)
_DATE_COLUMNS = ("verified_on", "verification_due")
_UNIT_PATH = re.compile(r"^units\[(\d+)\](?:\.(\w+))?(.*)$")


def is_unit_sheet(path: str | Path) -> bool:
    return Path(path).suffix.lower() in SHEET_SUFFIXES


def _read(path: Path) -> pd.DataFrame:
    import pandas as pd  # here: a third of a second, paid only when a sheet is read
    try:
        if path.suffix.lower() == ".csv":
            # Everything as text: a serial like "0413" must keep its leading zero.
            return pd.read_csv(path, dtype=str, keep_default_na=False, encoding="utf-8-sig")
        return pd.read_excel(path, dtype=object, engine="openpyxl")
    except FileNotFoundError:
        raise InvalidInput(f"file '{path}' does not exist") from None
    except UnicodeDecodeError as exc:
        raise InvalidInput(not_utf8(path, exc)) from None
    except Exception as exc:  # a damaged workbook, a binary file named .csv
        raise InvalidInput(f"cannot read '{path}' as a spreadsheet: "
                           f"{exc.__class__.__name__}: {exc}") from None


def _cell(value, column: str):
    """A cell as the fleet file would hold it: text, a date, or absent (``None``). A time of
    day or a duration is refused (:class:`ValueError`): that is what a spreadsheet makes of
    ``10:1`` typed into a cell, and its text is gone."""
    import pandas as pd  # loaded by _read already
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return None
    if isinstance(value, pd.Timedelta):
        value = value.to_pytimedelta()
    if isinstance(value, (time, timedelta)):
        raise ValueError(f"holds a time ({value}), which is what a spreadsheet makes of text "
                         "such as 10:1; format the cell as text and type it again")
    if isinstance(value, pd.Timestamp):
        value = value.to_pydatetime()
    if isinstance(value, datetime):
        return value.date() if column in _DATE_COLUMNS else value.date().isoformat()
    if isinstance(value, date):
        return value if column in _DATE_COLUMNS else value.isoformat()
    if isinstance(value, float) and value.is_integer():
        value = int(value)  # a serial typed as a number: 1187, not 1187.0
    text = str(value).strip()
    return text or None


def sheet_rows(path: str | Path) -> tuple[list[dict], list[int], list[str]]:
    """The spreadsheet's rows as unit documents, the sheet row number of each (the header
    is row 1; wholly blank lines are skipped) and the unit columns it has. Unknown or missing
    columns raise."""
    p = Path(path)
    df = _read(p)
    headers = [str(c).strip() for c in df.columns]
    problems = [FieldProblem(f"column {h or '(blank)'}", "is not a unit field; the columns "
                             f"are {', '.join(COLUMNS)}")
                for h in headers if h not in COLUMNS and not h.startswith("Unnamed:")]
    for required in ("tag", "model"):
        if required not in headers:
            problems.append(FieldProblem(f"column {required}", "is missing"))
    if problems:
        raise InvalidInput(problems)
    rows, numbers = [], []
    for i, (_, raw) in enumerate(df.iterrows()):
        doc = {}
        for h, v in zip(headers, raw.tolist(), strict=True):
            if h in COLUMNS:
                try:
                    cell = _cell(v, h)
                except ValueError as exc:
                    problems.append(FieldProblem(f"row {i + 2}, column {h}", str(exc)))
                    continue
                if cell is not None:
                    doc[h] = cell
        if doc:
            rows.append(doc)
            numbers.append(i + 2)
    if problems:
        raise InvalidInput(problems)
    return rows, numbers, [h for h in headers if h in COLUMNS]


def _row_problem(p: FieldProblem, row_numbers: list[int]) -> FieldProblem:
    match = _UNIT_PATH.match(p.path)
    if not match:
        return p
    row = row_numbers[int(match.group(1))]
    column = match.group(2)
    where = f"row {row}, column {column}" if column else f"row {row}"
    return FieldProblem(where + (match.group(3) or ""), p.message)


def import_unit_sheet(db: Database, path: str | Path, *, actor: str = "import",
                      user_id: int | None = None, dry_run: bool = False) -> ImportReport:
    """Validate every row, then add or update the units in one transaction; with ``dry_run``
    report what would change and write nothing."""
    p = Path(path)
    df_rows, numbers, columns = sheet_rows(p)
    if not df_rows:
        raise InvalidInput(f"'{p.name}' has no unit rows")
    with db.transaction() as session:
        models_known, sites_known = known_keys(session)
        # A column the sheet does not have keeps the unit's current value (a blank cell in a
        # column it has clears it, as a field left out of a fleet file does).
        current = {u.tag: unit_to_document(unit_record(u)) for u in all_units(session)}
        for doc in df_rows:
            old = current.get(doc.get("tag"))
            if old is not None:
                for name, value in old.items():
                    if name not in columns:
                        doc[name] = value
        try:
            content = parse_fleet({"format": FORMAT, "units": df_rows},
                                  known_models=models_known, known_sites=sites_known)
        except InvalidInput as exc:
            raise InvalidInput([_row_problem(x, numbers) for x in exc.problems]) from None
        report = apply_fleet(session, content, actor=actor, user_id=user_id)
        if dry_run:
            session.rollback()
    return report
