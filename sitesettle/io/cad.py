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

import io
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

    The document (header, tables, blocks, objects) is made and written by ezdxf;
    the entities are written as DXF text directly (:class:`_Entities`), tag for
    tag as ezdxf writes them, with handles ezdxf hands out in the same order, so
    the file is the one ezdxf would save and reads back with ``ezdxf.readfile``.
    ezdxf's own entity objects took most of the time of a large plan.

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
    ents = _Entities(drawing.entitydb.handles, msp.block_record_handle)
    h = float(_text_height(results) * L)

    for f in results.site.footings:
        if f.shape == "circle":
            ents.circle("FOOTINGS", f.x * L, f.y * L, f.width / 2.0 * L)
        else:
            ents.lwpolyline("FOOTINGS", np.asarray(f.outline, float) * L, closed=True)
        ents.text("FOOTINGS", f.id, f.x * L, f.y * L, h)

    pt = output.pair_table(results, u)
    xy = {m: (p[0] * L, p[1] * L) for m, p in zip(results.member_ids, results.member_xy)}
    for a, b, status in zip(pt["a"], pt["b"], pt["status"]):
        ents.line("PAIRS", xy[a], xy[b], PAIR_COLOURS.get(status, 8))

    ct = output.contour_table(results, u)
    level_col = output.column("level", "settlement", u)
    unit = output.UNITS["settlement"][u].suffix
    for level, geom in zip(ct[level_col], ct.geometry):
        coords = np.asarray(geom.coords, float) * L
        if len(coords) < 2:
            continue
        ents.lwpolyline("CONTOURS", coords, closed=False, elevation=float(level))
        mid = coords[len(coords) // 2]
        ents.text("CONTOURS", f"{level:g} {unit}", float(mid[0]), float(mid[1]), h)

    for p in results.site.points:
        ents.point("POINTS", p.x * L, p.y * L)
        ents.text("POINTS", p.id, p.x * L, p.y * L + h, h)

    _fixed_class_order(drawing)
    stream = io.StringIO()
    drawing.write(stream)  # after the entities took their handles: $HANDSEED follows them
    text = stream.getvalue()
    empty = "  0\nSECTION\n  2\nENTITIES\n  0\nENDSEC\n"
    if text.count(empty) != 1:  # pragma: no cover - another ezdxf layout of the section
        raise RuntimeError("ezdxf wrote an ENTITIES section of an unexpected form")
    at = text.index(empty) + len("  0\nSECTION\n  2\nENTITIES\n")
    text = text[:at] + ents.getvalue() + text[at:]
    with open(path, "w", encoding=drawing.output_encoding, errors="dxfreplace") as fp:
        fp.write(text)


def _fixed_class_order(drawing) -> None:
    """Register the document's CLASS definitions in a fixed order before it is written.

    ezdxf adds the classes of the object types in use (LAYOUT, ACDBPLACEHOLDER) in
    the iteration order of a set of strings, which changes with Python's hash seed
    from run to run; registered here first (the required ones in ezdxf's list order,
    then the types in use sorted by name) the same drawing gives the same file.
    """
    from ezdxf.sections.classes import REQ_R2004, REQUIRED_CLASSES

    for name in REQUIRED_CLASSES.get(drawing.dxfversion, REQ_R2004):
        drawing.classes.add_class(name)
    for name in sorted(drawing.entitydb.dxf_types_in_use()):
        drawing.classes.add_class(name)


class _Entities:
    """The ENTITIES of the model space as DXF text, written as ezdxf 1.x writes them.

    Each method writes one entity with the tags, order and number formatting of
    ezdxf's export (group code right-aligned in 3 columns, ``str`` of a float,
    optional tags left out at their defaults) and takes its handle from ezdxf's
    handle generator, as ezdxf's ``add_*`` would. Text goes through ezdxf's own
    one-line fixer (line breaks and a trailing ``^`` removed), as on ``add_text``.
    """

    def __init__(self, handles, owner: str):
        from ezdxf.lldxf.validator import fix_one_line_text, is_valid_one_line_text

        self._valid, self._fix = is_valid_one_line_text, fix_one_line_text
        self._next = handles.next
        self._owner = owner
        self._parts: list[str] = []

    def _head(self, kind: str, layer: str, colour: int | None = None) -> str:
        c = f" 62\n{colour}\n" if colour is not None and colour != 256 else ""
        return (
            f"  0\n{kind}\n  5\n{self._next()}\n330\n{self._owner}\n100\nAcDbEntity\n"
            f"  8\n{layer}\n{c}"
        )

    def circle(self, layer: str, x: float, y: float, r: float) -> None:
        self._parts.append(
            f"{self._head('CIRCLE', layer)}100\nAcDbCircle\n"
            f" 10\n{float(x)}\n 20\n{float(y)}\n 30\n0.0\n 40\n{float(r)}\n"
        )

    def lwpolyline(self, layer: str, xy, *, closed: bool, elevation: float = 0.0) -> None:
        xy = np.asarray(xy, float).reshape(-1, 2)
        head = self._head("LWPOLYLINE", layer)
        if len(xy) == 0:  # ezdxf does not export a polyline without vertices
            return
        elev = f" 38\n{float(elevation)}\n" if elevation != 0 else ""
        pts = "".join([f" 10\n{x}\n 20\n{y}\n" for x, y in xy.tolist()])
        self._parts.append(
            f"{head}100\nAcDbPolyline\n 90\n{len(xy)}\n 70\n{1 if closed else 0}\n{elev}{pts}"
        )

    def line(self, layer: str, a, b, colour: int) -> None:
        self._parts.append(
            f"{self._head('LINE', layer, colour)}100\nAcDbLine\n"
            f" 10\n{float(a[0])}\n 20\n{float(a[1])}\n 30\n0.0\n"
            f" 11\n{float(b[0])}\n 21\n{float(b[1])}\n 31\n0.0\n"
        )

    def point(self, layer: str, x: float, y: float) -> None:
        self._parts.append(
            f"{self._head('POINT', layer)}100\nAcDbPoint\n"
            f" 10\n{float(x)}\n 20\n{float(y)}\n 30\n0.0\n"
        )

    def text(self, layer: str, text: object, x: float, y: float, height: float) -> None:
        """A one-line TEXT centred on (x, y) (ezdxf's ``MIDDLE_CENTER`` placement)."""
        s = str(text)
        if not self._valid(s):
            s = self._fix(s)
        x, y = float(x), float(y)
        self._parts.append(
            f"{self._head('TEXT', layer)}100\nAcDbText\n"
            f" 10\n{x}\n 20\n{y}\n 30\n0.0\n 40\n{float(height)}\n  1\n{s}\n 72\n1\n"
            f" 11\n{x}\n 21\n{y}\n 31\n0.0\n100\nAcDbText\n 73\n2\n"
        )

    def getvalue(self) -> str:
        return "".join(self._parts)


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
