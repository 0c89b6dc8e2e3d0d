"""LibreOffice (Debian's libreoffice-calc) converting workbooks to CSV: what a reader other
than openpyxl makes of the audit workbook and of hostile cells."""

import os
import shutil
import subprocess

import pytest


def soffice():
    exe = shutil.which("soffice") or shutil.which("libreoffice")
    if exe is None:
        if os.environ.get("WITHSTAND_REQUIRE_TOOLS") == "1":
            pytest.fail("LibreOffice (soffice) is required here (WITHSTAND_REQUIRE_TOOLS=1)")
        pytest.skip("LibreOffice is not installed (Debian package libreoffice-calc)")
    return exe


def libreoffice_csvs(workbook, tmp_path):
    """Every sheet of ``workbook`` as LibreOffice converts it to CSV, into ``tmp_path/lo``.
    Filter options: comma separated, UTF-8 (76), and sheet -1: every sheet to its own file
    (LibreOffice 7.2 and later)."""
    exe = soffice()
    proc = subprocess.run(
        [exe, f"-env:UserInstallation=file://{tmp_path / 'lo-profile'}", "--headless",
         "--convert-to",
         "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,false,true,false,false,false,-1",
         "--outdir", str(tmp_path / "lo"), str(workbook)],
        capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
