"""Spreadsheet safety: text from the registry (a model name, a serial, a site, a note) written
to a workbook or a CSV file stays text and never becomes a formula that a spreadsheet runs.

The rule follows OWASP's guidance on CSV injection (owasp.org/www-community/attacks/
CSV_Injection): a cell whose text begins with ``=``, ``+``, ``-``, ``@``, a tab or a carriage
return is taken by spreadsheet programs as the start of a formula, so such text is written
with a leading apostrophe in a CSV file, which the programs read as "this cell is text".
Only text is escaped: a number (a negative one too) stays a number.

In an xlsx workbook the cell's own type says what it is: openpyxl stores a ``str`` that begins
with ``=`` as a formula (``data_type == "f"``, an ``<f>`` element in the sheet's XML), so every
text cell is set to openpyxl's string type (``"s"``, written as an inline string) and the text
is kept exactly, with no apostrophe. Every writer of a spreadsheet or CSV goes through
:func:`safe_cell` (a CSV file through :func:`write_csv`).

A CSV file's lines end in CRLF, as RFC 4180 (section 2) has them: Python's csv writer quotes a
field only when it holds a character of the line ending, so with a bare LF a carriage return
inside a field would go out unquoted and split the record, and the text after it (``=1``)
would open a line of its own, a formula again.
"""

from __future__ import annotations

# OWASP CSV injection guidance: the characters that make a cell a formula.
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def formula_like(value) -> bool:
    """Whether ``value`` is text a spreadsheet would take as a formula."""
    return isinstance(value, str) and value.startswith(FORMULA_START)


def safe_cell(value, *, cell=None):
    """``value`` as a cell that cannot run.

    Without ``cell``: the value for a CSV file, formula-like text with an apostrophe in front
    (OWASP CSV injection guidance), anything else unchanged. With an openpyxl ``cell``: the
    value is put in the cell and, when it is text, the cell is typed as a string, so it is
    stored as text, never as a formula (``"=..."``) or an error code (``"#N/A"``). Returns the
    value written."""
    if cell is None:
        return "'" + value if formula_like(value) else value
    cell.value = value
    if isinstance(value, str):
        cell.data_type = "s"
    return value


def safe_sheet(ws) -> None:
    """Every cell of an openpyxl worksheet through :func:`safe_cell`: a sheet written by
    pandas (``to_excel``) or by hand holds no formula afterwards."""
    for row in ws.iter_rows():
        for cell in row:
            if isinstance(cell.value, str):
                safe_cell(cell.value, cell=cell)


def safe_frame(df):
    """A copy of a table for ``to_csv``: every text cell and header through
    :func:`safe_cell`."""
    from pandas.api.types import is_object_dtype, is_string_dtype
    out = df.copy()
    for col in out.columns:
        if is_object_dtype(out[col]) or is_string_dtype(out[col]):
            out[col] = out[col].map(safe_cell)
    out.columns = [safe_cell(c) for c in out.columns]
    return out


def write_csv(df, path, **options) -> None:
    """``df`` as a CSV file at ``path`` (``options`` go to ``DataFrame.to_csv``): every text
    cell through :func:`safe_frame`, CRLF line endings so that a field holding a CR or LF is
    quoted (RFC 4180, section 2)."""
    safe_frame(df).to_csv(path, lineterminator="\r\n", **options)
