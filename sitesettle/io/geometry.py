"""Footing plan shapes: outlines, the sides of a polygon, overlaps, CRS text.

Conventions (shared with :class:`sitesettle.site.Footing`): outlines are (n, 2)
arrays, counter-clockwise, without the closing vertex; ``width`` B ≤ ``length``
L; ``rotation`` is the angle of the long side from east, counter-clockwise, in
degrees, normalised to [0, 180) (to [0, 90) for a square, whose sides are
alike).
"""

from __future__ import annotations

import math

import numpy as np

from sitesettle.errors import InputError

#: number of vertices of the drawing outline of a circular footing
CIRCLE_VERTICES = 64
#: two footings overlap when their common area exceeds this fraction of the
#: smaller one (smaller overlaps are slivers from rounded coordinates)
OVERLAP_TOLERANCE = 1e-3
#: a polygon is taken as a rectangle when it has 4 corners and fills its minimum
#: rotated rectangle to this relative tolerance (rounding of GIS coordinates)
RECTANGLE_TOLERANCE = 1e-6
#: largest plan coordinate accepted [m]: no projected system in metres reaches it
#: (the Earth's circumference is 4.0e7 m), and below it float64 resolves 1e-8 m
MAX_COORDINATE = 1e8


def check_coordinate(value: float, where: str) -> float:
    """Return ``value`` or raise InputError if it is beyond ±MAX_COORDINATE metres.

    Examples
    --------
    >>> check_coordinate(512345.6, "x")
    512345.6
    """
    if not abs(value) <= MAX_COORDINATE:
        raise InputError(
            where,
            f"the coordinate {value:g} m is beyond ±{MAX_COORDINATE:g} m",
            "plan coordinates in metres of a projected system (check the unit and the column)",
        )
    return value


def normalise_sides(width: float, length: float, rotation: float) -> tuple[float, float, float]:
    """Return (B, L, rotation) with B ≤ L and the rotation of L in [0, 180) degrees.

    Examples
    --------
    >>> normalise_sides(3.0, 2.0, 10.0)
    (2.0, 3.0, 100.0)
    >>> normalise_sides(2.0, 2.0, 135.0)
    (2.0, 2.0, 45.0)
    """
    if width > length:
        width, length, rotation = length, width, rotation + 90.0
    period = 90.0 if math.isclose(width, length, rel_tol=1e-9) else 180.0
    rotation = float(rotation % period)
    if math.isclose(rotation, period, abs_tol=1e-9):
        rotation = 0.0
    return float(width), float(length), rotation


def rectangle_outline(
    x: float, y: float, width: float, length: float, rotation: float
) -> np.ndarray:
    """The 4 corners of a rectangle, counter-clockwise, from its centre, sides and rotation.

    ``length`` runs along the direction ``rotation`` (degrees CCW from east).

    Examples
    --------
    >>> rectangle_outline(0, 0, 2, 4, 0).tolist()
    [[-2.0, -1.0], [2.0, -1.0], [2.0, 1.0], [-2.0, 1.0]]
    """
    a = math.radians(rotation)
    u = np.array([math.cos(a), math.sin(a)]) * (length / 2.0)
    v = np.array([-math.sin(a), math.cos(a)]) * (width / 2.0)
    c = np.array([x, y], dtype=float)
    return np.array([c - u - v, c + u - v, c + u + v, c - u + v])


def circle_outline(x: float, y: float, diameter: float, n: int = CIRCLE_VERTICES) -> np.ndarray:
    """A regular n-gon inscribed in the circle, counter-clockwise (for drawing only)."""
    t = np.linspace(0.0, 2.0 * math.pi, n, endpoint=False)
    r = diameter / 2.0
    return np.column_stack([x + r * np.cos(t), y + r * np.sin(t)])


#: a polygon is taken as a drawn circle (a buffered point, a circle exported as a
#: polygon) when it has at least this many vertices, all at the same distance from
#: its centroid to CIRCLE_TOLERANCE and evenly spaced in angle to the same tolerance
CIRCLE_MIN_VERTICES = 16
CIRCLE_TOLERANCE = 1e-6


def circle_of_polygon(geom) -> tuple[float, float, float] | None:
    """(x, y, diameter) when a polygon is a regular n-gon standing for a circle, else None.

    A circle exported as polygon (``Point.buffer``, site.gpkg's 64-gon) has all its
    vertices on the circle; the diameter returned is that circle's, so that a
    circle written and read back keeps its size.

    Examples
    --------
    >>> import shapely
    >>> x, y, d = circle_of_polygon(shapely.Point(3.0, 4.0).buffer(1.5))
    >>> round(x, 9), round(y, 9), round(d, 9)
    (3.0, 4.0, 3.0)
    >>> circle_of_polygon(shapely.box(0, 0, 2, 1)) is None
    True
    """
    from shapely.geometry import MultiPolygon, Polygon

    if isinstance(geom, MultiPolygon) and len(geom.geoms) == 1:
        geom = geom.geoms[0]
    if not isinstance(geom, Polygon) or geom.is_empty or len(geom.interiors):
        return None
    ring = np.asarray(geom.exterior.coords, dtype=float)[:-1, :2]
    if len(ring) < CIRCLE_MIN_VERTICES or not np.all(np.isfinite(ring)):
        return None
    c = ring.mean(axis=0)
    d = ring - c
    r = np.hypot(d[:, 0], d[:, 1])
    if not r.mean() > 0 or np.ptp(r) > CIRCLE_TOLERANCE * r.mean():
        return None
    angles = np.sort(np.mod(np.arctan2(d[:, 1], d[:, 0]), 2 * math.pi))
    steps = np.diff(np.append(angles, angles[0] + 2 * math.pi))
    if np.ptp(steps) > CIRCLE_TOLERANCE * 2 * math.pi:
        return None
    return float(c[0]), float(c[1]), float(2.0 * r.mean())


def _signed_area(xy: np.ndarray) -> float:
    x, y = xy[:, 0], xy[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def polygon_footprint(geom, where: str) -> dict:
    """Shape, outline, centroid, sides and rotation of a footing polygon from a GIS file.

    Parameters
    ----------
    geom : shapely geometry
        A Polygon (or a MultiPolygon of one part), without holes.
    where : str
        Place used in messages (``'plan.gpkg feature 3'``).

    Returns
    -------
    dict
        Keys ``shape`` ("rectangle" when the polygon is one, else "polygon"),
        ``outline``, ``x``, ``y``, ``width``, ``length``, ``rotation``. Width and
        length are the sides of the minimum rotated rectangle.
    """
    import shapely
    from shapely.geometry import MultiPolygon, Polygon

    if geom is None or geom.is_empty:
        raise InputError(where, "the geometry is empty", "a polygon outlining the footing")
    if isinstance(geom, MultiPolygon):
        if len(geom.geoms) != 1:
            raise InputError(
                where,
                f"the geometry has {len(geom.geoms)} parts",
                "one polygon per footing (split a multi-part feature)",
            )
        geom = geom.geoms[0]
    if not isinstance(geom, Polygon):
        raise InputError(
            where, f"the geometry is a {geom.geom_type}", "a polygon outlining the footing"
        )
    if geom.has_z:
        geom = shapely.force_2d(geom)
    if len(geom.interiors):
        raise InputError(where, "the polygon has a hole", "a footing outline without holes")
    if not geom.is_valid:
        raise InputError(
            where,
            f"the polygon is invalid ({shapely.is_valid_reason(geom)})",
            "a simple polygon whose edges do not cross",
        )
    if geom.area <= 0.0 or not math.isfinite(geom.area):
        raise InputError(where, "the polygon has no area", "a polygon with a positive area")
    ring = np.asarray(geom.exterior.coords, dtype=float)[:-1]
    if not np.all(np.isfinite(ring)):
        raise InputError(
            where, "the polygon has a coordinate that is not a finite number", "finite coordinates"
        )
    check_coordinate(float(np.max(np.abs(ring))), where)
    if _signed_area(ring) < 0:
        ring = ring[::-1]
    c = geom.centroid
    mrr = np.asarray(shapely.oriented_envelope(geom).exterior.coords, dtype=float)[:-1]
    e1, e2 = mrr[1] - mrr[0], mrr[2] - mrr[1]
    s1, s2 = float(np.hypot(*e1)), float(np.hypot(*e2))
    long_edge = e1 if s1 >= s2 else e2
    rotation = math.degrees(math.atan2(long_edge[1], long_edge[0]))
    width, length, rotation = normalise_sides(min(s1, s2), max(s1, s2), rotation)
    corners = np.asarray(shapely.simplify(geom, 0.0).exterior.coords)[:-1]
    is_rect = len(corners) == 4 and geom.area >= (1.0 - RECTANGLE_TOLERANCE) * width * length
    if is_rect:
        outline = rectangle_outline(c.x, c.y, width, length, rotation)
    else:
        outline = ring
    return {
        "shape": "rectangle" if is_rect else "polygon",
        "outline": outline,
        "x": float(c.x),
        "y": float(c.y),
        "width": width,
        "length": length,
        "rotation": rotation,
    }


def find_overlaps(outlines, tolerance: float = OVERLAP_TOLERANCE) -> list[tuple[int, int, float]]:
    """Pairs (i, j, common area) of outlines that overlap by more than ``tolerance``.

    ``tolerance`` is a fraction of the smaller outline's area, so that footings
    that only touch (combined footings drawn edge to edge) pass.
    """
    import shapely

    polys = np.array([shapely.Polygon(np.asarray(o, dtype=float)) for o in outlines], dtype=object)
    tree = shapely.STRtree(polys)
    left, right = tree.query(polys, predicate="intersects")
    keep = left < right
    out = []
    for i, j in zip(left[keep], right[keep]):
        common = shapely.area(shapely.intersection(polys[i], polys[j]))
        if common > tolerance * min(polys[i].area, polys[j].area):
            out.append((int(i), int(j), float(common)))
    return out


def crs_text(crs) -> str | None:
    """A CRS as "EPSG:xxxx" when it has a code, else as WKT (None stays None)."""
    if crs is None:
        return None
    from pyproj import CRS

    crs = CRS.from_user_input(crs)
    epsg = crs.to_epsg()
    return f"EPSG:{epsg}" if epsg is not None else crs.to_wkt()


def check_metric_crs(crs: str, where: str) -> None:
    """Raise InputError unless ``crs`` is a projected system with axes in metres.

    sitesettle computes in metres; plan coordinates in degrees or feet would be
    taken as metres, so such a file must be reprojected first.
    """
    from pyproj import CRS

    c = CRS.from_user_input(crs)
    units = {a.unit_name for a in c.axis_info}
    if c.is_geographic or not c.is_projected or units != {"metre"}:
        shown = " and ".join(sorted(units)) or "no unit"
        raise InputError(
            where,
            f"the coordinate system {crs_text(crs)[:40]} has its axes in {shown}",
            "a projected system in metres (reproject the file, e.g. to the local UTM zone)",
        )


def same_crs(a: str, b: str) -> bool:
    """True if two CRS descriptions name the same system."""
    from pyproj import CRS

    return CRS.from_user_input(a).equals(CRS.from_user_input(b), ignore_axis_order=True)
