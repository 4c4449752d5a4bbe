"""Spreadsheets (.xlsx): one sheet read as a :class:`~sitesettle.io.tables.Table`.

The rules are those of a CSV file (:mod:`sitesettle.io.tables`): the first row
that is neither blank nor a comment (first cell starting with ``#``) is the
header, a header may carry its column's unit in brackets (``width [ft]``), a cell
may carry its own unit (``"1.2 m"``). Rows are named as the spreadsheet shows
them (``row 5``), and the table as ``schedule.xlsx sheet "Footings"``.

The workbook is read with openpyxl (the engine pandas uses for .xlsx). Refused,
each with a message naming the cells:

* merged cells in the header or the data (a merged range keeps its value in its
  first cell only, the others would read as blank);
* a formula whose result the file does not hold (a workbook written by a program
  that does not compute formulas: open and save it in a spreadsheet program);
* a cell holding an error value (``#DIV/0!``, ``#REF!`` ...).
"""

from __future__ import annotations

import datetime
import io
import pathlib
import zipfile

from sitesettle.errors import InputError
from sitesettle.io import files
from sitesettle.io.tables import Row, Table, _new_table

#: suffixes read as spreadsheets
SHEET_SUFFIXES = (".xlsx", ".xlsm")
#: the error values a spreadsheet cell may hold
_ERRORS = ("#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#GETTING_DATA")


def _workbook_bytes(path: pathlib.Path, what: str) -> bytes:
    """The file's bytes after the guards of :mod:`sitesettle.io.files`, checked to be an
    .xlsx package (a zip holding ``xl/workbook.xml``) that unpacks to at most
    :data:`~sitesettle.io.files.MAX_INPUT_BYTES`."""
    data = files.read_bytes(path, what)
    if not data.startswith(b"PK\x03\x04"):
        hint = (
            " (an old .xls workbook? save it as .xlsx)" if data[:4] == b"\xd0\xcf\x11\xe0" else ""
        )
        raise InputError(
            path.name,
            f"the {what} is not an .xlsx workbook (its content does not match its suffix)" + hint,
            "a workbook saved as .xlsx (Excel, LibreOffice: 'Excel 2007-365')",
        )
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as zf:
            members = zf.infolist()
            names = {m.filename for m in members}
            total = sum(m.file_size for m in members)
    except zipfile.BadZipFile:
        raise InputError(
            path.name, f"the {what} is a damaged .xlsx workbook", "a workbook saved as .xlsx"
        ) from None
    if "xl/workbook.xml" not in names:
        raise InputError(
            path.name,
            f"the {what} is a zip archive but not an .xlsx workbook",
            "a workbook saved as .xlsx",
        )
    if total > files.MAX_INPUT_BYTES:
        raise InputError(
            path.name,
            f"the workbook unpacks to {total / 2**20:.0f} MB",
            "a workbook of at most 200 MB unpacked",
        )
    return data


def _load(data: bytes, path: pathlib.Path, *, formulas: bool):
    import openpyxl

    try:
        return openpyxl.load_workbook(io.BytesIO(data), data_only=not formulas)
    except Exception as exc:  # openpyxl raises many kinds for damaged packages
        raise InputError(
            path.name, f"cannot read the workbook ({type(exc).__name__}: {exc})", "an .xlsx file"
        ) from None


def _cell_value(value):
    if isinstance(value, datetime.datetime | datetime.date | datetime.time):
        return value.isoformat()
    if isinstance(value, str):
        return value.strip()
    return value


def read_sheet(path: pathlib.Path, sheet: str | None, what: str = "file") -> Table:
    """One sheet of an .xlsx workbook as a :class:`Table`.

    Parameters
    ----------
    path : pathlib.Path
        The workbook.
    sheet : str or None
        The sheet's name; None is allowed only for a workbook of one sheet.
    what : str
        What the file is (``"footings file"``), for messages.
    """
    path = pathlib.Path(path)
    data = _workbook_bytes(path, what)
    book = _load(data, path, formulas=True)  # formulas as written: to find them
    names = list(book.sheetnames)
    if sheet is None:
        if len(names) != 1:
            raise InputError(
                path.name,
                f"the workbook has {len(names)} sheets and no sheet is named in site.toml",
                f'sheet = "name" beside the file (one of {", ".join(repr(n) for n in names)})',
            )
        sheet = names[0]
    if sheet not in names:
        raise InputError(
            path.name,
            f"the workbook has no sheet {sheet!r}",
            f"one of its sheets: {', '.join(repr(n) for n in names)}",
        )
    ws = book[sheet]
    source = f'{path.name} sheet "{sheet}"'
    merged = sorted(ws.merged_cells.ranges, key=lambda r: (r.min_row, r.min_col))
    formula_cells = {c.coordinate for row in ws.iter_rows() for c in row if c.data_type == "f"}
    # the results the file saved for its formulas (None where it saved none)
    values_ws = _load(data, path, formulas=False)[sheet] if formula_cells else ws

    table: Table | None = None
    header_row = 0
    lead = 0  # empty columns left of the table
    # from A1, so that rows and columns are numbered as the spreadsheet shows them even
    # when the first rows or columns are empty
    for cells in values_ws.iter_rows(min_row=1, min_col=1):
        r = cells[0].row
        vals = []
        for c in cells:
            v = c.value
            if c.coordinate in formula_cells:
                if v is None:
                    raise InputError(
                        f"{source} cell {c.coordinate}",
                        "a formula without a saved result",
                        "values, or a workbook saved by a spreadsheet program (which stores "
                        "each formula's result)",
                    )
            if isinstance(v, str) and v.strip() in _ERRORS:
                raise InputError(
                    f"{source} cell {c.coordinate}",
                    f"the cell holds the error value {v.strip()}",
                    "a number or a text",
                )
            vals.append(_cell_value(v))
        if not any(v is not None and v != "" for v in vals):
            continue
        if table is None:  # the table may start right of column A
            lead = next(i for i, v in enumerate(vals) if v is not None and v != "")
        elif any(v is not None and v != "" for v in vals[:lead]):
            raise InputError(
                f"{source} row {r}",
                "a value left of the header's first column",
                "the table's cells under its header",
            )
        vals = vals[lead:]
        first = vals[0] if vals else None
        if isinstance(first, str) and first.startswith("#"):
            continue
        if table is None:
            while vals and (vals[-1] is None or vals[-1] == ""):
                vals.pop()
            for m in merged:
                if m.min_row <= r <= m.max_row:
                    raise InputError(
                        f"{source} row {r}",
                        f"the header cells {m.coord} are merged",
                        "one header cell per column (unmerge the cells; put a unit in "
                        'brackets, such as "width [m]")',
                    )
            blank = [i for i, v in enumerate(vals, start=lead + 1) if v is None or v == ""]
            if blank:
                raise InputError(
                    f"{source} row {r}, column {blank[0]}",
                    "a blank header cell between named columns",
                    "a name for every column",
                )
            table = _new_table(source, [str(v) for v in vals], header_label=f"row {r}")
            header_row = r
            continue
        n = len(table.columns)
        extra = [v for v in vals[n:] if v is not None and v != ""]
        if extra:
            raise InputError(
                f"{source} row {r}",
                f"a value beyond the {n} columns of the header ({extra[0]!r})",
                "one cell per header column",
            )
        cells_by_name = {
            name: (vals[i] if i < len(vals) else None) for i, name in enumerate(table.columns)
        }
        table.rows.append(Row(f"row {r}", cells_by_name))
    if table is None:
        raise InputError(source, "the sheet is empty", "a header row and at least one data row")
    for m in merged:
        if m.max_row > header_row:
            raise InputError(
                f"{source} row {max(m.min_row, header_row + 1)}",
                f"the cells {m.coord} are merged",
                "one value per cell (unmerge the cells and fill each one)",
            )
    return table
