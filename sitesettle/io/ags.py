"""AGS4 site-investigation files: boreholes, SPT N values and cone soundings.

AGS4 is the open data-transfer format of the geotechnical trade (groups of
``"GROUP"``, ``"HEADING"``, ``"UNIT"``, ``"TYPE"`` and ``"DATA"`` lines). A file is
read with the ``python-ags4`` library after its checker has passed it: any
finding of an *AGS Format Rule* is refused as bad input naming the line, the
group and the heading the checker names. Groups used (docs/input.md):

``LOCA``
    ``LOCA_ID`` and the position ``LOCA_NATE``, ``LOCA_NATN`` (national grid), or
    ``LOCA_LOCX``, ``LOCA_LOCY`` (site grid) when the national grid is blank;
``GEOL``
    the strata logged: ``GEOL_TOP``, ``GEOL_BASE``, ``GEOL_LEG`` / ``GEOL_GEOL``
    (legend and geology codes) and ``GEOL_DESC``, mapped onto the project's
    ``[[strata]]`` by the ``legend`` and ``description`` tables of ``[boreholes]``;
``WSTG``
    water strikes (``WSTG_DPTH``): the shallowest per location becomes its water depth;
``ISPT``
    SPT N values (``ISPT_TOP``, ``ISPT_NVAL``): their mean inside each stratum of a
    borehole becomes that interval's ``spt_n``;
``SCPG`` / ``SCPT``
    cone soundings: ``SCPT_DPTH``, ``SCPT_RES`` (qc), ``SCPT_FRES`` (fs).

Units are those of each heading's ``UNIT`` line, read with pint (``MN/m2`` is
read as MN/m²).
"""

from __future__ import annotations

import contextlib
import io
import logging
import pathlib
import re
import warnings

from sitesettle.errors import InputError, InputWarning
from sitesettle.io import files
from sitesettle.io.tables import Row, Table, _new_table

#: suffix of AGS4 files
AGS_SUFFIXES = (".ags",)
#: checker findings that are information, not faults
_NOT_FAULTS = ("FYI", "Summary of data", "Metadata", "General", "Warning")


def _location(locations, table, row) -> str:
    """The row's LOCA_ID, which must be a location of the LOCA group."""
    lid = table.text(row, "loca_id")
    if lid not in locations:
        raise InputError(
            table.where(row, "loca_id"),
            f'location "{lid}" is not in the LOCA group',
            "a LOCA_ID of the LOCA group",
        )
    return lid

def _unit(text: str) -> str | None:
    """An AGS unit as pint reads it (``kN/m2`` → ``kN/m^2``); None when blank or ``-``."""
    text = str(text or "").strip()
    if not text or text in ("-", "blows"):
        return None
    return re.sub(r"([A-Za-z])(\d)", r"\1^\2", text)


def _quiet(call, *args, **kwargs):
    """Run a python-ags4 function with its printing and logging kept off the terminal."""
    logger = logging.getLogger("python_ags4")
    level, logger.level = logger.level, logging.CRITICAL
    sink = io.StringIO()
    try:
        with contextlib.redirect_stdout(sink), contextlib.redirect_stderr(sink):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                return call(*args, **kwargs)
    finally:
        logger.setLevel(level)


def read_ags(path: pathlib.Path, what: str = "investigation file") -> dict:
    """The groups of a checked AGS4 file: group → (DataFrame, line numbers of DATA rows).

    Raises
    ------
    InputError
        For a file that is not AGS4 text, or that the format's checker faults
        (the first finding: its line, group and description).
    """
    from python_ags4 import AGS4

    path = pathlib.Path(path)
    data = files.read_bytes(path, what)
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise InputError(
            f"{path.name} line {line}", "the file is not UTF-8 text", "an AGS4 file saved as UTF-8"
        ) from None
    first = next((ln.strip() for ln in text.splitlines() if ln.strip()), "")
    if not first.startswith('"GROUP"'):
        raise InputError(
            path.name,
            f"the {what} is not an AGS4 file (its content does not match its suffix)",
            'AGS4 text starting with a "GROUP" line',
        )
    try:
        findings = _quiet(AGS4.check_file, io.StringIO(text))
    except Exception as exc:  # the checker fails on some broken files instead of reporting
        raise InputError(
            path.name, f"the AGS4 checker cannot read the file ({exc})", "a valid AGS4 file"
        ) from None
    for rule, items in findings.items():
        if rule.startswith(_NOT_FAULTS) or not items:
            continue
        item = items[0]
        line = str(item.get("line", "")).strip()
        group = str(item.get("group", "")).strip()
        where = path.name + (f" line {line}" if line and line != "-" else "")
        where += f", group {group}" if group else ""
        more = f" (and {len(items) - 1} more)" if len(items) > 1 else ""
        raise InputError(
            where,
            f"the AGS4 checker finds: {rule}: {item.get('desc', '')}{more}",
            "a file that passes the AGS4 checker (python-ags4)",
        )
    tables, _, lines = _quiet(AGS4.AGS4_to_dataframe, io.StringIO(text), get_line_numbers=True)
    return tables


def group_table(tables: dict, group: str, source: str, *, required: bool) -> Table | None:
    """One AGS4 group as a :class:`Table`: columns named by heading (lower case), units
    from the ``UNIT`` line, rows labelled ``group GEOL line 23``."""
    frame = tables.get(group)
    if frame is None:
        if required:
            raise InputError(source, f"the file has no {group} group", f"a {group} group")
        return None
    headings = [c for c in frame.columns if c not in ("HEADING", "line_number")]
    table = _new_table(source, headings, header_label=f"group {group} HEADING line")
    table.headers = {h.lower(): h for h in headings}
    table.columns = [h.lower() for h in headings]
    kinds = frame["HEADING"].astype(str)
    unit_rows = frame[kinds == "UNIT"]
    if len(unit_rows):
        for h in headings:
            u = _unit(unit_rows.iloc[0][h])
            if u:
                table.header_units[h.lower()] = u
    for rec in frame[kinds == "DATA"].to_dict(orient="records"):
        cells = {h.lower(): (str(rec[h]).strip() or None) for h in headings}
        table.rows.append(Row(f"group {group} line {rec.get('line_number', '?')}", cells))
    return table


def _positions(tables: dict, source: str) -> dict[str, tuple[Table, Row]]:
    loca = group_table(tables, "LOCA", source, required=True)
    loca.require(["loca_id"])
    return {loca.text(r, "loca_id"): (loca, r) for r in loca.rows}


def _xy(loca: Table, row: Row) -> tuple[float, float]:
    """(x, y) [m] of a location: national grid, else the site grid."""
    from sitesettle.io import geometry

    for cx, cy in (("loca_nate", "loca_natn"), ("loca_locx", "loca_locy")):
        if loca.has(row, cx) and loca.has(row, cy):
            x = loca.quantity(row, cx, "length")
            y = loca.quantity(row, cy, "length")
            geometry.check_coordinate(x, loca.where(row, cx))
            geometry.check_coordinate(y, loca.where(row, cy))
            return x, y
    raise InputError(
        loca.where(row, "loca_nate"),
        f'location "{loca.text(row, "loca_id")}" has no position',
        "LOCA_NATE and LOCA_NATN (or LOCA_LOCX and LOCA_LOCY)",
    )


def _stratum(geol: Table, row: Row, legend: dict, description: dict) -> str:
    """The project stratum of a GEOL row: legend/geology code first, then description."""
    for col in ("geol_leg", "geol_geol"):
        if geol.has(row, col):
            code = geol.text(row, col)
            if code in legend:
                return legend[code]
    desc = geol.text(row, "geol_desc", default="")
    for words, name in description.items():
        if words.lower() in desc.lower():
            return name
    code = geol.text(row, "geol_leg", default="") or geol.text(row, "geol_geol", default="")
    raise InputError(
        geol.where(row, "geol_desc"),
        f"no stratum for legend code {code!r} and description {desc[:60]!r}",
        "an entry for it in the legend or description table of [boreholes] "
        '(legend = { "CODE" = "stratum" }, description = { "words" = "stratum" })',
    )


def boreholes_table(tables: dict, source: str, legend: dict, description: dict) -> Table:
    """The long-form boreholes table of :func:`~sitesettle.io.investigation.parse_boreholes`
    from LOCA, GEOL, WSTG and ISPT; consecutive GEOL rows of one stratum are merged."""
    locations = _positions(tables, source)
    geol = group_table(tables, "GEOL", source, required=True)
    geol.require(["loca_id", "geol_top", "geol_base"])
    if "geol_desc" not in geol.columns and not {"geol_leg", "geol_geol"} & set(geol.columns):
        geol.require(["geol_desc"])
    water: dict[str, float] = {}
    wstg = group_table(tables, "WSTG", source, required=False)
    if wstg is not None and wstg.rows:
        wstg.require(["loca_id", "wstg_dpth"])
        for r in wstg.rows:
            if wstg.has(r, "wstg_dpth"):
                lid = wstg.text(r, "loca_id")
                d = wstg.quantity(r, "wstg_dpth", "length")
                water[lid] = min(d, water.get(lid, d))
    spt: dict[str, list[tuple[float, float, str]]] = {}
    ispt = group_table(tables, "ISPT", source, required=False)
    if ispt is not None and ispt.rows:
        ispt.require(["loca_id", "ispt_top", "ispt_nval"])
        blank = []
        for r in ispt.rows:
            if not ispt.has(r, "ispt_nval"):
                blank.append(ispt.where(r, "ispt_nval"))
                continue
            n = ispt.quantity(r, "ispt_nval", "dimensionless")
            z = ispt.quantity(r, "ispt_top", "length")
            spt.setdefault(ispt.text(r, "loca_id"), []).append((z, n, ispt.where(r)))
        if blank:
            warnings.warn(
                f"{blank[0]}: {len(blank)} SPT test(s) without an N value left out (first shown)",
                InputWarning,
                stacklevel=3,
            )

    # GEOL rows per location, merged into one interval per run of the same stratum
    runs: dict[str, list[list]] = {}
    for r in geol.rows:
        lid = _location(locations, geol, r)
        name = _stratum(geol, r, legend, description)
        top = geol.quantity(r, "geol_top", "length")
        base = geol.quantity(r, "geol_base", "length")
        items = runs.setdefault(lid, [])
        if items and items[-1][0] == name and abs(items[-1][2] - top) <= 1e-3:
            items[-1][2] = base
        else:
            items.append([name, top, base, r])

    out = _new_table(
        source,
        ["borehole", "x", "y", "stratum", "top", "bottom", "water_depth", "spt_n"],
        header_label="GEOL",
    )
    out.headers.update(
        {
            "borehole": "LOCA_ID",
            "x": "LOCA_NATE",
            "y": "LOCA_NATN",
            "stratum": "GEOL_LEG/GEOL_DESC",
            "top": "GEOL_TOP",
            "bottom": "GEOL_BASE",
            "water_depth": "WSTG_DPTH",
            "spt_n": "ISPT_NVAL",
        }
    )
    outside = []
    for lid, items in runs.items():
        x, y = _xy(*locations[lid])
        tests = list(spt.get(lid, []))
        for k, (name, top, base, r) in enumerate(items):
            inside = [
                t for t in tests if top <= t[0] < base or (k == len(items) - 1 and t[0] == base)
            ]
            for t in inside:
                tests.remove(t)
            n = sum(t[1] for t in inside) / len(inside) if inside else None
            out.rows.append(
                Row(
                    r.label,
                    {
                        "borehole": lid,
                        "x": x,
                        "y": y,
                        "stratum": name,
                        "top": top,
                        "bottom": base,
                        "water_depth": water.get(lid) if k == 0 else None,
                        "spt_n": n,
                    },
                )
            )
        outside += [t[2] for t in tests]
    if outside:
        warnings.warn(
            f"{outside[0]}: {len(outside)} SPT test(s) below the logged strata left out "
            "(first shown)",
            InputWarning,
            stacklevel=3,
        )
    without = sorted((set(water) | set(spt)) - set(runs))
    if without:
        warnings.warn(
            f"{source}: water strikes or SPT tests of location(s) without a GEOL log left "
            "out: " + ", ".join(without[:5]),
            InputWarning,
            stacklevel=3,
        )
    return out


def soundings_table(tables: dict, source: str) -> Table:
    """The long-form soundings table of :func:`~sitesettle.io.investigation.parse_soundings`
    from LOCA (positions) and SCPT (readings); one sounding per location and test."""
    locations = _positions(tables, source)
    scpt = group_table(tables, "SCPT", source, required=True)
    scpt.require(["loca_id", "scpt_dpth", "scpt_res"])
    keys = {(scpt.text(r, "loca_id"), scpt.text(r, "scpg_tesn", default="")) for r in scpt.rows}
    per_location: dict[str, int] = {}
    for lid, _ in keys:
        per_location[lid] = per_location.get(lid, 0) + 1
    out = _new_table(source, ["sounding", "x", "y", "depth", "qc", "fs"], header_label="SCPT")
    out.headers.update(
        {
            "sounding": "LOCA_ID",
            "x": "LOCA_NATE",
            "y": "LOCA_NATN",
            "depth": "SCPT_DPTH",
            "qc": "SCPT_RES",
            "fs": "SCPT_FRES",
        }
    )
    has_fs = "scpt_fres" in scpt.columns
    for r in scpt.rows:
        lid = _location(locations, scpt, r)
        test = scpt.text(r, "scpg_tesn", default="")
        sid = f"{lid}/{test}" if per_location[lid] > 1 and test else lid
        x, y = _xy(*locations[lid])
        fs = scpt.quantity(r, "scpt_fres", "pressure", default=float("nan")) if has_fs else None
        out.rows.append(
            Row(
                r.label,
                {
                    "sounding": sid,
                    "x": x,
                    "y": y,
                    "depth": scpt.quantity(r, "scpt_dpth", "length"),
                    "qc": scpt.quantity(r, "scpt_res", "pressure"),
                    "fs": None if fs is None or fs != fs else fs,
                },
            )
        )
    return out
