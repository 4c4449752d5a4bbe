"""Reading a project folder: ``site.toml`` and the files it names, into a :class:`Site`.

Every key is documented in docs/input.md. Reading is split in two so that tests
can feed text: ``parse_*`` functions take text or parsed tables, ``read_*`` and
:func:`load_site` take paths.
"""

from __future__ import annotations

import math
import pathlib
import re
import tomllib
import warnings

from sitesettle import units
from sitesettle.criteria import CRITERIA, MEASURES
from sitesettle.errors import InputError, InputWarning
from sitesettle.io import geometry
from sitesettle.io.footings import FootingDefaults, read_footings
from sitesettle.io.investigation import read_boreholes, read_soundings
from sitesettle.io.strata import check_requirements, parse_strata
from sitesettle.io.tables import Table, parse_csv, parse_flag, read_text, suggest
from sitesettle.options import (
    Choice,
    ClaySettlement,
    DepthRule,
    EndOfPrimary,
    GranularMethod,
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


#: the tables of site.toml and their keys
TABLES: dict[str, tuple[str, ...]] = {
    "project": ("name", "client", "job_number", "engineer", "notes", "output_units", "crs"),
    "groundwater": ("depth",),
    "footings": ("file", "layer", "depth", "sustained_live_fraction", "rigid", "fill_unit_weight"),
    "boreholes": ("file",),
    "soundings": ("file",),
    "points": ("file",),
    "strata": (),
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
    ),
    "checks": (
        "criteria",
        "overrides",
        "checked_after",
        "pairs",
        "pairs_file",
        "structure_lines_file",
        "remove_tilt",
    ),
}

#: numeric [analysis] keys and their ranges (all values must be ≥ 0)
ANALYSIS_NUMBERS: dict[str, tuple[str, str, bool, float]] = {
    # key: (field, dimension, zero allowed?, highest allowed)
    "design_life": ("design_life", "time", False, math.inf),
    "influence_fraction": ("influence_fraction", "dimensionless", False, 1.0),
    "max_depth_widths": ("max_depth_widths", "dimensionless", False, math.inf),
    "max_depth": ("max_depth", "length", False, math.inf),
    "truncation_tolerance": ("truncation_tolerance", "dimensionless", False, 0.1),
    "sublayer_fraction": ("sublayer_fraction", "dimensionless", False, 1.0),
    "time_factor_r3": ("bb_r3", "dimensionless", True, math.inf),
    "time_factor_r": ("bb_r", "dimensionless", True, math.inf),
    "map_spacing": ("map_spacing", "length", True, math.inf),
    "map_margin": ("map_margin", "length", True, math.inf),
    "stress_tolerance": ("stress_tolerance", "dimensionless", True, 1.0),
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
    for name, value in data.items():
        if name not in TABLES:
            raise InputError(
                f"{source}, [{name}]",
                "unknown table or key at the top level" + suggest(name, TABLES),
                f"one of the tables {', '.join(TABLES)}",
            )
        if name == "strata":
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
    for key, (field, dim, zero_ok, hi) in ANALYSIS_NUMBERS.items():
        if key in table:
            kwhere = f"{where}, key {key!r}"
            v = units.parse(table[key], dim, kwhere)
            if not ((v >= 0 if zero_ok else v > 0) and v <= hi):
                low = "≥ 0" if zero_ok else "> 0"
                raise InputError(
                    kwhere,
                    f"{v:g} is out of range",
                    f"a value {low}" + (f" and ≤ {hi:g}" if math.isfinite(hi) else ""),
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
    if "cohesive_immediate" in table:
        kw["cohesive_immediate"] = parse_flag(
            table["cohesive_immediate"], f"{where}, key 'cohesive_immediate'"
        )
    settings = AnalysisSettings(**{**default.__dict__, **kw})
    return settings


def parse_limit(value: object, where: str, unit: str = "-") -> float:
    """A limit value in the core unit of its measure.

    Parameters
    ----------
    value : str or float
        ``"25 mm"``, ``"1 in"``, ``0.025`` for a settlement; ``"1/500"``,
        ``0.002``, ``"0.2 %"`` or an angle (``"0.1 deg"``) for a ratio.
    where : str
        Place for messages.
    unit : str
        The measure's core unit (:data:`sitesettle.criteria.MEASURES`): ``"m"``
        for settlements, ``"-"`` for ratios, ``"rad"`` for tilt. An angle given
        for a ratio becomes its tangent (a slope); a ratio given for tilt is
        taken as radians (small angles).

    Examples
    --------
    >>> parse_limit("1/500", "x")
    0.002
    >>> parse_limit("25 mm", "x", "m")
    0.025
    """
    text = str(value).strip()
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
            str(k): parse_limit(v, f"{where}, overrides key {k!r}", MEASURES[k])
            for k, v in ov.items()
        }
    if "checked_after" in table:
        t = units.parse(table["checked_after"], "time", f"{where}, key 'checked_after'")
        if t < 0:
            raise InputError(f"{where}, key 'checked_after'", f"{t:g} yr is negative", "a time ≥ 0")
        kw["checked_after"] = t
    if "pairs" in table:
        kw["pairs"] = PairRule.parse(table["pairs"], f"{where}, key 'pairs'").value
    if "remove_tilt" in table:
        kw["remove_tilt"] = parse_flag(table["remove_tilt"], f"{where}, key 'remove_tilt'")
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
        a, b = table.text(row, "a"), table.text(row, "b")
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
        pid = table.text(row, "id")
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
        name, fid = table.text(row, "line"), table.text(row, "footing")
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
        found, file_crs = read_footings(fpath, defaults, layer=ftable.get("layer"))
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
        ("fill_unit_weight", lambda v: v >= 0.0, "a unit weight ≥ 0 (0: loads include them)"),
    )
    for key, ok, expected in checks:
        if key in kw and not ok(kw[key]):
            raise InputError(f"{where}, key '{key}'", f"{kw[key]:g} is out of range", expected)
    return FootingDefaults(**kw)


def build_site(config: dict, folder: pathlib.Path, source: str = SITE_FILE) -> Site:
    """The :class:`Site` from parsed site.toml data; reads the files it names from ``folder``."""
    folder = pathlib.Path(folder)
    project = config.get("project", {})
    for k in ("name", "client", "job_number", "engineer", "notes", "crs"):
        if k in project and not isinstance(project[k], str):
            raise InputError(
                f"{source} [project], key '{k}'",
                f"{project[k]!r} is not text",
                f'text in quotes, e.g. {k} = "..."',
            )
    info = {
        k: str(project[k]) for k in ("client", "job_number", "engineer", "notes") if k in project
    }
    name = str(project.get("name", folder.resolve().name))
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

    bpath = _file(
        folder, config.get("boreholes", {}), "file", f"{source} [boreholes]", required=True
    )
    boreholes = read_boreholes(bpath, strata)
    spath = _file(
        folder, config.get("soundings", {}), "file", f"{source} [soundings]", required=False
    )
    soundings = read_soundings(spath) if spath is not None else ()

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
    )


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


def load_site(folder) -> Site:
    """Read and validate a project folder (or its site.toml) into a :class:`Site`.

    Parameters
    ----------
    folder : str or path-like
        The project folder holding ``site.toml``, or the path of the TOML file.

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
    return build_site(config, path.parent, path.name)
