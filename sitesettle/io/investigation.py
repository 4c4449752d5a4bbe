"""Reading the site investigation: boreholes (long form) and cone soundings."""

from __future__ import annotations

import pathlib
import warnings

import numpy as np

from sitesettle.errors import InputError, InputWarning
from sitesettle.io import ags, gef, geometry
from sitesettle.io.sheets import SHEET_SUFFIXES, read_sheet
from sitesettle.io.strata import PLAUSIBLE, QUANTITY_KEYS, _num, _probably_meant, check_value
from sitesettle.io.tables import Table, parse_csv, read_text, suggest, table_from_frame
from sitesettle.site import Borehole, Interval, Sounding, Stratum

#: fixed columns of the boreholes file and their dimension
BOREHOLE_COLUMNS: dict[str, str] = {
    "borehole": "text",
    "x": "length",
    "y": "length",
    "stratum": "text",
    "top": "length",
    "bottom": "length",
    "water_depth": "length",
}
#: columns of the soundings file
SOUNDING_COLUMNS: dict[str, str] = {
    "sounding": "text",
    "x": "length",
    "y": "length",
    "depth": "length",
    "qc": "pressure",
    "fs": "pressure",
}
#: consecutive intervals may leave a gap or overlap this small [m] (rounded logs)
CONTACT_TOLERANCE = 1e-3
#: usual range of cone resistance [kPa] (common practice); readings outside warn once per file
QC_USUAL = (100.0, 100.0e3)


def _table(source_or_table, source: str) -> Table:
    if isinstance(source_or_table, Table):
        return source_or_table
    if isinstance(source_or_table, str):
        return parse_csv(source_or_table, source)
    return table_from_frame(source_or_table, source, label="row", start=2)


def _same_per_group(table: Table, rows, name: str, dim: str, where_id: str):
    """The value of a per-borehole column: given on at least one row, the same on all."""
    value, first = None, None
    for row in rows:
        if not table.has(row, name):
            continue
        v = table.quantity(row, name, dim)
        if value is None:
            value, first = v, row
        elif abs(v - value) > 1e-6:
            raise InputError(
                table.where(row, name),
                f"{where_id} has {name} = {value:g} m at {first.label} but {v:g} m here",
                f"one {name} per {where_id}",
            )
    return value, first


def parse_boreholes(
    data, strata: tuple[Stratum, ...], source: str = "boreholes.csv"
) -> tuple[Borehole, ...]:
    """Boreholes from long-form rows (borehole, x, y, stratum, top, bottom, …).

    Parameters
    ----------
    data : str, Table or pandas.DataFrame
        CSV text, a parsed table, or a frame (rows then count from 2 as in a sheet).
    strata : tuple of Stratum
        The site's ordered strata: each interval's stratum must be one of them,
        and a borehole must meet them in this order.
    source : str
        File name for messages.

    Returns
    -------
    tuple of Borehole
        Intervals sorted by depth; per-interval parameter columns (any numeric
        stratum key, e.g. ``spt_n``) become :attr:`Interval.overrides`.
    """
    table = _table(data, source)
    override_cols = {k: dim for k, (_, dim) in QUANTITY_KEYS.items()}
    table.check_columns({**BOREHOLE_COLUMNS, **override_cols}, strict=True)
    table.require(["borehole", "x", "y", "stratum", "top", "bottom"])
    if not table.rows:
        raise InputError(
            source, "the file has no borehole rows", "one row per stratum met in a borehole"
        )
    order = {s.name: i for i, s in enumerate(strata)}
    groups: dict[str, list] = {}
    for row in table.rows:
        groups.setdefault(table.identifier(row, "borehole", "borehole id"), []).append(row)
    boreholes = []
    positions: dict[tuple[float, float], str] = {}
    for bid, rows in groups.items():
        x, _ = _same_per_group(table, rows, "x", "length", f'borehole "{bid}"')
        y, _ = _same_per_group(table, rows, "y", "length", f'borehole "{bid}"')
        if x is None or y is None:
            raise InputError(
                table.where(rows[0], "x" if x is None else "y"),
                f'borehole "{bid}" has no position',
                "x and y on at least one of its rows",
            )
        geometry.check_coordinate(x, table.where(rows[0], "x"))
        geometry.check_coordinate(y, table.where(rows[0], "y"))
        if (x, y) in positions:
            raise InputError(
                table.where(rows[0]),
                f'borehole "{bid}" is at the same position as borehole "{positions[(x, y)]}"',
                "one borehole per position",
            )
        positions[(x, y)] = bid
        water, wrow = _same_per_group(table, rows, "water_depth", "length", f'borehole "{bid}"')
        if water is not None and water < 0:
            raise InputError(
                table.where(wrow, "water_depth"),
                f"the water depth {water:g} m is negative",
                "a depth below ground ≥ 0",
            )
        items = []
        for row in rows:
            name = table.identifier(row, "stratum", "stratum name")
            if name not in order:
                raise InputError(
                    table.where(row, "stratum"),
                    f'unknown stratum "{name}"' + suggest(name, order),
                    f"one of the [[strata]] names: {', '.join(order)}",
                )
            top = table.quantity(row, "top", "length")
            bottom = table.quantity(row, "bottom", "length")
            if top < 0:
                raise InputError(
                    table.where(row, "top"),
                    f"the top {top:g} m is above ground",
                    "a depth below ground ≥ 0",
                )
            if not bottom > top:
                raise InputError(
                    table.where(row, "bottom"),
                    f"the bottom {bottom:g} m is not below the top {top:g} m",
                    "bottom > top (depths below ground, positive down)",
                )
            overrides = {}
            for key, (field, dim) in QUANTITY_KEYS.items():
                if table.has(row, key):
                    w = table.where(row, key)
                    overrides[field] = check_value(field, table.quantity(row, key, dim), w, dim)
            items.append((top, bottom, name, row, overrides))
        items.sort(key=lambda t: t[0])
        if abs(items[0][0]) > CONTACT_TOLERANCE:
            raise InputError(
                table.where(items[0][3], "top"),
                f'borehole "{bid}" starts at {items[0][0]:g} m',
                "the first interval from the ground surface (top = 0)",
            )
        for prev, cur in zip(items, items[1:]):
            if cur[0] < prev[1] - CONTACT_TOLERANCE:
                raise InputError(
                    table.where(cur[3], "top"),
                    f'in borehole "{bid}" the interval {cur[0]:g}–{cur[1]:g} m overlaps '
                    f"{prev[0]:g}–{prev[1]:g} m ({prev[3].label})",
                    "each interval's top at the bottom of the one above",
                )
            if cur[0] > prev[1] + CONTACT_TOLERANCE:
                raise InputError(
                    table.where(cur[3], "top"),
                    f'in borehole "{bid}" there is a gap from {prev[1]:g} to {cur[0]:g} m',
                    "each interval's top at the bottom of the one above",
                )
            if order[cur[2]] <= order[prev[2]]:
                raise InputError(
                    table.where(cur[3], "stratum"),
                    f'in borehole "{bid}" "{cur[2]}" lies below "{prev[2]}"',
                    f"the strata in the [[strata]] order ({', '.join(order)}); one interval "
                    "per stratum",
                )
        intervals = tuple(
            Interval(stratum=n, top=0.0 if i == 0 else t, bottom=b, overrides=o)
            for i, (t, b, n, _, o) in enumerate(items)
        )
        # make contacts exact after the tolerance check
        fixed = [intervals[0]]
        for iv in intervals[1:]:
            fixed.append(Interval(iv.stratum, fixed[-1].bottom, iv.bottom, iv.overrides))
        boreholes.append(Borehole(id=bid, x=x, y=y, intervals=tuple(fixed), water_depth=water))
    return tuple(boreholes)


def read_boreholes(
    path: pathlib.Path,
    strata: tuple[Stratum, ...],
    *,
    sheet: str | None = None,
    legend: dict | None = None,
    description: dict | None = None,
) -> tuple[Borehole, ...]:
    """Read the boreholes file at ``path``: CSV, an .xlsx sheet, or AGS4.

    ``legend`` and ``description`` map an AGS4 file's GEOL codes and descriptions
    onto the strata (:func:`sitesettle.io.ags.boreholes_table`).
    """
    path = pathlib.Path(path)
    suffix = path.suffix.lower()
    if suffix in SHEET_SUFFIXES:
        return parse_boreholes(read_sheet(path, sheet, "boreholes file"), strata, path.name)
    if suffix in ags.AGS_SUFFIXES:
        tables = ags.read_ags(path, "boreholes file")
        table = ags.boreholes_table(tables, path.name, legend or {}, description or {})
        return parse_boreholes(table, strata, path.name)
    return parse_boreholes(read_text(path, "boreholes file"), strata, path.name)


def parse_soundings(data, source: str = "soundings.csv") -> tuple[Sounding, ...]:
    """Cone soundings from long-form rows (sounding, x, y, depth, qc, optional fs).

    Depths must increase strictly within each sounding, in file order.
    """
    table = _table(data, source)
    table.check_columns(SOUNDING_COLUMNS, strict=True)
    table.require(["sounding", "x", "y", "depth", "qc"])
    if not table.rows:
        raise InputError(source, "the file has no readings", "one row per cone reading")
    groups: dict[str, list] = {}
    for row in table.rows:
        groups.setdefault(table.identifier(row, "sounding", "sounding id"), []).append(row)
    out = []
    unusual = []
    for sid, rows in groups.items():
        x, _ = _same_per_group(table, rows, "x", "length", f'sounding "{sid}"')
        y, _ = _same_per_group(table, rows, "y", "length", f'sounding "{sid}"')
        if x is None or y is None:
            raise InputError(
                table.where(rows[0], "x" if x is None else "y"),
                f'sounding "{sid}" has no position',
                "x and y on at least one of its rows",
            )
        geometry.check_coordinate(x, table.where(rows[0], "x"))
        geometry.check_coordinate(y, table.where(rows[0], "y"))
        depth, qc, fs = [], [], []
        has_fs = "fs" in table.columns
        for row in rows:
            z = table.quantity(row, "depth", "length")
            if z < 0:
                raise InputError(
                    table.where(row, "depth"),
                    f"the depth {z:g} m is above ground",
                    "a depth below ground ≥ 0",
                )
            if depth and not z > depth[-1]:
                raise InputError(
                    table.where(row, "depth"),
                    f'in sounding "{sid}" the depth {z:g} m does not increase '
                    f"(previous {depth[-1]:g} m)",
                    "depths increasing down each sounding",
                )
            q = table.quantity(row, "qc", "pressure")
            if not q > 0:
                raise InputError(
                    table.where(row, "qc"),
                    f"the cone resistance {q:g} kPa is not positive",
                    "qc > 0",
                )
            if not QC_USUAL[0] <= q <= QC_USUAL[1]:
                unusual.append(table.where(row, "qc"))
            f = table.quantity(row, "fs", "pressure", default=np.nan) if has_fs else np.nan
            if f < 0:
                raise InputError(
                    table.where(row, "fs"), f"the sleeve friction {f:g} kPa is negative", "fs ≥ 0"
                )
            depth.append(z)
            qc.append(q)
            fs.append(f)
        median = float(np.median(qc))
        lo, hi, source = PLAUSIBLE["cone_resistance"]
        if not lo <= median <= hi:
            raise InputError(
                table.where(rows[0], "qc"),
                f'the median cone resistance of sounding "{sid}" is {median:g} kPa, outside '
                f"the plausible {_num(lo)}–{_num(hi)} kPa"
                + _probably_meant(median, lo, hi, "pressure"),
                f"cone resistances with their unit in the header, such as qc[MPa] ({source})",
            )
        fs_arr = np.array(fs) if has_fs and not np.all(np.isnan(fs)) else None
        out.append(Sounding(id=sid, x=x, y=y, depth=np.array(depth), qc=np.array(qc), fs=fs_arr))
    if unusual:
        warnings.warn(
            f"{unusual[0]}: {len(unusual)} cone reading(s) outside the usual "
            f"{QC_USUAL[0]:g}–{QC_USUAL[1]:g} kPa (first shown); check the qc unit",
            InputWarning,
            stacklevel=2,
        )
    return tuple(out)


def read_soundings(path: pathlib.Path, *, sheet: str | None = None) -> tuple[Sounding, ...]:
    """Read the soundings file at ``path``: CSV, an .xlsx sheet, AGS4 (SCPT) or GEF."""
    path = pathlib.Path(path)
    suffix = path.suffix.lower()
    if suffix in SHEET_SUFFIXES:
        return parse_soundings(read_sheet(path, sheet, "soundings file"), path.name)
    if suffix in ags.AGS_SUFFIXES:
        tables = ags.read_ags(path, "soundings file")
        return parse_soundings(ags.soundings_table(tables, path.name), path.name)
    if suffix in gef.GEF_SUFFIXES:
        return parse_soundings(gef.soundings_table(path), path.name)
    return parse_soundings(read_text(path, "soundings file"), path.name)
