"""Reading the footings of a plan from a CSV table or a GIS vector file.

CSV: one row per footing with its centre, sides, rotation and shape
(``rectangle`` or ``circle``). GIS (GeoPackage, GeoJSON, shapefile, anything
geopandas reads): one polygon per footing, the same attribute columns less the
geometry ones. Columns are documented in docs/input.md.
"""

from __future__ import annotations

import math
import os
import pathlib
import warnings
from dataclasses import dataclass

from sitesettle.errors import InputError, InputWarning
from sitesettle.io import files, geometry
from sitesettle.io.sheets import SHEET_SUFFIXES, read_sheet
from sitesettle.io.tables import Row, Table, parse_csv, read_text, table_from_frame
from sitesettle.options import FoundationKind
from sitesettle.site import DEFAULT_FILL_UNIT_WEIGHT, Footing

#: attribute columns of a footing and their dimension ("text"/"flag": no unit)
ATTRIBUTE_COLUMNS: dict[str, str] = {
    "id": "text",
    "depth": "length",
    "dead_load": "force",
    "live_load": "force",
    "dead_pressure": "pressure",
    "live_pressure": "pressure",
    "sustained_live_fraction": "dimensionless",
    "rigid": "flag",
    "fill_unit_weight": "unit_weight",
    "kind": "text",
}
#: geometry columns of a CSV footing table
GEOMETRY_COLUMNS: dict[str, str] = {
    "shape": "text",
    "x": "length",
    "y": "length",
    "width": "length",
    "length": "length",
    "rotation": "angle",
}
#: short names for shapefiles, whose field names hold at most 10 characters
ALIASES: dict[str, str] = {
    "dead_press": "dead_pressure",
    "live_press": "live_pressure",
    "sustained": "sustained_live_fraction",
    "fill_gamma": "fill_unit_weight",
    "diameter": "width",
}
#: gross service pressure outside this range is suspicious [kPa] (common practice:
#: shallow footings of buildings carry roughly 50–500 kPa)
#: a base pressure above this is not a shallow footing's service load (an input error) [kPa]
MAX_PRESSURE = 1e5
PRESSURE_RANGE = (10.0, 1500.0)
#: smallest and largest footing side accepted [m]. Below 0.2 m a "footing" is a
#: typing error (mm taken as m, a missing digit): the narrowest wall strips of
#: common practice are 0.3–0.45 m wide, and the sublayers of the analysis
#: (sublayer_fraction ≥ 0.01 of the width, ≥ 2 mm) must stay above the 1 mm that the
#: integration drops. Above 200 m it is not a shallow footing of one building
#: (a raft under a whole block is some tens of metres).
MIN_SIDE = 0.2
MAX_SIDE = 200.0
#: deepest base accepted [m]: a shallow footing is founded a few metres down; 30 m
#: is a deep basement, deeper is a pile or a typing error
MAX_DEPTH = 30.0
#: heaviest average unit weight of footing and backfill [kN/m³]: reinforced concrete
#: is about 25 (EN 1991-1-1:2002 Table A.1, from memory), compacted fill 18–22
MAX_FILL_UNIT_WEIGHT = 30.0
#: GIS file suffixes read with geopandas
GIS_SUFFIXES = (".gpkg", ".geojson", ".json", ".shp", ".fgb", ".gml", ".kml", ".zip")


@dataclass(frozen=True)
class FootingDefaults:
    """Values for footing columns that a file leaves out or blank (``[footings]`` in site.toml)."""

    depth: float | None = None
    sustained_live_fraction: float = 0.0
    rigid: bool = True
    fill_unit_weight: float = DEFAULT_FILL_UNIT_WEIGHT


def _load(table: Table, row: Row, kind: str, area: float) -> float:
    """Dead or live load [kN] from ``{kind}_load`` or ``{kind}_pressure`` × area."""
    has_load = table.has(row, f"{kind}_load")
    has_pressure = table.has(row, f"{kind}_pressure")
    if has_load and has_pressure:
        raise InputError(
            table.where(row, f"{kind}_pressure"),
            f"both {kind}_load and {kind}_pressure are given",
            "one of them (a total force, or a pressure on the base area)",
        )
    if has_pressure:
        return table.quantity(row, f"{kind}_pressure", "pressure") * area
    if has_load:
        return table.quantity(row, f"{kind}_load", "force")
    if kind == "dead":
        column = "dead_load" if "dead_load" in table.columns else "dead_pressure"
        raise InputError(
            table.where(row, column),
            "the dead load is missing",
            'a force such as "850 kN" (dead_load) or a pressure such as "150 kPa" (dead_pressure)',
        )
    return 0.0


def _check_size(table: Table, row: Row, shape: dict) -> None:
    """Refuse a footing whose sides are outside MIN_SIDE–MAX_SIDE (see their notes)."""
    for side in ("width", "length"):
        v = shape[side]
        if MIN_SIDE <= v <= MAX_SIDE:
            continue
        # a CSV row names the column; a GIS polygon's sides come from its outline
        column = side if table.has(row, side) else "width" if table.has(row, "width") else None
        raise InputError(
            table.where(row, column),
            f"the footing's {side} {v:g} m is outside {MIN_SIDE:g}–{MAX_SIDE:g} m",
            f"sides between {MIN_SIDE:g} m and {MAX_SIDE:g} m (a shallow footing; check the unit)",
        )


def _attributes(table: Table, row: Row, shape: dict, defaults: FootingDefaults) -> Footing:
    fid = table.identifier(row, "id", "footing id")
    where = table.where(row)
    _check_size(table, row, shape)
    depth = table.quantity(row, "depth", "length", default=defaults.depth)
    if depth < 0:
        raise InputError(
            table.where(row, "depth"),
            f"the base depth {depth:g} m is negative",
            "a depth below ground ≥ 0",
        )
    if depth > MAX_DEPTH:
        raise InputError(
            table.where(row, "depth" if table.has(row, "depth") else None),
            f"the base depth {depth:g} m is deeper than {MAX_DEPTH:g} m",
            f"a shallow footing's base depth, 0–{MAX_DEPTH:g} m",
        )
    area = (
        math.pi * shape["width"] ** 2 / 4.0
        if shape["shape"] == "circle"
        else abs(geometry._signed_area(shape["outline"]))
    )
    dead = _load(table, row, "dead", area)
    live = _load(table, row, "live", area)
    if not dead > 0:
        raise InputError(
            table.where(row, "dead_load" if table.has(row, "dead_load") else "dead_pressure"),
            f"the dead load {dead:g} kN is not positive",
            "a dead load > 0",
        )
    if live < 0:
        raise InputError(
            table.where(row, "live_load" if table.has(row, "live_load") else "live_pressure"),
            f"the live load {live:g} kN is negative",
            "a live load ≥ 0",
        )
    fraction = table.quantity(
        row, "sustained_live_fraction", "dimensionless", default=defaults.sustained_live_fraction
    )
    if not 0.0 <= fraction <= 1.0:
        raise InputError(
            table.where(row, "sustained_live_fraction"),
            f"{fraction:g} is outside 0–1",
            "a fraction between 0 and 1 (such as 0.3 or 30 %)",
        )
    fill = table.quantity(row, "fill_unit_weight", "unit_weight", default=defaults.fill_unit_weight)
    if fill < 0:
        raise InputError(
            table.where(row, "fill_unit_weight"),
            f"{fill:g} kN/m³ is negative",
            "a unit weight ≥ 0 (0: the loads include footing and backfill)",
        )
    if fill > MAX_FILL_UNIT_WEIGHT:
        raise InputError(
            table.where(row, "fill_unit_weight"),
            f"{fill:g} kN/m³ is heavier than any footing or backfill",
            f"a unit weight ≤ {MAX_FILL_UNIT_WEIGHT:g} kN/m³ (check the unit)",
        )
    rigid = table.flag(row, "rigid", defaults.rigid)
    kind = ""
    if table.has(row, "kind"):
        kind = FoundationKind.parse(table.text(row, "kind"), table.where(row, "kind")).value
    pressure = (dead + live) / area
    if pressure > MAX_PRESSURE:
        raise InputError(
            table.where(row, "dead_load" if table.has(row, "dead_load") else "dead_pressure"),
            f"footing {fid!r} would carry {pressure:.3g} kPa on its base",
            f"service loads that give less than {MAX_PRESSURE:g} kPa (check the unit of the loads)",
        )
    if not PRESSURE_RANGE[0] <= pressure <= PRESSURE_RANGE[1]:
        warnings.warn(
            f"{where}: footing {fid!r} carries {pressure:.0f} kPa under service load, "
            f"outside the usual {PRESSURE_RANGE[0]:g}–{PRESSURE_RANGE[1]:g} kPa; check the "
            "loads and their units",
            InputWarning,
            stacklevel=4,
        )
    return Footing(
        id=fid,
        outline=shape["outline"],
        shape=shape["shape"],
        x=shape["x"],
        y=shape["y"],
        width=shape["width"],
        length=shape["length"],
        rotation=shape["rotation"],
        depth=depth,
        dead_load=dead,
        live_load=live,
        sustained_live_fraction=fraction,
        rigid=rigid,
        fill_unit_weight=fill,
        kind=kind,
    )


def _check_plan(footings: list[Footing], labels: list[str], source: str) -> tuple[Footing, ...]:
    if not footings:
        raise InputError(source, "the file has no footings", "at least one footing row or feature")
    seen: dict[str, str] = {}
    for f, label in zip(footings, labels):
        if f.id in seen:
            raise InputError(
                f"{source} {label}",
                f'the footing id "{f.id}" is used again (first at {seen[f.id]})',
                "a unique id for each footing",
            )
        seen[f.id] = label
    for i, j, common in geometry.find_overlaps([f.outline for f in footings]):
        raise InputError(
            f"{source} {labels[j]}",
            f'footing "{footings[j].id}" overlaps footing "{footings[i].id}" '
            f"({labels[i]}) by {common:.3g} m²",
            "footings that do not overlap (merge a combined footing into one)",
        )
    return tuple(footings)


def _missing_dead(table: Table) -> None:
    if "dead_load" not in table.columns and "dead_pressure" not in table.columns:
        raise InputError(
            table.source,
            'the required column "dead_load" (or "dead_pressure") is missing',
            "a dead load per footing as a force or as a pressure on the base",
        )


def parse_footings_table(
    table: Table, defaults: FootingDefaults = FootingDefaults()
) -> tuple[Footing, ...]:
    """Footings from a CSV-style :class:`Table` (centre, sides, rotation, shape per row).

    Parameters
    ----------
    table : Table
        From :func:`sitesettle.io.tables.parse_csv`.
    defaults : FootingDefaults
        Values for blank or absent attribute columns.
    """
    table.rename(ALIASES)
    table.check_columns({**GEOMETRY_COLUMNS, **ATTRIBUTE_COLUMNS}, strict=False)
    table.require(["id", "x", "y", "width"])
    _missing_dead(table)
    if defaults.depth is None:
        table.require(["depth"])
    footings, labels = [], []
    for row in table.rows:
        shape_name = table.text(row, "shape", default="rectangle").lower()
        if shape_name not in ("rectangle", "circle", "square"):
            raise InputError(
                table.where(row, "shape"),
                f'unknown shape "{shape_name}"',
                '"rectangle" or "circle" (polygons come from a GIS file)',
            )
        x = geometry.check_coordinate(table.quantity(row, "x", "length"), table.where(row, "x"))
        y = geometry.check_coordinate(table.quantity(row, "y", "length"), table.where(row, "y"))
        width = table.quantity(row, "width", "length")
        if not width > 0:
            raise InputError(
                table.where(row, "width"), f"the width {width:g} m is not positive", "a width > 0"
            )
        if shape_name == "circle":
            shape = {
                "shape": "circle",
                "outline": geometry.circle_outline(x, y, width),
                "x": x,
                "y": y,
                "width": width,
                "length": width,
                "rotation": 0.0,
            }
        else:
            length = table.quantity(row, "length", "length", default=width)
            if not length > 0:
                raise InputError(
                    table.where(row, "length"),
                    f"the length {length:g} m is not positive",
                    "a length > 0 (blank for a square)",
                )
            rotation = table.quantity(row, "rotation", "angle", default=0.0)
            b, l, rot = geometry.normalise_sides(width, length, rotation)
            shape = {
                "shape": "rectangle",
                "outline": geometry.rectangle_outline(x, y, b, l, rot),
                "x": x,
                "y": y,
                "width": b,
                "length": l,
                "rotation": rot,
            }
        footings.append(_attributes(table, row, shape, defaults))
        labels.append(row.label)
    return _check_plan(footings, labels, table.source)


def parse_footings_csv(
    text: str, source: str = "footings.csv", defaults: FootingDefaults = FootingDefaults()
) -> tuple[Footing, ...]:
    """Footings from the text of a CSV file."""
    return parse_footings_table(parse_csv(text, source), defaults)


def _circle_shape(x: float, y: float, diameter: float) -> dict:
    return {
        "shape": "circle",
        "outline": geometry.circle_outline(x, y, diameter),
        "x": x,
        "y": y,
        "width": diameter,
        "length": diameter,
        "rotation": 0.0,
    }


#: a polygon that carries a diameter property must have the area of that circle to
#: this fraction (a buffered point of 8 segments per quarter is within 0.7 %; a square
#: with the circle's "diameter" as its side is 27 % larger)
DIAMETER_AREA_TOLERANCE = 0.1


def _gis_shape(table: Table, row: Row, geom, *, diameter: bool = False) -> dict:
    """The shape of a GIS feature: a polygon's footprint, or a true circle from a point
    with a diameter, a polygon with a diameter property, or a polygon that is a drawn
    circle (a buffered point)."""
    from shapely.geometry import MultiPolygon, Point, Polygon

    where = table.where(row)
    if (
        diameter
        and isinstance(geom, Polygon | MultiPolygon)
        and not geom.is_empty
        and table.has(row, "width")
    ):
        d = table.quantity(row, "width", "length")
        if not d > 0:
            raise InputError(
                table.where(row, "width"), f"the diameter {d:g} m is not positive", "a diameter > 0"
            )
        area = math.pi * d * d / 4.0
        if not abs(geom.area / area - 1.0) <= DIAMETER_AREA_TOLERANCE:
            raise InputError(
                table.where(row, "width"),
                f"the polygon's area {geom.area:.4g} m² is not that of a circle of diameter "
                f"{d:g} m ({area:.4g} m²)",
                f"a round outline within {DIAMETER_AREA_TOLERANCE:.0%} of the circle's area, or "
                "no diameter property for a footing that is not round",
            )
        c = geom.centroid
        geometry.check_coordinate(max(abs(c.x), abs(c.y)), where)
        return _circle_shape(float(c.x), float(c.y), d)
    if isinstance(geom, Point) and not geom.is_empty:
        if not table.has(row, "width"):
            raise InputError(
                where,
                "the geometry is a Point without a diameter",
                'a polygon outlining the footing, or a point with a "diameter" property '
                "(a circular footing)",
            )
        x = geometry.check_coordinate(float(geom.x), where)
        y = geometry.check_coordinate(float(geom.y), where)
        d = table.quantity(row, "width", "length")
        if not d > 0:
            raise InputError(
                table.where(row, "width"), f"the diameter {d:g} m is not positive", "a diameter > 0"
            )
        return _circle_shape(x, y, d)
    circle = geometry.circle_of_polygon(geom) if geom is not None else None
    if circle is not None and geom.is_valid:
        x, y, d = circle
        geometry.check_coordinate(max(abs(x), abs(y)), where)
        return _circle_shape(x, y, d)
    return geometry.polygon_footprint(geom, where)


def parse_footings_dxf(
    path: pathlib.Path,
    defaults: FootingDefaults = FootingDefaults(),
    *,
    layer: str | None = None,
) -> tuple[Footing, ...]:
    """Footings from the closed polylines and circles of a DXF layer (docs/input.md).

    Each outline's attributes (at least ``id``) come from the nearest text or block
    (:func:`sitesettle.io.cad.read_dxf_footings`); the rest from ``defaults``.
    """
    from sitesettle.io import cad
    from sitesettle.io.tables import _new_table

    path = pathlib.Path(path)
    outlines = cad.read_dxf_footings(path, layer)
    names: list[str] = []
    for o in outlines:
        for k in o["cells"]:
            if k not in names:
                names.append(k)
    table = _new_table(path.name, names, header_label="block attributes")
    for o in outlines:
        table.rows.append(Row(o["label"], {n: o["cells"].get(n) for n in table.columns}))
    table.rename(ALIASES)
    ignored = {k: "ignored" for k in GEOMETRY_COLUMNS}
    table.check_columns({**ATTRIBUTE_COLUMNS, **ignored}, strict=False)
    _missing_dead(table)
    if defaults.depth is None:
        table.require(["depth"])
    footings, labels = [], []
    for row, o in zip(table.rows, outlines):
        if o["circle"] is not None:
            shape = _circle_shape(*o["circle"])
        else:
            shape = _gis_shape(table, row, o["shape"])
        footings.append(_attributes(table, row, shape, defaults))
        labels.append(row.label)
    return _check_plan(footings, labels, path.name)


def parse_footings_frame(
    frame, source: str = "footings", defaults: FootingDefaults = FootingDefaults()
) -> tuple[tuple[Footing, ...], str | None]:
    """Footings from a GeoDataFrame (polygons plus attribute columns) and its CRS text.

    Rows are named "feature n", 1-based in file order.
    """
    geoms = list(frame.geometry)
    attrs = frame.drop(columns=[frame.geometry.name])
    table = table_from_frame(attrs, source)
    diameter = "diameter" in table.columns  # a property saying "this is a circle"
    table.rename(ALIASES)
    ignored = {k: "ignored" for k in GEOMETRY_COLUMNS}  # the geometry decides the shape
    table.check_columns({**ATTRIBUTE_COLUMNS, **ignored, "fid": "ignored"}, strict=False)
    table.require(["id"])
    _missing_dead(table)
    if defaults.depth is None:
        table.require(["depth"])
    footings, labels = [], []
    for row, geom in zip(table.rows, geoms):
        shape = _gis_shape(table, row, geom, diameter=diameter)
        footings.append(_attributes(table, row, shape, defaults))
        labels.append(row.label)
    crs = geometry.crs_text(frame.crs) if frame.crs is not None else None
    return _check_plan(footings, labels, source), crs


#: the parts of a shapefile that GDAL may open beside the .shp (and inside a .zip)
SHAPEFILE_PARTS = (".shp", ".shx", ".dbf", ".prj", ".cpg")


def _check_gis_file(path: pathlib.Path) -> None:
    """Refuse before GDAL opens anything: not a regular file of the format its suffix
    says, a shapefile part that is not a regular file, a zip holding anything but a
    shapefile. Then switch GDAL's network access off."""
    files.check_gis_content(path, "footings file")
    suffix = path.suffix.lower()
    if suffix == ".shp":
        for part in SHAPEFILE_PARTS[1:]:
            for sibling in (path.with_suffix(part), path.with_suffix(part.upper())):
                if os.path.lexists(sibling):
                    files.check_input_file(sibling, "shapefile part")
    if suffix == ".zip":
        import zipfile

        try:
            with zipfile.ZipFile(path) as zf:
                members = [m for m in zf.infolist() if not m.is_dir()]
        except zipfile.BadZipFile:
            raise InputError(
                path.name, "the file is not a zip archive", "a zipped shapefile"
            ) from None
        odd = [
            m.filename
            for m in members
            if pathlib.PurePath(m.filename).suffix.lower() not in SHAPEFILE_PARTS
        ]
        total = sum(m.file_size for m in members)
        if odd or not members:
            raise InputError(
                path.name,
                f"the zip archive holds {odd[0]!r}" if odd else "the zip archive is empty",
                "a zipped shapefile (.shp, .shx, .dbf, .prj, .cpg only)",
            )
        if total > files.MAX_INPUT_BYTES:
            raise InputError(
                path.name,
                f"the zip archive unpacks to {total / 2**20:.0f} MB",
                "at most 200 MB of shapefile",
            )
    files.disable_gdal_network()


def read_footings(
    path: pathlib.Path,
    defaults: FootingDefaults = FootingDefaults(),
    *,
    layer: str | None = None,
    sheet: str | None = None,
) -> tuple[tuple[Footing, ...], str | None]:
    """Read footings from a CSV, .xlsx, DXF or GIS file; return them and the file's CRS
    (None for CSV, spreadsheets and DXF).

    ``layer`` names the GIS or DXF layer, ``sheet`` the spreadsheet's sheet.
    """
    path = pathlib.Path(path)
    if path.suffix.lower() in (".csv", ".txt", ".tsv"):
        return parse_footings_csv(read_text(path, "footings file"), path.name, defaults), None
    if path.suffix.lower() == ".dxf":
        return parse_footings_dxf(path, defaults, layer=layer), None
    if path.suffix.lower() in SHEET_SUFFIXES:
        return parse_footings_table(read_sheet(path, sheet, "footings file"), defaults), None
    _check_gis_file(path)
    import geopandas

    try:
        with warnings.catch_warnings():
            # a property holding numbers in some features and text in others stays
            # text; every cell is parsed (and checked) below, so the reader's
            # warning about it is noise
            warnings.filterwarnings(
                "ignore", message=r"Could not parse column .* as JSON", category=UserWarning
            )
            frame = geopandas.read_file(path, layer=layer) if layer else geopandas.read_file(path)
    except Exception as exc:  # pyogrio raises several kinds of errors for unreadable files
        raise InputError(
            path.name,
            f"cannot read the file as GIS data ({exc})",
            "a GeoPackage, GeoJSON or shapefile with polygon features",
        ) from None
    if getattr(frame, "_geometry_column_name", None) not in frame.columns:
        raise InputError(
            path.name, "the file has no geometry", "a GIS layer of polygons (one per footing)"
        )
    if len(frame) == 0:
        raise InputError(path.name, "the file has no footings", "at least one polygon feature")
    if getattr(frame, "crs", None) is not None:  # degrees or feet: refuse before reading sizes
        geometry.check_metric_crs(geometry.crs_text(frame.crs), path.name)
    return parse_footings_frame(frame, path.name, defaults)
