"""CAD drawings: ``site.dxf`` out, footing outlines in (DXF, with ezdxf).

Out: :func:`write_dxf` draws the plan in the project's coordinates (metres, or
feet with ``output_units = "us"``, the same as ``site.gpkg``), one layer per kind
of thing:

``FOOTINGS``
    closed polylines (a circular footing stays a CIRCLE) and the footing ids as text;
``PAIRS``
    one line per checked pair, centre to centre, green when it passes, red when it
    fails, grey when unchecked (AutoCAD colour index 3, 1 and 8);
``CONTOURS``
    the settlement contours as open polylines with their level as text (mm or in)
    at the middle of each line, and the level also as the polyline's elevation;
``POINTS``
    the query points as POINT entities with their ids as text.

In: :func:`read_dxf_footings` reads the closed polylines and circles of one
layer; each outline takes its id (and any other attribute) from the text or
the block reference whose insertion point is nearest to it (inside it counts as
distance 0). A block's attributes are named by their tags (``ID``, ``DEAD_LOAD``,
``DEPTH``...), their values may carry units (``"850 kN"``).
"""

from __future__ import annotations

import math
import pathlib

import numpy as np

from sitesettle.errors import InputError
from sitesettle.io import files, geometry

#: layer names of site.dxf and their AutoCAD colour index (ACI)
LAYERS = {"FOOTINGS": 7, "PAIRS": 8, "CONTOURS": 5, "POINTS": 6}
#: colour of a pair line by status (ACI: 3 green, 1 red, 8 grey)
PAIR_COLOURS = {"pass": 3, "fail": 1, "unchecked": 8}
#: $INSUNITS of the drawing by output units (6 metres, 2 feet)
INSUNITS = {"si": 6, "us": 2}
#: DXF header signatures: a text DXF starts with group code 0 and SECTION, a
#: binary DXF with this sentinel
_BINARY_DXF = b"AutoCAD Binary DXF\r\n\x1a\x00"


def _text_height(results) -> float:
    """A readable text height [m]: 2 % of the plan's larger extent, 0.1–2 m."""
    xy = np.concatenate([np.asarray(f.outline, float) for f in results.site.footings])
    extent = float(np.ptp(xy, axis=0).max()) if len(xy) else 10.0
    return min(max(0.02 * extent, 0.1), 2.0)


def write_dxf(results, path: pathlib.Path, units: str = "si") -> None:
    """Write ``site.dxf`` (DXF R2013): footings, pairs, contours and query points.

    Parameters
    ----------
    results : Results
        A finished analysis.
    path : pathlib.Path
        The file to write.
    units : str
        ``"si"`` (coordinates in m, levels in mm) or ``"us"`` (ft, in).
    """
    import ezdxf

    from sitesettle.io import output

    u = output._units(units)
    L = output._scale("length", u)
    drawing = ezdxf.new("R2013", setup=False)
    drawing.header["$INSUNITS"] = INSUNITS[u]
    for name, colour in LAYERS.items():
        drawing.layers.add(name, color=colour)
    msp = drawing.modelspace()
    h = _text_height(results) * L

    def label(text: str, x: float, y: float, layer: str) -> None:
        msp.add_text(text, height=h, dxfattribs={"layer": layer}).set_placement(
            (x, y), align=ezdxf.enums.TextEntityAlignment.MIDDLE_CENTER
        )

    for f in results.site.footings:
        if f.shape == "circle":
            msp.add_circle((f.x * L, f.y * L), f.width / 2.0 * L, dxfattribs={"layer": "FOOTINGS"})
        else:
            pts = [(float(a) * L, float(b) * L) for a, b in np.asarray(f.outline, float)]
            msp.add_lwpolyline(pts, close=True, dxfattribs={"layer": "FOOTINGS"})
        label(f.id, f.x * L, f.y * L, "FOOTINGS")

    pt = output.pair_table(results, u)
    xy = {m: (p[0] * L, p[1] * L) for m, p in zip(results.member_ids, results.member_xy)}
    for a, b, status in zip(pt["a"], pt["b"], pt["status"]):
        msp.add_line(
            xy[a], xy[b], dxfattribs={"layer": "PAIRS", "color": PAIR_COLOURS.get(status, 8)}
        )

    ct = output.contour_table(results, u)
    level_col = output.column("level", "settlement", u)
    unit = output.UNITS["settlement"][u].suffix
    for level, geom in zip(ct[level_col], ct.geometry):
        coords = np.asarray(geom.coords, float) * L
        if len(coords) < 2:
            continue
        line = msp.add_lwpolyline(
            [(float(a), float(b)) for a, b in coords], dxfattribs={"layer": "CONTOURS"}
        )
        line.dxf.elevation = float(level)
        mid = coords[len(coords) // 2]
        label(f"{level:g} {unit}", float(mid[0]), float(mid[1]), "CONTOURS")

    for p in results.site.points:
        msp.add_point((p.x * L, p.y * L), dxfattribs={"layer": "POINTS"})
        label(p.id, p.x * L, p.y * L + h, "POINTS")

    drawing.saveas(path)


# ------------------------------------------------------------------- reading
def read_dxf_bytes(path: pathlib.Path, what: str = "footings file") -> bytes:
    """The bytes of a DXF file, read through :func:`sitesettle.io.files.read_bytes` (a
    regular file, at most 200 MB), checked to be a DXF drawing (text: group code 0 and
    ``SECTION`` first; or the binary DXF sentinel)."""
    path = pathlib.Path(path)
    data = files.read_bytes(path, what)
    text = data[:64].decode("latin-1").lstrip("\ufeff\xef\xbb\xbf \t\r\n")
    if not (data.startswith(_BINARY_DXF) or text.split()[:2] == ["0", "SECTION"]):
        raise InputError(
            path.name,
            f"the {what} is not a DXF drawing (its content does not match its suffix)",
            'a DXF file saved by a CAD program (a text DXF starts with "0 SECTION")',
        )
    return data


def _open(path: pathlib.Path):
    import io

    import ezdxf
    from ezdxf import recover

    data = read_dxf_bytes(path)
    try:
        drawing, auditor = recover.read(io.BytesIO(data))
    except (OSError, ezdxf.DXFError, UnicodeDecodeError, ValueError) as exc:
        raise InputError(
            path.name, f"cannot read the file as a DXF drawing ({exc})", "a DXF file"
        ) from None
    if auditor.has_errors:
        first = auditor.errors[0]
        raise InputError(
            path.name,
            f"the DXF drawing is damaged ({first.message})",
            "a DXF file that the CAD program saves without errors",
        )
    return drawing


def _where(path, kind: str, handle: str, x: float, y: float) -> str:
    return f"{kind} #{handle} at ({x:.3f}, {y:.3f})"


def read_dxf_footings(path: pathlib.Path, layer: str | None) -> list[dict]:
    """The footing outlines of one DXF layer with their labels.

    Parameters
    ----------
    path : pathlib.Path
        The DXF file.
    layer : str or None
        The layer holding the footings; None takes the layer ``FOOTINGS``.

    Returns
    -------
    list of dict
        Per outline, in drawing order: ``label`` (the place for messages),
        ``shape`` (a shapely Polygon, or None for a circle), ``circle``
        ((x, y, diameter) or None) and ``cells`` (column → value, from the
        nearest label: ``id`` from a text, every attribute from a block).
    """
    import shapely

    path = pathlib.Path(path)
    drawing = _open(path)
    layer = layer or "FOOTINGS"
    msp = drawing.modelspace()
    # a layer may be used by entities without an entry in the layer table
    names = {lay.dxf.name for lay in drawing.layers} | {e.dxf.layer for e in msp}
    if layer.lower() not in {n.lower() for n in names}:
        raise InputError(
            f"{path.name}, layer {layer!r}",
            "the drawing has no such layer",
            f"one of its layers: {', '.join(sorted(names))} (key 'layer' of [footings])",
        )

    def on_layer(e) -> bool:
        return e.dxf.layer.lower() == layer.lower()

    outlines: list[dict] = []
    for e in msp:
        if not on_layer(e):
            continue
        kind = e.dxftype()
        if kind == "CIRCLE":
            c = e.dxf.center
            r = float(e.dxf.radius)
            where = _where(path, "circle", e.dxf.handle, c.x, c.y)
            if not (math.isfinite(r) and r > 0):
                raise InputError(
                    f"{path.name} {where}", f"the radius {r:g} is not positive", "a radius > 0"
                )
            geometry.check_coordinate(max(abs(c.x), abs(c.y)), f"{path.name} {where}")
            outlines.append(
                {"label": where, "shape": None, "circle": (float(c.x), float(c.y), 2 * r)}
            )
        elif kind in ("LWPOLYLINE", "POLYLINE"):
            if kind == "LWPOLYLINE":
                pts = [(float(p[0]), float(p[1])) for p in e.get_points("xy")]
                bulges = any(abs(p[4]) > 1e-12 for p in e.get_points("xyseb"))
            else:
                pts = [(float(v.dxf.location.x), float(v.dxf.location.y)) for v in e.vertices]
                bulges = any(abs(v.dxf.bulge) > 1e-12 for v in e.vertices)
            x0, y0 = pts[0] if pts else (0.0, 0.0)
            where = _where(path, "polyline", e.dxf.handle, x0, y0)
            flag = e.closed if kind == "LWPOLYLINE" else e.is_closed
            closed = flag or (len(pts) > 3 and pts[0] == pts[-1])
            if not closed:
                raise InputError(
                    f"{path.name} {where}",
                    "the polyline is open",
                    f"closed polylines and circles on layer {layer!r} (one per footing)",
                )
            if bulges:
                raise InputError(
                    f"{path.name} {where}",
                    "the polyline has arc segments",
                    "straight-sided outlines (a round footing as a CIRCLE)",
                )
            if len(pts) > 1 and pts[0] == pts[-1]:
                pts = pts[:-1]
            if len(pts) < 3:
                raise InputError(
                    f"{path.name} {where}", "the polyline has fewer than 3 vertices", "an outline"
                )
            outlines.append({"label": where, "shape": shapely.Polygon(pts), "circle": None})
    if not outlines:
        raise InputError(
            f"{path.name}, layer {layer!r}",
            "the layer holds no closed polyline or circle",
            "one closed polyline or circle per footing",
        )

    labels: list[tuple[float, float, dict, str]] = []
    for e in msp:
        if not on_layer(e):
            continue
        kind = e.dxftype()
        if kind in ("TEXT", "MTEXT"):
            p = e.dxf.insert
            if kind == "TEXT" and e.dxf.hasattr("align_point") and (e.dxf.halign or e.dxf.valign):
                p = e.dxf.align_point
            text = e.plain_text() if kind == "MTEXT" else e.dxf.text
            where = _where(path, kind.lower(), e.dxf.handle, p.x, p.y)
            labels.append((float(p.x), float(p.y), {"id": str(text).strip()}, where))
        elif kind == "INSERT":
            p = e.dxf.insert
            where = _where(path, "block", e.dxf.handle, p.x, p.y)
            cells = {str(a.dxf.tag).strip().lower(): str(a.dxf.text) for a in e.attribs}
            if "id" not in cells:
                raise InputError(
                    f"{path.name} {where}",
                    f"the block {e.dxf.name!r} has no attribute ID",
                    "a block attribute with the tag ID holding the footing id",
                )
            labels.append((float(p.x), float(p.y), cells, where))

    shapes = [
        o["shape"]
        if o["shape"] is not None
        else shapely.Point(o["circle"][:2]).buffer(o["circle"][2] / 2.0, quad_segs=32)
        for o in outlines
    ]
    found: dict[int, list] = {}
    for x, y, cells, where in labels:
        geometry.check_coordinate(max(abs(x), abs(y)), f"{path.name} {where}")
        pt = shapely.Point(x, y)
        dist = [0.0 if s.covers(pt) else s.distance(pt) for s in shapes]
        found.setdefault(int(np.argmin(dist)), []).append((cells, where))
    for i, outline in enumerate(outlines):
        hits = found.get(i, [])
        if not hits:
            raise InputError(
                f"{path.name} {outline['label']}",
                "no text or block on the layer is nearer to this outline than to another",
                "one id text or block (with an ID attribute) inside or beside each footing",
            )
        if len(hits) > 1:
            raise InputError(
                f"{path.name} {outline['label']}",
                f"two labels are nearest to this outline ({hits[0][1]} and {hits[1][1]})",
                "one id text or block per footing",
            )
        outline["cells"] = hits[0][0]
    return outlines
