"""Reading a project folder: ``site.toml`` and the files it names, into a :class:`Site`.

Every key is documented in docs/input.md. Reading is split in two so that tests
can feed text: ``parse_*`` functions take text or parsed tables, ``read_*`` and
:func:`load_site` take paths.
"""

from __future__ import annotations

import datetime as _dt
import math
import pathlib
import re
import tomllib
import warnings
from dataclasses import replace

import numpy as np

from sitesettle import units
from sitesettle.criteria import CRITERIA, MEASURES
from sitesettle.errors import InputError, InputWarning
from sitesettle.io import files, geometry
from sitesettle.io.footings import MAX_FILL_UNIT_WEIGHT, FootingDefaults, read_footings
from sitesettle.io.investigation import read_boreholes, read_soundings
from sitesettle.io.strata import check_requirements, parse_strata
from sitesettle.io.tables import Table, parse_csv, parse_flag, read_text, suggest
from sitesettle.io.text import free_text, identifier, terminal_line
from sitesettle.options import (
    Behaviour,
    Choice,
    ClaySettlement,
    DepthRule,
    EndOfPrimary,
    GranularMethod,
    LargePlan,
    LiveLoadStart,
    RigidTilt,
    ShapeInterpolation,
)
from sitesettle.site import AnalysisSettings, CheckSettings, QueryPoint, Site

SITE_FILE = "site.toml"


class OutputUnits(Choice):
    """Units of the written results."""

    SI = "si"  #: mm, m, kN, kPa
    US = "us"  #: in, ft, kip, ksf


class PairRule(Choice):
    """Where the neighbour pairs come from."""

    AUTO = "auto"  #: the automatic neighbour rule, plus any listed pairs
    LISTED = "listed"  #: only the pairs of the pairs file


#: [project] keys of the report's sign-off block (text; empty boxes when absent)
SIGN_OFF_KEYS = ("revision", "date", "prepared_by", "checked_by", "approved_by")

#: the tables of site.toml and their keys
TABLES: dict[str, tuple[str, ...]] = {
    "project": (
        "name",
        "client",
        "job_number",
        "engineer",
        "notes",
        "output_units",
        "crs",
        *SIGN_OFF_KEYS,
    ),
    "groundwater": ("depth",),
    "footings": (
        "file",
        "layer",
        "sheet",
        "depth",
        "sustained_live_fraction",
        "rigid",
        "fill_unit_weight",
    ),
    "boreholes": ("file", "sheet", "legend", "description"),
    "soundings": ("file", "sheet"),
    "points": ("file",),
    "strata": (),
    "area_loads": (),
    "stages": (),
    "analysis": (
        "granular_method",
        "shape_interpolation",
        "report_times",
        "design_life",
        "depth_rule",
        "truncation_tolerance",
        "influence_fraction",
        "max_depth_widths",
        "max_depth",
        "sublayer_fraction",
        "end_of_primary",
        "time_factor_r3",
        "time_factor_r",
        "map_spacing",
        "map_margin",
        "stress_tolerance",
        "cohesive_immediate",
        "clay_settlement",
        "burland_burbidge_pressure",
        "live_load_from",
        "large_plan",
    ),
    "checks": (
        "criteria",
        "overrides",
        "checked_after",
        "pairs",
        "pairs_file",
        "structure_lines_file",
        "rigid_tilt",
        "remove_tilt",
    ),
}

#: longest time accepted for the design life and the report times [yr]. Terzaghi's
#: consolidation and Cα secondary compression are extrapolated beyond any test
#: as the time grows; 1,000 years is ten times the longest design life of common
#: practice (EN 1990:2002 Table 2.1, from memory: 100 years for monumental buildings
#: and bridges),
#: and larger values only give numbers without meaning (1e300 yr overflows)
MAX_TIME = 1000.0

#: numeric [analysis] keys and their ranges, each with its reason (docs/input.md):
#: key: (field, dimension, lowest, highest, lowest allowed?, zero also allowed?)
ANALYSIS_NUMBERS: dict[str, tuple[str, str, float, float, bool, bool]] = {
    # a time after loading, up to MAX_TIME (see there)
    "design_life": ("design_life", "time", 0.0, MAX_TIME, False, False),
    # a fraction of the in-situ stress: 0 would integrate to max_depth_widths always
    # (allowed through the limit below), above 1 stops before the stress has spread
    "influence_fraction": ("influence_fraction", "dimensionless", 0.0, 1.0, False, False),
    # optional caps (none by default; the analysis warns about what a cap leaves
    # out): below one width a cap misses most of the strain (Schmertmann's diagram
    # reaches 2 B to 4 B)
    "max_depth_widths": ("max_depth_widths", "dimensionless", 1.0, math.inf, True, False),
    "max_depth": ("max_depth", "length", 0.0, math.inf, False, False),
    # the bound on what the complete depth rule leaves below the integration, as a
    # fraction of the column's settlement: above 10 % the rule is no longer "complete"
    "truncation_tolerance": ("truncation_tolerance", "dimensionless", 0.0, 0.1, False, False),
    # 100 sublayers per width is far finer than any parameter is known; with the
    # smallest footing side (0.2 m) a sublayer is still ≥ 2 mm, above the 1 mm the
    # integration drops as rounding (finer sublayers gave 0 mm silently)
    "sublayer_fraction": ("sublayer_fraction", "dimensionless", 0.01, 1.0, True, False),
    # Burland & Burbidge (1985) time factors: 0.3/0.2 static, 0.7/0.8 cyclic loads
    "time_factor_r3": ("bb_r3", "dimensionless", 0.0, 1.0, True, True),
    "time_factor_r": ("bb_r", "dimensionless", 0.0, 1.0, True, True),
    # 0 chooses the spacing from the plan; a map wider than 1 km is not one building's
    "map_spacing": ("map_spacing", "length", 0.0, 1000.0, True, True),
    "map_margin": ("map_margin", "length", 0.0, 1000.0, True, True),
    # the far-field bound as a fraction of the largest pressure: 0 is exact; above
    # 10 % the bound is as large as the neighbours' stress it approximates
    "stress_tolerance": ("stress_tolerance", "dimensionless", 0.0, 0.1, True, True),
}


# --------------------------------------------------------------------------- TOML
def parse_toml(text: str, source: str = SITE_FILE) -> dict:
    """Parse site.toml text; a syntax error names the line and column.

    Unknown tables and keys are errors suggesting the nearest known name.
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(
            source,
            f"not valid TOML: {exc}",
            'key = value lines under [table] headers; text in quotes, e.g. depth = "1.2 m"',
        ) from None
    except RecursionError:  # tomllib recurses once per level of nested arrays or tables
        raise InputError(
            source,
            "arrays or tables are nested too deeply to read",
            "the flat tables and short lists of docs/input.md",
        ) from None
    for name, value in data.items():
        if name not in TABLES:
            raise InputError(
                f"{source}, [{name}]",
                "unknown table or key at the top level" + suggest(name, TABLES),
                f"one of the tables {', '.join(TABLES)}",
            )
        if name in ("strata", "area_loads", "stages"):
            continue
        if not isinstance(value, dict):
            raise InputError(
                f"{source}, {name}", "expected a [table]", f"[{name}] followed by its keys"
            )
        for key in value:
            if key not in TABLES[name]:
                raise InputError(
                    f"{source} [{name}], key {key!r}",
                    "unknown key" + suggest(key, TABLES[name]),
                    f"one of {', '.join(TABLES[name])}",
                )
    return data


def _quantity(table: dict, key: str, dim: str, where: str, default: float) -> float:
    if key not in table:
        return default
    return units.parse(table[key], dim, where)


def parse_analysis(table: dict, where: str = f"{SITE_FILE} [analysis]") -> AnalysisSettings:
    """The ``[analysis]`` table as :class:`AnalysisSettings` (defaults for absent keys)."""
    default = AnalysisSettings()
    kw: dict = {}
    for key, cls in (
        ("granular_method", GranularMethod),
        ("shape_interpolation", ShapeInterpolation),
        ("end_of_primary", EndOfPrimary),
        ("depth_rule", DepthRule),
        ("clay_settlement", ClaySettlement),
    ):
        if key in table:
            kw[key] = cls.parse(table[key], f"{where}, key {key!r}")
    for key, (field, dim, lo, hi, lo_ok, zero_ok) in ANALYSIS_NUMBERS.items():
        if key in table:
            kwhere = f"{where}, key {key!r}"
            v = units.parse(table[key], dim, kwhere)
            inside = (v >= lo if lo_ok else v > lo) and v <= hi
            if not (inside or (zero_ok and v == 0.0)):
                unit = {"time": " yr", "length": " m"}.get(dim, "")
                low = f"{'≥' if lo_ok else '>'} {lo:g}{unit}"
                high = f" and ≤ {hi:g}{unit}" if math.isfinite(hi) else ""
                raise InputError(
                    kwhere,
                    f"{v:g}{unit} is out of range",
                    ("0 or " if zero_ok and lo > 0 else "")
                    + f"a value {low}{high} (docs/input.md gives the reason)",
                )
            kw[field] = v
    if "report_times" in table:
        raw = table["report_times"]
        kwhere = f"{where}, key 'report_times'"
        if not isinstance(raw, list) or not raw:
            raise InputError(
                kwhere, "not a list", 'a list of times such as ["1 month", "1 yr", "10 yr"]'
            )
        times = [units.parse(v, "time", f"{kwhere} item {i}") for i, v in enumerate(raw, start=1)]
        for i, t in enumerate(times, start=1):
            if not t > 0:
                raise InputError(
                    f"{kwhere} item {i}",
                    f"the time {t:g} yr is not positive",
                    "times after loading > 0",
                )
            if t > MAX_TIME:
                raise InputError(
                    f"{kwhere} item {i}",
                    f"the time {t:g} yr is longer than {MAX_TIME:g} yr",
                    f"times after loading up to {MAX_TIME:g} yr (docs/input.md gives the reason)",
                )
        kw["report_times"] = tuple(sorted(set(times)))
    if "burland_burbidge_pressure" in table:
        value = str(table["burland_burbidge_pressure"]).strip().lower()
        if value not in ("gross_effective", "net"):
            raise InputError(
                f"{where}, key 'burland_burbidge_pressure'",
                f'unknown value "{table["burland_burbidge_pressure"]}"',
                'one of "gross_effective", "net"',
            )
        kw["bb_pressure"] = value
    if "live_load_from" in table:
        kw["live_load_from"] = LiveLoadStart.parse(
            table["live_load_from"], f"{where}, key 'live_load_from'"
        ).value
    if "large_plan" in table:
        kw["large_plan"] = LargePlan.parse(table["large_plan"], f"{where}, key 'large_plan'").value
    if "cohesive_immediate" in table:
        kw["cohesive_immediate"] = parse_flag(
            table["cohesive_immediate"], f"{where}, key 'cohesive_immediate'"
        )
    settings = AnalysisSettings(**{**default.__dict__, **kw})
    return settings


#: plausible range of a limit override, core units: measure → (lowest, highest, why)
LIMIT_PLAUSIBLE: dict[str, tuple[float, float, str]] = {
    "total": (0.001, 1.0, "1 mm to 1 m"),
    "differential": (0.001, 0.5, "1 mm to 500 mm"),
    "angular_distortion": (1e-5, 0.1, "1/100,000 to 1/10"),
    "angular_distortion_hog": (1e-5, 0.1, "1/100,000 to 1/10"),
    "tilt": (1e-5, 0.1, "1/100,000 to 1/10 rad"),
    "building_tilt": (1e-5, 0.1, "1/100,000 to 1/10 rad"),
    "deflection_ratio": (1e-6, 0.05, "1/1,000,000 to 1/20"),
    "deflection_ratio_hog": (1e-6, 0.05, "1/1,000,000 to 1/20"),
}


def parse_limit(value: object, where: str, unit: str = "-", measure: str | None = None) -> float:
    """A limit value in the core unit of its measure.

    Parameters
    ----------
    value : str
        ``"25 mm"``, ``"1 in"`` for a settlement; ``"1/500"``, ``"0.2 %"`` or an
        angle (``"0.1 deg"``) for a ratio or a tilt. A bare number is refused: a
        limit says its unit or is written as a ratio (``total = 75`` would be read
        as 75 m).
    where : str
        Place for messages.
    unit : str
        The measure's core unit (:data:`sitesettle.criteria.MEASURES`): ``"m"``
        for settlements, ``"-"`` for ratios, ``"rad"`` for tilt. An angle given
        for a ratio becomes its tangent (a slope); a ratio given for tilt is
        taken as radians (small angles).
    measure : str, optional
        The measure, for its plausible range (:data:`LIMIT_PLAUSIBLE`); outside
        it is an input error.

    Examples
    --------
    >>> parse_limit("1/500", "x")
    0.002
    >>> parse_limit("25 mm", "x", "m")
    0.025
    """
    text = str(value).strip()
    example = '"40 mm"' if unit == "m" else '"1/500"'
    if isinstance(value, bool) or isinstance(value, (int, float)) or units._NUMBER.match(text):
        raise InputError(
            where,
            f"the limit {text} has no unit",
            f"a limit with its unit or as a ratio, such as {example}"
            + (" (a bare number would be read in metres)" if unit == "m" else ""),
        )
    if unit == "m":
        out = units.parse(value, "length", where)
    elif "/" in text and not any(c.isalpha() for c in text):
        num, _, den = text.partition("/")
        try:
            out = float(num) / float(den)
        except (ValueError, ZeroDivisionError):
            raise InputError(
                where, f'cannot read "{value}" as a ratio', 'a ratio such as "1/500"'
            ) from None
    elif re.search(r"(deg|degrees?|rad|radians?)\s*$", text.lower()):
        out = math.radians(units.parse(value, "angle", where))
        out = out if unit == "rad" else math.tan(out)
    else:
        out = units.parse(value, "dimensionless", where)
    if not (math.isfinite(out) and out > 0):
        raise InputError(where, f'the limit "{value}" is not positive', "a limit > 0")
    if measure in LIMIT_PLAUSIBLE:
        lo, hi, span = LIMIT_PLAUSIBLE[measure]
        if not lo <= out <= hi:
            shown = f"{out * 1000:g} mm" if unit == "m" else f"1/{1 / out:,.0f}"
            raise InputError(
                where,
                f'the limit "{value}" ({shown}) is outside the plausible range {span}',
                f"a limit in {span} (common practice), such as {example}",
            )
    return out


def parse_checks(table: dict, where: str = f"{SITE_FILE} [checks]") -> CheckSettings:
    """The ``[checks]`` table as :class:`CheckSettings` (pairs and lines are read by load_site)."""
    kw: dict = {}
    if "criteria" in table:
        name = str(table["criteria"]).strip().lower().replace("-", "_").replace(" ", "_")
        if not name:
            raise InputError(
                f"{where}, key 'criteria'", "the name is empty", "the name of a criteria set"
            )
        if name not in CRITERIA:
            raise InputError(
                f"{where}, key 'criteria'",
                f'unknown criteria set "{table["criteria"]}"' + suggest(name, CRITERIA),
                f"one of {', '.join(CRITERIA)}",
            )
        kw["criteria"] = name
    if "overrides" in table:
        ov = table["overrides"]
        if not isinstance(ov, dict):
            raise InputError(
                f"{where}, key 'overrides'",
                "not a table",
                'overrides = { total = "40 mm", angular_distortion = "1/300" }',
            )
        for k in ov:
            if k not in MEASURES:
                raise InputError(
                    f"{where}, overrides key {k!r}",
                    "unknown measure" + suggest(str(k), MEASURES),
                    f"one of {', '.join(MEASURES)}",
                )
        kw["overrides"] = {
            str(k): parse_limit(v, f"{where}, overrides key {k!r}", MEASURES[k], str(k))
            for k, v in ov.items()
        }
    after = table.get("checked_after")
    if isinstance(after, str) and after.strip().lower().startswith("after "):
        pass  # the end of a stage: resolved by load_site once the stages are read
    elif "checked_after" in table:
        t = units.parse(table["checked_after"], "time", f"{where}, key 'checked_after'")
        if t < 0:
            raise InputError(f"{where}, key 'checked_after'", f"{t:g} yr is negative", "a time ≥ 0")
        kw["checked_after"] = t
    if "pairs" in table:
        kw["pairs"] = PairRule.parse(table["pairs"], f"{where}, key 'pairs'").value
    if "rigid_tilt" in table and "remove_tilt" in table:
        raise InputError(
            f"{where}, key 'remove_tilt'",
            "both rigid_tilt and remove_tilt are given",
            'rigid_tilt alone ("both", "kept" or "removed")',
        )
    if "rigid_tilt" in table:
        kw["rigid_tilt"] = RigidTilt.parse(table["rigid_tilt"], f"{where}, key 'rigid_tilt'").value
    if "remove_tilt" in table:  # the earlier flag: true = "removed", false = "kept"
        flag = parse_flag(table["remove_tilt"], f"{where}, key 'remove_tilt'")
        kw["rigid_tilt"] = (RigidTilt.REMOVED if flag else RigidTilt.KEPT).value
    return CheckSettings(**kw)


# --------------------------------------------------------------------------- pairs
def parse_pairs(data, footing_ids, source: str = "pairs.csv") -> tuple[tuple[str, str], ...]:
    """Listed neighbour pairs: columns ``a`` and ``b`` (footing ids); duplicates dropped."""
    table = data if isinstance(data, Table) else parse_csv(data, source)
    table.check_columns({"a": "text", "b": "text"}, strict=True)
    table.require(["a", "b"])
    ids = set(footing_ids)
    out: list[tuple[str, str]] = []
    seen = set()
    for row in table.rows:
        a = table.identifier(row, "a", "footing id")
        b = table.identifier(row, "b", "footing id")
        for col, fid in (("a", a), ("b", b)):
            if fid not in ids:
                raise InputError(
                    table.where(row, col),
                    f'unknown footing "{fid}"' + suggest(fid, ids),
                    "the id of a footing of the plan",
                )
        if a == b:
            raise InputError(
                table.where(row, "b"),
                f'the pair joins footing "{a}" to itself',
                "two different footings",
            )
        key = frozenset((a, b))
        if key not in seen:
            seen.add(key)
            out.append((a, b))
    return tuple(out)


def parse_points(data, footing_ids, source: str = "points.csv") -> tuple[QueryPoint, ...]:
    """Query points: columns ``id``, ``x``, ``y`` [m] and optional ``depth`` [m, default 0]."""
    table = data if isinstance(data, Table) else parse_csv(data, source)
    table.check_columns(
        {"id": "text", "x": "length", "y": "length", "depth": "length"}, strict=True
    )
    table.require(["id", "x", "y"])
    taken = set(footing_ids)
    out: list[QueryPoint] = []
    seen: set[str] = set()
    for row in table.rows:
        pid = table.identifier(row, "id", "point id")
        if pid in seen:
            raise InputError(table.where(row, "id"), f'id "{pid}" appears twice', "unique ids")
        if pid in taken:
            raise InputError(
                table.where(row, "id"),
                f'id "{pid}" is also a footing id',
                "an id that no footing uses",
            )
        seen.add(pid)
        x = table.quantity(row, "x", "length")
        y = table.quantity(row, "y", "length")
        depth = table.quantity(row, "depth", "length", 0.0)
        for col, v in (("x", x), ("y", y), ("depth", depth)):
            if not math.isfinite(v):
                raise InputError(table.where(row, col), f"{v} is not a finite number", "a number")
        if depth < 0:
            raise InputError(
                table.where(row, "depth"), f"{depth:g} m is above ground", "a depth ≥ 0 m"
            )
        out.append(QueryPoint(pid, x, y, depth))
    return tuple(out)


def parse_structure_lines(
    data, footing_ids, source: str = "lines.csv"
) -> tuple[tuple[str, ...], ...]:
    """Structure lines: columns ``line`` and ``footing``, footings in order along each line."""
    table = data if isinstance(data, Table) else parse_csv(data, source)
    table.check_columns({"line": "text", "footing": "text"}, strict=True)
    table.require(["line", "footing"])
    ids = set(footing_ids)
    lines: dict[str, list[str]] = {}
    for row in table.rows:
        name = table.identifier(row, "line", "line name")
        fid = table.identifier(row, "footing", "footing id")
        if fid not in ids:
            raise InputError(
                table.where(row, "footing"),
                f'unknown footing "{fid}"' + suggest(fid, ids),
                "the id of a footing of the plan",
            )
        lines.setdefault(name, []).append(fid)
    for name, members in lines.items():
        if len(members) < 2:
            raise InputError(
                source, f'the line "{name}" has only one footing', "two or more footings per line"
            )
    return tuple(tuple(v) for v in lines.values())


# --------------------------------------------------------------------------- site
def _file(
    folder: pathlib.Path, table: dict, key: str, where: str, required: bool
) -> pathlib.Path | None:
    if key not in table:
        if required:
            raise InputError(where, f'the key "{key}" is missing', f'{key} = "name of the file"')
        return None
    files.check_path_name(str(table[key]), "file", f"{where}, key {key!r}")
    path = folder / str(table[key])
    if not path.exists():
        raise InputError(
            f"{where}, key {key!r}",
            f'the file "{table[key]}" does not exist in {folder}',
            "a path relative to the project folder",
        )
    return path


def _read_footing_files(folder: pathlib.Path, ftable: dict, where: str, crs, source: str):
    """Footings from one file or a list of files (e.g. a CSV schedule and a GIS raft)."""
    names = ftable.get("file")
    if isinstance(names, list):
        if not names or not all(isinstance(n, str) for n in names):
            raise InputError(
                f"{where}, key 'file'",
                "an empty or malformed list of files",
                'file = "footings.csv" or file = ["pads.csv", "rafts.gpkg"]',
            )
    else:
        names = [names] if names is not None else []
    if not names:
        _file(folder, ftable, "file", where, required=True)  # raises the missing-key error
    defaults = _footing_defaults(ftable, where)
    everything: list = []
    origin: dict[str, str] = {}
    for name in names:
        fpath = _file(folder, {"file": name}, "file", where, required=True)
        found, file_crs = read_footings(
            fpath,
            defaults,
            layer=_text_key(ftable, "layer", where),
            sheet=_text_key(ftable, "sheet", where),
        )
        if file_crs is not None:
            geometry.check_metric_crs(file_crs, fpath.name)
            if crs is not None and not geometry.same_crs(crs, file_crs):
                raise InputError(
                    f"{source} [project], key 'crs'" if len(names) == 1 else fpath.name,
                    f"{crs} differs from the coordinate system of {fpath.name} ({file_crs})",
                    "the same coordinate system for all files (or no crs key)",
                )
            crs = file_crs
        for f in found:
            if f.id in origin:
                raise InputError(
                    fpath.name,
                    f'the footing id "{f.id}" is also used in {origin[f.id]}',
                    "a unique id for each footing across the footing files",
                )
            origin[f.id] = fpath.name
        if everything:
            for i, j, common in geometry.find_overlaps(
                [f.outline for f in everything + list(found)]
            ):
                if i < len(everything) <= j:
                    other = found[j - len(everything)]
                    raise InputError(
                        fpath.name,
                        f'footing "{other.id}" overlaps footing '
                        f'"{everything[i].id}" of {origin[everything[i].id]} by {common:.3g} m²',
                        "footings that do not overlap (merge a combined footing into one)",
                    )
        everything.extend(found)
    return tuple(everything), crs


def _text_key(table: dict, key: str, where: str) -> str | None:
    """An optional key holding text (a sheet or layer name), or InputError."""
    if key not in table:
        return None
    if not isinstance(table[key], str) or not table[key].strip():
        raise InputError(
            f"{where}, key {key!r}", f"{table[key]!r} is not a name", f'{key} = "name" in quotes'
        )
    return table[key].strip()


def _stratum_map(table: dict, key: str, strata, where: str) -> dict[str, str]:
    """The ``legend`` or ``description`` table of [boreholes]: text → stratum name."""
    value = table.get(key, {})
    names = [s.name for s in strata]
    if not isinstance(value, dict):
        raise InputError(
            f"{where}, key {key!r}",
            "expected a table of text → stratum",
            f'{key} = {{ "CODE" = "{names[0] if names else "stratum"}" }}',
        )
    out = {}
    for text, name in value.items():
        if not isinstance(name, str) or name not in names:
            raise InputError(
                f"{where}, key {key!r}, entry {text!r}",
                f"{name!r} is not a stratum"
                + (suggest(name, names) if isinstance(name, str) else ""),
                f"one of the [[strata]] names: {', '.join(names)}",
            )
        if not str(text).strip():
            raise InputError(f"{where}, key {key!r}", "an empty code or text", "a code or words")
        out[str(text).strip()] = name
    return out


def _soundings_files(folder: pathlib.Path, table: dict, where: str) -> list[pathlib.Path]:
    """The soundings file or files (a GEF file holds one sounding: a list is allowed)."""
    names = table.get("file")
    if names is None:
        return []
    if isinstance(names, list):
        if not names or not all(isinstance(n, str) for n in names):
            raise InputError(
                f"{where}, key 'file'",
                "an empty or malformed list of files",
                'file = "soundings.csv" or file = ["CPT1.gef", "CPT2.gef"]',
            )
    else:
        names = [names]
    return [_file(folder, {"file": str(n)}, "file", where, required=True) for n in names]


def _footing_defaults(table: dict, where: str) -> FootingDefaults:
    kw: dict = {}
    if "depth" in table:
        kw["depth"] = units.parse(table["depth"], "length", f"{where}, key 'depth'")
    if "sustained_live_fraction" in table:
        kw["sustained_live_fraction"] = units.parse(
            table["sustained_live_fraction"],
            "dimensionless",
            f"{where}, key 'sustained_live_fraction'",
        )
    if "rigid" in table:
        kw["rigid"] = parse_flag(table["rigid"], f"{where}, key 'rigid'")
    if "fill_unit_weight" in table:
        kw["fill_unit_weight"] = units.parse(
            table["fill_unit_weight"], "unit_weight", f"{where}, key 'fill_unit_weight'"
        )
    # the defaults are checked here, where they are written, not at the first
    # footing row that takes them (that row's file has no such column)
    checks = (
        ("depth", lambda v: v >= 0.0, "a depth ≥ 0 below ground"),
        ("sustained_live_fraction", lambda v: 0.0 <= v <= 1.0, "a fraction between 0 and 1"),
        (
            "fill_unit_weight",
            lambda v: 0.0 <= v <= MAX_FILL_UNIT_WEIGHT,
            f"a unit weight ≥ 0 and ≤ {MAX_FILL_UNIT_WEIGHT:g} kN/m³ (0: loads include them)",
        ),
    )
    for key, ok, expected in checks:
        if key in kw and not ok(kw[key]):
            raise InputError(f"{where}, key '{key}'", f"{kw[key]:g} is out of range", expected)
    return FootingDefaults(**kw)


def build_site(config: dict, folder: pathlib.Path, source: str = SITE_FILE) -> Site:
    """The :class:`Site` from parsed site.toml data; reads the files it names from ``folder``."""
    folder = pathlib.Path(folder)
    project = dict(config.get("project", {}))
    if isinstance(project.get("date"), (_dt.date, _dt.datetime)):  # a TOML date is a date
        project["date"] = project["date"].isoformat()
    for k in ("name", "client", "job_number", "engineer", "notes", "crs", *SIGN_OFF_KEYS):
        if k in project and not isinstance(project[k], str):
            raise InputError(
                f"{source} [project], key '{k}'",
                f"{project[k]!r} is not text",
                f'text in quotes, e.g. {k} = "..."',
            )
    info = {
        k: free_text(project[k], f"{source} [project], key '{k}'", lines=k == "notes")
        for k in ("client", "job_number", "engineer", "notes", *SIGN_OFF_KEYS)
        if k in project
    }
    if "name" in project:
        name = free_text(project["name"], f"{source} [project], key 'name'")
    else:  # the folder's name, shown as its escaped, visible form
        name = terminal_line(folder.resolve().name)
    out_units = OutputUnits.parse(
        project.get("output_units", "si"), f"{source} [project], key 'output_units'"
    ).value
    crs = None
    if "crs" in project:
        try:
            crs = geometry.crs_text(str(project["crs"]))
        except Exception:  # pyproj raises CRSError with a long text
            raise InputError(
                f"{source} [project], key 'crs'",
                f'unknown coordinate system "{project["crs"]}"',
                'a code such as "EPSG:32633" or a WKT text',
            ) from None

    if crs is not None:
        geometry.check_metric_crs(crs, f"{source} [project], key 'crs'")

    water = math.inf
    gw = config.get("groundwater", {})
    if "depth" in gw and str(gw["depth"]).strip().lower() not in ("none", ""):
        water = units.parse(gw["depth"], "length", f"{source} [groundwater], key 'depth'")
        if water < 0:
            raise InputError(
                f"{source} [groundwater], key 'depth'",
                f"{water:g} m is above ground",
                'a depth below ground ≥ 0, or "none"',
            )

    strata = parse_strata(config.get("strata"), source)
    analysis = parse_analysis(config.get("analysis", {}), f"{source} [analysis]")
    checks = parse_checks(config.get("checks", {}), f"{source} [checks]")
    if checks.checked_after >= analysis.design_life:
        raise InputError(
            f"{source} [checks], key 'checked_after'",
            f"{checks.checked_after:g} yr is not before the design life "
            f"({analysis.design_life:g} yr)",
            "a time before the design life (the movement after it is what is checked)",
        )

    ftable = config.get("footings", {})
    footings, crs = _read_footing_files(folder, ftable, f"{source} [footings]", crs, source)

    btable = config.get("boreholes", {})
    bwhere = f"{source} [boreholes]"
    bpath = _file(folder, btable, "file", bwhere, required=True)
    boreholes = read_boreholes(
        bpath,
        strata,
        sheet=_text_key(btable, "sheet", bwhere),
        legend=_stratum_map(btable, "legend", strata, bwhere),
        description=_stratum_map(btable, "description", strata, bwhere),
    )
    stable = config.get("soundings", {})
    swhere = f"{source} [soundings]"
    spaths = _soundings_files(folder, stable, swhere)
    ssheet = _text_key(stable, "sheet", swhere)
    soundings: tuple = ()
    seen_soundings: dict[str, str] = {}
    for spath in spaths:
        found_s = read_soundings(spath, sheet=ssheet)
        for snd in found_s:
            if snd.id in seen_soundings:
                raise InputError(
                    spath.name,
                    f'the sounding id "{snd.id}" is also used in {seen_soundings[snd.id]}',
                    "a unique id for each sounding across the soundings files",
                )
            seen_soundings[snd.id] = spath.name
        soundings += tuple(found_s)

    measured: dict[str, set[str]] = {}
    for b in boreholes:
        for iv in b.intervals:
            measured.setdefault(iv.stratum, set()).update(iv.overrides)
    check_requirements(
        strata,
        granular_method=analysis.granular_method,
        end_of_primary=analysis.end_of_primary,
        clay_settlement=analysis.clay_settlement,
        measured=measured,
        has_soundings=bool(soundings),
        where=source,
    )
    _warn_soundings_cover(strata, boreholes, soundings)

    _check_base_depths(footings, boreholes, strata, f"{source} [footings]")

    area = parse_area_loads(config.get("area_loads"), footings, source)
    stages = parse_stages(config.get("stages"), [a.name for a in area], source)
    after = config.get("checks", {}).get("checked_after")
    if isinstance(after, str):
        t_stage = stage_time(after, stages, f"{source} [checks], key 'checked_after'")
        if t_stage is not None:
            if t_stage >= analysis.design_life:
                raise InputError(
                    f"{source} [checks], key 'checked_after'",
                    f'"{after}" is {t_stage:g} yr, not before the design life',
                    "a stage that ends before the design life",
                )
            checks = replace(checks, checked_after=t_stage)
    ids = [f.id for f in footings]
    qpath = _file(folder, config.get("points", {}), "file", f"{source} [points]", required=False)
    points = parse_points(read_text(qpath, "points file"), ids, qpath.name) if qpath else ()
    ids = ids + [p.id for p in points]
    ctable = config.get("checks", {})
    listed: tuple = ()
    lines: tuple = ()
    ppath = _file(folder, ctable, "pairs_file", f"{source} [checks]", required=False)
    if ppath is not None:
        listed = parse_pairs(read_text(ppath, "pairs file"), ids, ppath.name)
    elif checks.pairs == PairRule.LISTED:
        raise InputError(
            f"{source} [checks], key 'pairs'",
            '"listed" but no pairs_file is given',
            'pairs_file = "pairs.csv", or pairs = "auto"',
        )
    lpath = _file(folder, ctable, "structure_lines_file", f"{source} [checks]", required=False)
    if lpath is not None:
        lines = parse_structure_lines(read_text(lpath, "structure lines file"), ids, lpath.name)
    checks = CheckSettings(**{**checks.__dict__, "listed_pairs": listed, "structure_lines": lines})

    names = ftable.get("file")
    read = [folder / str(n) for n in (names if isinstance(names, list) else [names])]
    read += [p for p in (bpath, *spaths, qpath, ppath, lpath) if p is not None]
    outside = outside_files(folder, read)
    if outside:
        warnings.warn(
            f"files read from outside the project folder {folder}: {', '.join(outside)}",
            InputWarning,
            stacklevel=2,
        )
        info = {**info, OUTSIDE_INFO: ", ".join(outside)}

    return Site(
        name=name,
        footings=footings,
        strata=strata,
        boreholes=boreholes,
        soundings=soundings,
        water_depth=water,
        analysis=analysis,
        checks=checks,
        crs=crs,
        units=out_units,
        info=info,
        points=points,
        outside_files=tuple(outside),
        area_loads=area,
        stages=stages,
    )


#: the entry of Site.info that lists the input files read from outside the project
#: folder (shown in the report's project table and in summary.json)
OUTSIDE_INFO = "files read from outside the project folder"


def outside_files(folder: pathlib.Path, paths) -> list[str]:
    """The paths (resolved, links followed) that are not inside ``folder``."""
    base = pathlib.Path(folder).resolve()
    out = []
    for p in paths:
        real = pathlib.Path(p).resolve()
        if not real.is_relative_to(base) and str(real) not in out:
            out.append(str(real))
    return out


def _check_base_depths(footings, boreholes, strata, where: str) -> None:
    """Refuse a footing founded below every borehole; warn for one founded below the
    nearest borehole's log or in a rigid last stratum (its settlement is zero there).

    Below the investigated depth nothing is known of the ground, and the analysis
    would integrate nothing: a silent 0 mm.
    """
    if not boreholes:
        return
    ends = [max(iv.bottom for iv in b.intervals) for b in boreholes]
    deepest = max(ends)
    rigid = {s.name for s in strata if s.behaviour == Behaviour.RIGID}
    for f in footings:
        if f.depth >= deepest:
            raise InputError(
                f'{where}, footing "{f.id}"',
                f"the base depth {f.depth:g} m is at or below the bottom of every borehole "
                f"(the deepest ends at {deepest:g} m)",
                "a base above the investigated depth (extend the borehole logs, or check "
                "the depth and its unit)",
            )
        k = min(
            range(len(boreholes)),
            key=lambda i: (boreholes[i].x - f.x) ** 2 + (boreholes[i].y - f.y) ** 2,
        )
        bh = boreholes[k]
        if f.depth >= ends[k]:
            warnings.warn(
                f'footing "{f.id}": the base depth {f.depth:g} m is below the bottom of the '
                f'nearest borehole "{bh.id}" ({ends[k]:g} m); the ground under it comes from '
                "deeper boreholes further away",
                InputWarning,
                stacklevel=3,
            )
            continue
        for iv in bh.intervals:
            if iv.stratum in rigid and f.depth >= iv.top:
                warnings.warn(
                    f'footing "{f.id}": the base depth {f.depth:g} m is in the rigid stratum '
                    f'"{iv.stratum}" at the nearest borehole "{bh.id}" (top {iv.top:g} m); its '
                    "own settlement there is taken as zero",
                    InputWarning,
                    stacklevel=3,
                )
                break


def _warn_soundings_cover(strata, boreholes, soundings) -> None:
    """Warn when a stratum takes qc from soundings but no sounding reading falls inside it.

    The stratum's depth range is taken at the borehole nearest to each sounding.
    """
    users = [s.name for s in strata if s.use_soundings]
    if not users or not soundings or not boreholes:
        return
    for name in users:
        hit = False
        for snd in soundings:
            bh = min(boreholes, key=lambda b: (b.x - snd.x) ** 2 + (b.y - snd.y) ** 2)
            for iv in bh.intervals:
                if iv.stratum == name and ((snd.depth >= iv.top) & (snd.depth < iv.bottom)).any():
                    hit = True
        if not hit:
            warnings.warn(
                f'stratum "{name}" takes qc from the soundings, but no sounding reading falls '
                "inside it at the nearest borehole; the cone resistance there is extrapolated",
                InputWarning,
                stacklevel=3,
            )


def read_site_toml(path: pathlib.Path) -> dict:
    """Read and parse a site.toml file (syntax and key names checked)."""
    path = pathlib.Path(path)
    return parse_toml(read_text(path, "project file"), path.name)


#: keys of an [[area_loads]] table
AREA_LOAD_KEYS = (
    "name",
    "pressure",
    "fill_thickness",
    "fill_unit_weight",
    "depth",
    "polygon",
    "extent",
    "excavation",
)
_EXTENT = re.compile(r"^\s*plan\s*(?:\+\s*(?P<margin>.+?))?\s*$", re.I)


def _named_tables(tables, where: str, table: str, keys, example: str):
    """Walk an array of ``[[table]]`` tables: each a table of known ``keys`` with a unique
    ``name``. Yields (place for messages, name, the table); None yields nothing."""
    if tables is None:
        return
    if not isinstance(tables, list):
        raise InputError(f"{where} {table}", f"{table} must be [[{table}]] tables", f"[[{table}]]")
    names: set[str] = set()
    for n, t in enumerate(tables, start=1):
        place = f"{where} [[{table}]] {n}"
        if not isinstance(t, dict):
            raise InputError(place, "not a table", f"[[{table}]] followed by its keys")
        for key in t:
            if key not in keys:
                raise InputError(
                    f"{place}, key {key!r}",
                    "unknown key" + suggest(str(key), keys),
                    f"one of {', '.join(keys)}",
                )
        if not str(t.get("name", "")).strip():
            raise InputError(place, 'the key "name" is missing', f'name = "{example}"')
        what = table.replace("_", " ").rstrip("s") + " name"
        name = identifier(str(t["name"]).strip(), f"{place}, key 'name'", what)
        place = f'{where} [[{table}]] {n} ("{name}")'
        if name in names:
            raise InputError(place, f'the name "{name}" is used twice', "a unique name")
        names.add(name)
        yield place, name, t


def parse_area_loads(tables, footings, where: str = SITE_FILE):
    """The ``[[area_loads]]`` tables as :class:`sitesettle.site.AreaLoad` values.

    Each has a ``name``; a ``pressure``, or a ``fill_thickness`` and
    ``fill_unit_weight`` (pressure = thickness × unit weight); an optional ``depth``
    of the loaded plane below ground (default 0); and its area as a ``polygon``
    (a list of [x, y] in the project's coordinates) or an ``extent`` of
    ``"plan"`` or ``"plan + 20 m"``: the rectangle around every footing, widened by
    the margin on every side (a fill over the whole site).
    """
    from sitesettle.site import AreaLoad

    out = []
    for place, name, t in _named_tables(tables, where, "area_loads", AREA_LOAD_KEYS, "site fill"):
        given_p = "pressure" in t
        given_f = "fill_thickness" in t or "fill_unit_weight" in t
        dig = 0.0
        if "excavation" in t:
            dig = units.parse(t["excavation"], "length", f"{place}, key 'excavation'")
            if not 0 < dig <= 30:
                raise InputError(
                    f"{place}, key 'excavation'", f"{dig:g} m", "an excavation depth in (0, 30] m"
                )
            if given_p or given_f or "depth" in t:
                raise InputError(
                    place,
                    "an excavation takes no pressure, fill or depth",
                    'excavation = "3 m" alone (it unloads the overburden it removes)',
                )
        elif given_p == given_f:
            raise InputError(
                place,
                "give either a pressure or a fill (thickness and unit weight)",
                'pressure = "15 kPa", or fill_thickness = "1 m" and fill_unit_weight = "19 kN/m^3"',
            )
        if dig > 0:
            q, text = math.nan, f"excavation {dig:g} m deep"
        elif given_p:
            q = units.parse(t["pressure"], "pressure", f"{place}, key 'pressure'")
            text = f"{q:g} kPa"
        else:
            for key in ("fill_thickness", "fill_unit_weight"):
                if key not in t:
                    raise InputError(
                        f"{place}, key {key!r}", "the key is missing", "both fill keys"
                    )
            h = units.parse(t["fill_thickness"], "length", f"{place}, key 'fill_thickness'")
            g = units.parse(
                t["fill_unit_weight"], "unit_weight", f"{place}, key 'fill_unit_weight'"
            )
            if not (0 < h <= 30):
                raise InputError(
                    f"{place}, key 'fill_thickness'", f"{h:g} m", "a thickness in (0, 30] m"
                )
            if not (5 <= g <= 30):
                raise InputError(
                    f"{place}, key 'fill_unit_weight'",
                    f"{g:g} kN/m³ is outside the plausible 5–30 kN/m³",
                    "the unit weight of the fill (common practice: 16–22 kN/m³)",
                )
            q = h * g
            text = f"{h:g} m of fill at {g:g} kN/m³ = {q:g} kPa"
        if q <= 0:
            raise InputError(
                f"{place}, key 'pressure'",
                f"{q:g} kPa is not a load",
                'a pressure > 0 (for unloading, an excavation: excavation = "3 m")',
            )
        if dig == 0 and q > MAX_AREA_PRESSURE:
            raise InputError(
                f"{place}, key 'pressure'",
                f"{q:g} kPa is beyond any fill, slab or stockpile",
                f"a pressure ≤ {MAX_AREA_PRESSURE:g} kPa (check the unit)",
            )
        depth = _quantity(t, "depth", "length", f"{place}, key 'depth'", 0.0)
        if not 0 <= depth <= 30:
            raise InputError(f"{place}, key 'depth'", f"{depth:g} m", "a depth in [0, 30] m")
        if ("polygon" in t) == ("extent" in t):
            raise InputError(
                place,
                "give either a polygon or an extent",
                'polygon = [[x1, y1], [x2, y2], [x3, y3], …], or extent = "plan + 20 m"',
            )
        if "extent" in t:
            m = _EXTENT.match(str(t["extent"]))
            if m is None:
                raise InputError(
                    f"{place}, key 'extent'",
                    f'cannot read "{t["extent"]}"',
                    '"plan", or "plan + 20 m" (the footings\' extent widened by a margin)',
                )
            margin = 0.0
            if m.group("margin"):
                margin = units.parse(m.group("margin"), "length", f"{place}, key 'extent'")
            if not 0 <= margin <= 1000:
                raise InputError(f"{place}, key 'extent'", f"margin {margin:g} m", "0–1000 m")
            allxy = np.concatenate([np.asarray(f.outline, float) for f in footings])
            (x0, y0), (x1, y1) = allxy.min(axis=0) - margin, allxy.max(axis=0) + margin
            outline = np.array([[x0, y0], [x1, y0], [x1, y1], [x0, y1]])
            text += f", over the plan + {margin:g} m"
        else:
            outline = _polygon(t["polygon"], f"{place}, key 'polygon'")
        out.append(AreaLoad(name, outline, float(q), float(depth), text, float(dig)))
    return tuple(out)


#: keys of a [[stages]] table
STAGE_KEYS = ("name", "start", "duration", "dead", "live", "area_loads")


def parse_stages(tables, area_names, where: str = SITE_FILE):
    """The ``[[stages]]`` tables as :class:`sitesettle.site.LoadStage` values, in order.

    Each has a ``name``, a ``start`` (a time), an optional ``duration`` (a linear
    ramp; default 0), the fractions ``dead`` and ``live`` of every footing's loads it
    applies (default 0; over the stages each adds up to 1) and the ``area_loads`` it
    applies (names). Area loads named by no stage arrive with the first stage.
    """
    from sitesettle.site import LoadStage

    out = []
    for place, name, t in _named_tables(tables, where, "stages", STAGE_KEYS, "frame"):
        if "start" not in t:
            raise InputError(f"{place}, key 'start'", "the key is missing", 'start = "4 months"')
        start = units.parse(t["start"], "time", f"{place}, key 'start'")
        duration = _quantity(t, "duration", "time", f"{place}, key 'duration'", 0.0)
        for key, v in (("start", start), ("duration", duration)):
            if not 0 <= v <= MAX_TIME:
                raise InputError(f"{place}, key {key!r}", f"{v:g} yr", f"0–{MAX_TIME:g} yr")
        frac = {}
        for key in ("dead", "live"):
            v = units.parse(t.get(key, 0.0), "dimensionless", f"{place}, key {key!r}")
            if not 0 <= v <= 1:
                raise InputError(f"{place}, key {key!r}", f"{v:g}", "a fraction in [0, 1]")
            frac[key] = v
        areas = t.get("area_loads", [])
        if isinstance(areas, str):
            areas = [areas]
        if not isinstance(areas, list):
            raise InputError(
                f"{place}, key 'area_loads'", "not a list of names", 'area_loads = ["site fill"]'
            )
        for a in areas:
            if str(a) not in area_names:
                raise InputError(
                    f"{place}, key 'area_loads'",
                    f'unknown area load "{a}"' + suggest(str(a), area_names),
                    f"one of the [[area_loads]] names: {', '.join(area_names) or 'none'}",
                )
        out.append(
            LoadStage(name, start, duration, frac["dead"], frac["live"], tuple(map(str, areas)))
        )
    for a, b in zip(out[:-1], out[1:]):
        if b.start < a.start:
            raise InputError(
                f"{where} [[stages]] (\"{b.name}\"), key 'start'",
                f"starts at {b.start:g} yr, before the stage above it ({a.start:g} yr)",
                "stages in the order they start",
            )
    named = {n for stg in out for n in stg.area_loads}
    rest = tuple(n for n in area_names if n not in named)
    if rest and out:
        out[0] = replace(out[0], area_loads=out[0].area_loads + rest)
    return tuple(out)


def stage_time(value: str, stages, where: str) -> float | None:
    """The end of the stage that ``value`` names (``"after finishes"``), else None."""
    text = str(value).strip()
    low = text.lower()
    if not low.startswith("after "):
        return None
    key = low[len("after ") :].strip()
    for stg in stages:
        if stg.name.lower() == key:
            return stg.end
    raise InputError(
        where,
        f'no stage called "{text[6:].strip()}"',
        f"a time, or after one of the stages: {', '.join(s.name for s in stages) or 'none'}",
    )


#: the largest pressure accepted for an area load [kPa]: about 25 m of fill
MAX_AREA_PRESSURE = 500.0


def _polygon(value, where: str) -> np.ndarray:
    """A list of [x, y] pairs as a simple polygon (n, 2), not closed."""
    import shapely

    example = "polygon = [[0, 0], [40, 0], [40, 30], [0, 30]] (metres, project coordinates)"
    try:
        xy = np.array(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(where, "not a list of [x, y] pairs", example) from None
    if xy.ndim != 2 or xy.shape[1] != 2 or not np.isfinite(xy).all():
        raise InputError(where, "not a list of [x, y] pairs", example)
    if len(xy) > 3 and np.allclose(xy[0], xy[-1]):
        xy = xy[:-1]
    if len(xy) < 3:
        raise InputError(where, f"{len(xy)} vertices", f"at least 3: {example}")
    for v in xy.ravel():
        geometry.check_coordinate(float(v), where)
    poly = shapely.Polygon(xy)
    if not poly.is_valid or poly.area <= 0:
        raise InputError(where, "the polygon crosses itself or has no area", example)
    return xy


def load_site(folder, overrides=()) -> Site:
    """Read and validate a project folder (or its site.toml) into a :class:`Site`.

    Parameters
    ----------
    folder : str or path-like
        The project folder holding ``site.toml``, or the path of the TOML file.
    overrides : iterable of str or Override, optional
        What-if changes, ``"footing.F4.width=3.0"``, ``"strata.clay.compression_index=0.3"``,
        ``"checks.criteria=bjerrum_tall_buildings"`` (:mod:`sitesettle.io.overrides`):
        the files are not changed, and the site records the changes
        (:attr:`Site.overrides`).

    Returns
    -------
    Site
        The project in core units: m, kN, kPa, kN/m³, m²/yr and years (values given
        with other units in the files are converted with pint).

    Raises
    ------
    InputError
        For any problem the user can fix, naming the file and row/column or key.
    """
    path = pathlib.Path(folder)
    if path.is_dir():
        path = path / SITE_FILE
    if not path.exists():
        raise InputError(
            str(path),
            "no project file here",
            f"a folder with a {SITE_FILE} (sitesettle new DIR writes a starter project)",
        )
    config = read_site_toml(path)
    if not overrides:
        return build_site(config, path.parent, path.name)
    from sitesettle.io import overrides as _ov

    changes = tuple(
        o if isinstance(o, _ov.Override) else _ov.parse_override(str(o)) for o in overrides
    )
    config = _ov.apply_to_config(config, changes)
    try:
        site = build_site(config, path.parent, path.name)
    except InputError as exc:
        raise _ov.blame(exc, changes) from None
    return _ov.apply_to_site(site, changes)
