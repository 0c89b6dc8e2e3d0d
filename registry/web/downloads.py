"""Files a page or the API hands out: the audit workbook as an xlsx download. Not a
blueprint, so the audit page and the API share it."""

from __future__ import annotations

import tempfile
from datetime import date
from pathlib import Path

from flask import Response

from ..extensions import db

XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"


def workbook_bytes(since: date | None, site: str | None) -> bytes:
    """The audit workbook, built by the store's exporter into a scratch file."""
    from ..store.audit import export_audit
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "audit.xlsx"
        export_audit(db.database, str(path), since=since, site=site, on=None,
                     source="web")
        return path.read_bytes()


def workbook_response(since: date | None, site: str | None) -> Response:
    name = "withstand-audit" + (f"-{site}" if site else "") + (f"-since-{since}" if since else "")
    name = "".join(ch if ch.isalnum() or ch in "-_." else "-" for ch in name)
    return Response(workbook_bytes(since, site), mimetype=XLSX,
                    headers={"Content-Disposition": f'attachment; filename="{name}.xlsx"'})
