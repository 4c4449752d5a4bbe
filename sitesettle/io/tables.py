"""Tables read row by row, with units in headers and the place in every message.

A CSV file is read with the standard :mod:`csv` module so that row numbers are
the ones a spreadsheet shows: the header is row 1, the first data row is row 2.
Blank lines are skipped but still counted; lines whose first cell starts with
``#`` are comments. A header may carry the unit of its column in square
brackets (``width [ft]``); that unit applies to the bare numbers of the column,
while a cell that carries its own unit (``"1.2 m"``) keeps it.

The same :class:`Table` is built from a pandas DataFrame (the attribute table of
a GIS file) by :func:`table_from_frame`; its rows are then named "feature n"
(1-based, in file order).
"""

from __future__ import annotations

import csv
import difflib
import io
import math
import pathlib
import re
from dataclasses import dataclass, field

from sitesettle import units
from sitesettle.errors import InputError
from sitesettle.io import files
from sitesettle.io import text as untrusted

_HEADER = re.compile(r"^(?P<name>[^\[\]]*?)\s*(\[(?P<unit>[^\[\]]*)\])?$")

#: words accepted for true and false in flag columns and keys
TRUE_WORDS = ("true", "yes", "y", "1", "rigid")
FALSE_WORDS = ("false", "no", "n", "0", "flexible")


def read_text(path: pathlib.Path, what: str = "file") -> str:
    """Read a UTF-8 text file (a byte-order mark is allowed) or raise InputError.

    The error names the file and, for text that is not UTF-8, the line of the
    first undecodable byte. Only a regular file of at most
    :data:`sitesettle.io.files.MAX_INPUT_BYTES` is read (:func:`files.read_bytes`).
    """
    path = pathlib.Path(path)
    data = files.read_bytes(path, what)
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise InputError(
            f"{path.name} line {line}",
            "the file is not UTF-8 text",
            "a file saved as UTF-8 (in a spreadsheet: 'CSV UTF-8')",
        ) from None


def normalise_name(text: str) -> str:
    """Column or key name as compared: stripped, lower case, spaces and dashes as ``_``."""
    return re.sub(r"[\s\-]+", "_", str(text).strip().lower())


def suggest(name: str, known) -> str:
    """``'; did you mean "x"?'`` for an unknown name close to a known one, else ``""``."""
    match = difflib.get_close_matches(name, list(known), n=1, cutoff=0.6)
    return f'; did you mean "{match[0]}"?' if match else ""


@dataclass(frozen=True)
class Row:
    """One data row: its label (``"row 5"``) and its cells by column name (None if blank)."""

    label: str
    cells: dict[str, object]


@dataclass
class Table:
    """A table with named columns, units from the headers and labelled rows.

    Attributes
    ----------
    source : str
        The file name used in messages.
    columns : list of str
        Normalised column names in file order.
    headers : dict
        Column name → header as written (for messages).
    header_units : dict
        Column name → unit text given in the header (``"ft"``).
    rows : list of Row
    """

    source: str
    columns: list[str]
    headers: dict[str, str]
    header_units: dict[str, str]
    rows: list[Row] = field(default_factory=list)
    #: conversion factor of each header unit, by (column, dimension)
    _factors: dict = field(default_factory=dict, repr=False)

    # -- places -------------------------------------------------------------
    def where(self, row: Row | None = None, column: str | None = None) -> str:
        """``'footings.csv row 5, column "width"'`` (either part optional)."""
        text = self.source
        if row is not None:
            text += f" {row.label}"
        if column is not None:
            text += f'{"," if row is not None else ""} column "{self.headers.get(column, column)}"'
        return text

    # -- columns ------------------------------------------------------------
    def rename(self, aliases: dict[str, str]) -> None:
        """Rename alias columns to their main name (``dead_press`` → ``dead_pressure``)."""
        for alias, main in aliases.items():
            if alias in self.columns and main not in self.columns:
                i = self.columns.index(alias)
                self.columns[i] = main
                self.headers[main] = self.headers.pop(alias)
                if alias in self.header_units:
                    self.header_units[main] = self.header_units.pop(alias)
                for row in self.rows:
                    if alias in row.cells:
                        row.cells[main] = row.cells.pop(alias)

    def require(self, names) -> None:
        """Raise InputError if any of ``names`` is not a column."""
        for name in names:
            if name not in self.columns:
                close = difflib.get_close_matches(name, self.columns, 1, 0.6)
                hint = f' (found "{self.headers[close[0]]}")' if close else ""
                raise InputError(
                    self.source,
                    f'the required column "{name}" is missing{hint}',
                    f"columns {', '.join(repr(n) for n in names)}",
                )

    def check_columns(self, known: dict[str, str], *, strict: bool) -> None:
        """Check column names and header units against ``known`` (name → dimension).

        An unknown column is an error when ``strict``; otherwise it is ignored,
        unless it is a near miss of a known name (a likely typo), which is an
        error naming the column and the likely name. A header unit of the wrong
        dimension, or on a text column, is an error naming the column.
        """
        for name in self.columns:
            if name not in known:
                close = difflib.get_close_matches(
                    name, list(known), n=1, cutoff=0.8 if not strict else 0.6
                )
                if strict or close:
                    hint = f'; did you mean "{close[0]}"?' if close else ""
                    names = [k for k, v in known.items() if v != "ignored"]
                    raise InputError(
                        self.where(column=name),
                        "unknown column" + hint,
                        f"one of {', '.join(names)}",
                    )
                continue
            unit = self.header_units.get(name)
            if unit is None:
                continue
            dim = known[name]
            if dim == "ignored":
                continue
            if dim not in units.DIMENSIONS:
                raise InputError(
                    self.where(column=name),
                    f'a unit "[{unit}]" on a column without one',
                    f'the header "{name}" alone',
                )
            units.parse(f"1 {unit}", dim, self.where(column=name) + " (unit in the header)")

    # -- cells --------------------------------------------------------------
    def raw(self, row: Row, name: str):
        """The cell as read (None when blank or when the column is absent)."""
        value = row.cells.get(name)
        if value is None:
            return None
        if isinstance(value, float) and math.isnan(value):
            return None
        if isinstance(value, str) and not value.strip():
            return None
        return value

    def has(self, row: Row, name: str) -> bool:
        """True if the row has a non-blank value in column ``name``."""
        return self.raw(row, name) is not None

    def quantity(self, row: Row, name: str, dimension: str, default=None) -> float:
        """The cell as a float in the core unit of ``dimension``.

        A bare number takes the header's unit, else the core unit. A blank cell
        returns ``default``; with no default it is an error naming the cell.
        """
        value = self.raw(row, name)
        where = self.where(row, name)
        if value is None:
            if default is None:
                raise InputError(
                    where,
                    "the value is missing",
                    f"{units._NAMES[dimension]} such as {units.DIMENSIONS[dimension][1]}",
                )
            return default
        unit = self.header_units.get(name)
        if unit:
            number = isinstance(value, (int, float)) and not isinstance(value, bool)
            if number or units._NUMBER.match(str(value).strip()):
                key = (name, dimension)
                if key not in self._factors:
                    self._factors[key] = units.parse(f"1 {unit}", dimension, where)
                value = float(value) * self._factors[key]
        return units.parse(value, dimension, where)

    def text(self, row: Row, name: str, default: str | None = None) -> str:
        """The cell as stripped text; integer-valued numbers without ``.0``."""
        value = self.raw(row, name)
        if value is None:
            if default is None:
                raise InputError(self.where(row, name), "the value is missing", "a name or an id")
            return default
        if isinstance(value, float) and value.is_integer():
            value = int(value)
        return str(value).strip()

    def identifier(self, row: Row, name: str, what: str = "id") -> str:
        """The cell as an id: :meth:`text`, NFC-normalised and checked by
        :func:`sitesettle.io.text.identifier` (no invisible or control characters,
        no leading formula character, at most 100 characters)."""
        return untrusted.identifier(self.text(row, name), self.where(row, name), what)

    def flag(self, row: Row, name: str, default: bool) -> bool:
        """The cell as a boolean (true/false, yes/no, 1/0, rigid/flexible)."""
        value = self.raw(row, name)
        if value is None:
            return default
        return parse_flag(value, self.where(row, name))


def parse_flag(value: object, where: str) -> bool:
    """A boolean from ``True``, ``"yes"``, ``1``, ``"rigid"`` … or InputError naming ``where``."""
    if isinstance(value, bool):
        return value
    text = (
        str(int(value) if isinstance(value, float) and value.is_integer() else value)
        .strip()
        .lower()
    )
    if text in TRUE_WORDS:
        return True
    if text in FALSE_WORDS:
        return False
    raise InputError(where, f'cannot read "{value}" as yes or no', "true/false, yes/no or 1/0")


def _split_header(
    cell: str, source: str, position: int, header_label: str = "row 1"
) -> tuple[str, str | None, str]:
    header = cell.strip()
    m = _HEADER.match(header)
    if not m or not m.group("name").strip():
        raise InputError(
            f"{source} {header_label}, column {position}",
            f'cannot read the header "{cell}"',
            'a name with an optional unit in brackets, such as "width [ft]"',
        )
    unit = m.group("unit")
    return (
        normalise_name(m.group("name")),
        (unit.strip() or None) if unit is not None else None,
        header,
    )


def _new_table(source: str, header_cells, *, header_label: str) -> Table:
    columns, headers, header_units = [], {}, {}
    for pos, cell in enumerate(header_cells, start=1):
        name, unit, header = _split_header(str(cell), source, pos, header_label)
        if name in headers:
            raise InputError(
                f"{source} {header_label}", f'the column "{name}" appears twice', "each column once"
            )
        columns.append(name)
        headers[name] = header
        if unit:
            header_units[name] = unit
    return Table(source, columns, headers, header_units)


def _delimiter(text: str) -> str:
    """The separator of the header row (the first line that is neither blank nor a
    ``#`` comment): whichever of comma, semicolon and tab it holds most often
    outside quotes, a comma on a tie. Comment lines, which may hold commas of
    their own, take no part."""
    for line in text.splitlines():
        head = line.strip().lstrip("\ufeff")
        if not head or head.startswith("#"):
            continue
        counts = dict.fromkeys(",;\t", 0)
        quoted = False
        for ch in head:
            if ch == '"':
                quoted = not quoted
            elif not quoted and ch in counts:
                counts[ch] += 1
        return max(counts, key=lambda d: (counts[d], d == ","))
    return ","


def parse_csv(text: str, source: str) -> Table:
    """Parse CSV text into a :class:`Table` (rows numbered as in a spreadsheet).

    Parameters
    ----------
    text : str
        The file's content.
    source : str
        File name used in messages.

    Examples
    --------
    >>> t = parse_csv("id, width [ft]\\nA, 4\\n", "f.csv")
    >>> round(t.quantity(t.rows[0], "width", "length"), 4)
    1.2192
    >>> t.rows[0].label
    'row 2'
    """
    delimiter = _delimiter(text)
    reader = csv.reader(io.StringIO(text), delimiter=delimiter, skipinitialspace=True)
    table: Table | None = None
    try:
        for cells in reader:
            line = reader.line_num
            if not any(c.strip() for c in cells):
                continue
            if cells[0].lstrip().startswith("#"):
                continue
            if table is None:
                table = _new_table(source, cells, header_label=f"row {line}")
                continue
            label = f"row {line}"
            if len(cells) > len(table.columns) and any(
                c.strip() for c in cells[len(table.columns) :]
            ):
                raise InputError(
                    f"{source} {label}",
                    f"{len(cells)} cells but the header has {len(table.columns)} columns",
                    "one cell per column (is there an unquoted comma in a value?)",
                )
            values = {
                name: (cells[i].strip() if i < len(cells) else None)
                for i, name in enumerate(table.columns)
            }
            table.rows.append(Row(label, values))
    except csv.Error as exc:
        raise InputError(
            f"{source} row {reader.line_num}", f"malformed CSV ({exc})", "comma-separated values"
        ) from None
    if table is None:
        raise InputError(source, "the file is empty", "a header row and at least one data row")
    return table


def table_from_frame(frame, source: str, *, label: str = "feature", start: int = 1) -> Table:
    """Build a :class:`Table` from a pandas DataFrame (a GIS attribute table).

    Rows are labelled ``"{label} {i}"`` counting from ``start`` in frame order.
    Missing values (NaN, None) count as blank cells.
    """
    cols = [str(c) for c in frame.columns]
    table = _new_table(source, cols, header_label="header")
    records = frame.to_dict(orient="records")
    for i, rec in enumerate(records):
        values = {}
        for name, orig in zip(table.columns, frame.columns):
            v = rec[orig]
            if v is not None and not isinstance(v, (str, bool, int, float)):
                try:
                    v = float(v)  # numpy scalars
                except (TypeError, ValueError):
                    v = str(v)
            values[name] = v
        table.rows.append(Row(f"{label} {i + start}", values))
    return table
