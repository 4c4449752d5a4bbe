"""The site as plain data: footings, strata, boreholes, soundings and settings.

No I/O here: :mod:`sitesettle.io` builds these from a project folder, tests build
them directly. Every quantity is a float in the core units of :mod:`sitesettle.units`
(m, kN, kPa, kN/m³, m²/yr, years). Coordinates: x east, y north, z depth below a
level ground surface, positive down.
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from sitesettle.errors import InputError, InputWarning
from sitesettle.options import (
    Behaviour,
    ClaySettlement,
    DepthRule,
    Drainage,
    EndOfPrimary,
    GranularMethod,
    ShapeInterpolation,
)

#: default average unit weight of footing concrete and backfill above the base [kN/m³]
#: (common practice: 20 kN/m³)
DEFAULT_FILL_UNIT_WEIGHT = 20.0
#: unit weight of water [kN/m³] (common practice: 9.81)
WATER_UNIT_WEIGHT = 9.81


#: a rectangle longer than this many widths is a strip (docs/methods.md §1)
STRIP_RATIO = 4.0
#: a footing at least this wide (its shorter side), or any polygon outline, is a raft
#: unless the footings file says otherwise (common practice: column pads are seldom
#: wider than about 5 m)
RAFT_WIDTH = 6.0


def foundation_kind(footing: Footing) -> str:
    """The kind of a footing: ``"pad"``, ``"strip"`` or ``"raft"``.

    The ``kind`` the footings file gives; otherwise a rectangle longer than
    :data:`STRIP_RATIO` widths is a strip, a polygon outline or a footing at least
    :data:`RAFT_WIDTH` wide is a raft, and anything else a pad.

    Examples
    --------
    >>> from dataclasses import replace
    >>> pad = Footing("F1", np.zeros((4, 2)), "rectangle", 0, 0, 2.0, 2.5, 0, 1, 500)
    >>> foundation_kind(pad), foundation_kind(replace(pad, length=12.0))
    ('pad', 'strip')
    >>> foundation_kind(replace(pad, width=8.0, length=8.0))
    'raft'
    """
    if footing.kind:
        return footing.kind
    if footing.shape == "rectangle" and footing.length > STRIP_RATIO * footing.width:
        return "strip"
    if footing.shape == "polygon" or footing.width >= RAFT_WIDTH:
        return "raft"
    return "pad"


#: number of vertices of the drawing outline of a circular footing
CIRCLE_VERTICES = 64
#: two footings overlap when their common area exceeds this fraction of the
#: smaller one (smaller overlaps are slivers from rounded coordinates)
OVERLAP_TOLERANCE = 1e-3


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


@dataclass(frozen=True)
class Footing:
    """One shallow footing.

    Attributes
    ----------
    id : str
        Unique name (``"C12"``, ``"W3"``).
    outline : numpy.ndarray
        (n, 2) plan vertices [m], counter-clockwise, not closed (first != last).
        A rectangle has 4 vertices; a circle keeps its exact shape in ``shape``
        and ``radius`` (the outline is a fine polygon for drawing only).
    shape : str
        ``"rectangle"``, ``"circle"`` or ``"polygon"``.
    x, y : float
        Plan centroid [m].
    width, length : float
        B ≤ L [m]: the sides of a rectangle, the diameter of a circle, and for a
        polygon the sides of its minimum rotated bounding rectangle.
    rotation : float
        Angle of the long axis (L) from east, counter-clockwise [degrees].
    depth : float
        Depth of the base below ground [m].
    dead_load, live_load : float
        Service loads on the base [kN] (column or wall load, excluding the
        footing's own weight and backfill unless ``fill_unit_weight`` is 0).
    sustained_live_fraction : float
        Part of the live load that is sustained and counts for consolidation
        and creep (0–1).
    rigid : bool
        Rigid footings settle as the mean of the four characteristic points.
    fill_unit_weight : float
        Average unit weight γ_f of footing and backfill above the base [kN/m³];
        0 means the loads already include them.
    kind : str
        ``"pad"``, ``"strip"`` or ``"raft"``; empty: inferred by
        :func:`foundation_kind`.
    """

    id: str
    outline: np.ndarray
    shape: str
    x: float
    y: float
    width: float
    length: float
    rotation: float
    depth: float
    dead_load: float
    live_load: float = 0.0
    sustained_live_fraction: float = 0.0
    rigid: bool = True
    fill_unit_weight: float = DEFAULT_FILL_UNIT_WEIGHT
    kind: str = ""

    @property
    def area(self) -> float:
        """Plan area [m²] (exact for circles)."""
        if self.shape == "circle":
            return math.pi * self.width**2 / 4.0
        xy = np.asarray(self.outline, dtype=float)
        x, y = xy[:, 0], xy[:, 1]
        return 0.5 * abs(float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))

    @property
    def radius(self) -> float:
        """Radius of a circular footing [m] (half the width)."""
        return self.width / 2.0

    @property
    def service_load(self) -> float:
        """Dead plus live load [kN]: the load for immediate settlement."""
        return self.dead_load + self.live_load

    @property
    def sustained_load(self) -> float:
        """Dead plus the sustained part of live load [kN]: the load for consolidation and creep."""
        return self.dead_load + self.sustained_live_fraction * self.live_load

    def axes(self) -> tuple[np.ndarray, np.ndarray]:
        """Unit vectors along the long (L) and short (B) axes in plan."""
        a = math.radians(self.rotation)
        return np.array([math.cos(a), math.sin(a)]), np.array([-math.sin(a), math.cos(a)])


@dataclass(frozen=True)
class Stratum:
    """One stratum of the site's ordered list (top-down).

    Parameters common to all: ``name``, ``behaviour``, ``unit_weight`` (above the
    water table) and ``saturated_unit_weight`` (below) [kN/m³], ``poisson``.

    Granular: ``youngs_modulus`` [kPa] given, or ``cone_resistance`` [kPa] as a
    value (or from the soundings when ``use_soundings``), or ``spt_n`` (blows per
    300 mm, uncorrected); ``method`` overrides the site's granular method;
    ``gravel`` and ``fine_or_silty`` select the Burland & Burbidge N corrections;
    ``preconsolidation`` [kPa] marks a preloaded sand for Burland & Burbidge.

    Cohesive: ``compression_index`` Cc, ``recompression_index`` Cr,
    ``void_ratio`` e0, ``preconsolidation`` σ'p [kPa] or ``ocr``,
    ``consolidation_coefficient`` cv [m²/yr], ``secondary_index`` Cα,
    ``drainage``, optional ``undrained_modulus`` [kPa] for immediate settlement,
    optional ``end_of_primary`` [yr] when the settings ask for a given time.

    Attributes
    ----------
    name : str
        The stratum's name, as the boreholes give it.
    behaviour : Behaviour
        ``granular``, ``cohesive`` or ``rigid``.
    unit_weight, saturated_unit_weight : float
        Above and below the water table [kN/m³].
    youngs_modulus, cone_resistance : float or None
        Granular E and qc [kPa].
    compression_index, recompression_index, void_ratio, ocr, secondary_index : float
        Cohesive Cc, Cr, e0, OCR and Cα [-].
    preconsolidation : float or None
        σ'p [kPa].
    consolidation_coefficient : float or None
        cv [m²/yr].
    """

    name: str
    behaviour: Behaviour
    unit_weight: float = 18.0
    saturated_unit_weight: float = 20.0
    poisson: float = 0.3
    # granular
    youngs_modulus: float | None = None
    cone_resistance: float | None = None
    use_soundings: bool = False
    spt_n: float | None = None
    method: GranularMethod | None = None
    gravel: bool = False
    fine_or_silty: bool = False
    # cohesive
    compression_index: float | None = None
    recompression_index: float | None = None
    void_ratio: float | None = None
    preconsolidation: float | None = None
    ocr: float | None = None
    consolidation_coefficient: float | None = None
    secondary_index: float = 0.0
    drainage: Drainage = Drainage.AUTO
    undrained_modulus: float | None = None
    end_of_primary: float | None = None
    #: Skempton's pore-pressure coefficient A (for clay_settlement = "skempton_bjerrum")
    pore_pressure_coefficient: float | None = None


@dataclass(frozen=True)
class Interval:
    """One stratum met in a borehole, from ``top`` to ``bottom`` depth [m].

    ``overrides`` holds measured parameter values for this interval that replace
    the stratum's (keys are :class:`Stratum` field names, values in core units).
    """

    stratum: str
    top: float
    bottom: float
    overrides: dict[str, float] = field(default_factory=dict)


@dataclass(frozen=True)
class Borehole:
    """A borehole: plan position [m], intervals top-down, optional water depth [m]."""

    id: str
    x: float
    y: float
    intervals: tuple[Interval, ...]
    water_depth: float | None = None


@dataclass(frozen=True)
class Sounding:
    """A cone sounding: plan position, depths [m] (increasing), qc and optional fs [kPa]."""

    id: str
    x: float
    y: float
    depth: np.ndarray
    qc: np.ndarray
    fs: np.ndarray | None = None


@dataclass(frozen=True)
class AnalysisSettings:
    """How the settlements are computed (keys of ``[analysis]`` in site.toml)."""

    granular_method: GranularMethod = GranularMethod.SCHMERTMANN
    shape_interpolation: ShapeInterpolation = ShapeInterpolation.LINEAR
    report_times: tuple[float, ...] = (0.1, 1.0, 5.0, 10.0)
    design_life: float = 50.0
    #: how deep every column is integrated (docs/methods.md §3)
    depth_rule: DepthRule = DepthRule.COMPLETE
    #: the remaining settlement below the integration is bounded under this fraction
    #: of the column's settlement (complete rule)
    truncation_tolerance: float = 0.005
    #: the "significant depth" is reported where Δσz falls below influence_fraction · σ'v0
    #: (common practice 0.1–0.2); the stress_ratio rule also stops there
    influence_fraction: float = 0.1
    #: optional caps: never integrate deeper than this below the base, in widths, or
    #: below this depth [m] (inf: no cap; what a cap leaves out is warned about)
    max_depth_widths: float = math.inf
    max_depth: float = math.inf
    #: sublayer thickness as a fraction of the footing width (capped by stratum boundaries)
    sublayer_fraction: float = 0.1
    end_of_primary: EndOfPrimary = EndOfPrimary.U95
    #: Burland & Burbidge time factor: R3 and R (static loads; Burland & Burbidge 1985)
    bb_r3: float = 0.3
    bb_r: float = 0.2
    #: Burland & Burbidge q': "gross_effective" (the paper, with σ'p the overburden at
    #: the base) or "net" (q_net, σ'p only where given)
    bb_pressure: str = "gross_effective"
    #: settlement map grid spacing [m] (0: chosen from the plan) and margin [m]
    map_spacing: float = 0.0
    map_margin: float = 5.0
    #: stress engine tolerance as a fraction of the largest footing pressure (0: exact)
    stress_tolerance: float = 1e-3
    #: clay immediate settlement from undrained_modulus where given
    cohesive_immediate: bool = True
    #: how undrained and consolidation settlement of clay combine (docs/methods.md §4.4)
    clay_settlement: ClaySettlement = ClaySettlement.OEDOMETER
    #: when the live load arrives: "checked_after" (just after [checks] checked_after,
    #: so the checked movement includes its immediate part) or "start" (time 0)
    live_load_from: str = "checked_after"
    #: a plan estimated to need more than twice the machine's memory: "refuse" it
    #: (exit 2, nothing computed) or "run" it with a warning (sitesettle.budget)
    large_plan: str = "refuse"


@dataclass(frozen=True)
class CheckSettings:
    """How the movements are checked (keys of ``[checks]`` in site.toml)."""

    criteria: str = "eurocode7"
    overrides: dict[str, float] = field(default_factory=dict)
    #: check only the movement after this time [yr] (0: all movement)
    checked_after: float = 0.0
    #: automatic neighbour rule ("auto") or "listed" (pairs only from the pairs file)
    pairs: str = "auto"
    #: user-listed pairs (a, b) and structure lines (ordered ids)
    listed_pairs: tuple[tuple[str, str], ...] = ()
    structure_lines: tuple[tuple[str, ...], ...] = ()
    #: the building's rigid-body tilt in β: "both" (the larger of kept and removed
    #: governs), "kept" or "removed"
    rigid_tilt: str = "both"


@dataclass(frozen=True)
class QueryPoint:
    """A named point whose settlement is wanted: x, y [m] and a depth below ground [m].

    For instance the rim of a tank, a footing of an existing building next door or
    a buried service; it carries no load of its own.
    """

    id: str
    x: float
    y: float
    depth: float = 0.0


@dataclass(frozen=True)
class AreaLoad:
    """A uniform load on a plan area that is not a footing: site fill, a slab, a stockpile.

    It adds stress to every footing, map and query point through the same engine as
    the footings' loads, is permanent (sustained), arrives with its stage (time 0 by
    default) and is not checked as a footing. An excavation is an area load with a
    negative pressure: the overburden it removes.

    Attributes
    ----------
    name : str
        Unique name (``"site fill"``).
    outline : numpy.ndarray
        (n, 2) plan vertices [m], counter-clockwise, not closed.
    pressure : float
        Uniform pressure on the area [kPa] (> 0).
    depth : float
        Depth of the loaded plane below ground [m] (0: the ground surface).
    description : str
        How the pressure was given (``"1.2 m of fill at 19 kN/m³"``).
    excavation_depth : float
        > 0 for an excavation to this depth [m]: it unloads the ground by the
        overburden removed (the analysis sets ``pressure`` and ``depth`` from it).
    """

    name: str
    outline: np.ndarray
    pressure: float
    depth: float = 0.0
    description: str = ""
    excavation_depth: float = 0.0

    @property
    def area(self) -> float:
        """Plan area [m²]."""
        x, y = self.outline[:, 0], self.outline[:, 1]
        return 0.5 * abs(float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


@dataclass(frozen=True)
class LoadStage:
    """A construction or use stage: parts of the loads applied over a period.

    Attributes
    ----------
    name : str
        Unique name (``"frame"``, ``"finishes"``, ``"occupancy"``).
    start : float
        When the stage starts [yr from time 0].
    duration : float
        How long its loads take to arrive [yr]; 0: at once, else a linear ramp.
    dead, live : float
        Fractions of every footing's dead and live load the stage applies (over all
        stages each sums to 1).
    area_loads : tuple of str
        Names of the area loads the stage applies (in full).
    """

    name: str
    start: float
    duration: float = 0.0
    dead: float = 0.0
    live: float = 0.0
    area_loads: tuple[str, ...] = ()

    @property
    def end(self) -> float:
        """When the stage's loads are all applied [yr]."""
        return self.start + self.duration


@dataclass(frozen=True)
class Site:
    """Everything the analysis needs, in core units (m, kN, kPa, kN/m³, m²/yr, yr).

    Built by :func:`sitesettle.load_site` from a project folder, or directly; it
    is frozen: :meth:`with_footing` and :meth:`with_stratum` return changed copies
    for a what-if re-analysis.

    Attributes
    ----------
    name : str
        Project name.
    footings : tuple of Footing
        The footings (sizes [m], loads [kN]).
    strata : tuple of Stratum
        The strata, top down (unit weights [kN/m³], moduli [kPa], cv [m²/yr]).
    boreholes, soundings : tuple
        The investigation (positions and depths [m], cone resistance [kPa]).
    water_depth : float
        Site-wide depth of the water table [m] (inf: none; boreholes may give their own).
    analysis, checks : AnalysisSettings, CheckSettings
        How settlements are computed (times [yr]) and checked (limits in core units).
    crs : str or None
        Coordinate reference system of the input (plan coordinates in metres).
    units : str
        Output units of the project, ``"si"`` or ``"us"``.
    points : tuple of QueryPoint
        Query points (x, y, depth [m]).
    overrides : tuple of str
        What-if changes made on reading (``"footing.F4.width=3.0"``), listed in the outputs.
    """

    name: str
    footings: tuple[Footing, ...]
    strata: tuple[Stratum, ...]
    boreholes: tuple[Borehole, ...]
    soundings: tuple[Sounding, ...] = ()
    #: site-wide depth of the water table [m] (boreholes may give their own); inf: none
    water_depth: float = math.inf
    analysis: AnalysisSettings = field(default_factory=AnalysisSettings)
    checks: CheckSettings = field(default_factory=CheckSettings)
    #: coordinate reference system of the input (WKT or "EPSG:xxxx"), kept for outputs
    crs: str | None = None
    #: output units: "si" or "us"
    units: str = "si"
    #: free project information (client, job number, engineer, notes)
    info: dict[str, str] = field(default_factory=dict)
    #: query points (settlement over time, listed pairs with footings)
    points: tuple[QueryPoint, ...] = ()
    #: input files read from outside the project folder (resolved paths)
    outside_files: tuple[str, ...] = ()
    #: uniform loads on plan areas that are not footings (fill, slabs, stockpiles)
    area_loads: tuple[AreaLoad, ...] = ()
    #: the load history; empty: the dead load and area loads at time 0, the live load
    #: just after [checks] checked_after (see sitesettle.analysis.load_stages)
    stages: tuple[LoadStage, ...] = ()
    #: what-if changes made on reading (``--set`` texts, sitesettle.io.overrides); the
    #: outputs list them
    overrides: tuple[str, ...] = ()

    def stratum(self, name: str) -> Stratum:
        """The stratum called ``name``.

        Parameters
        ----------
        name : str
            The stratum's name.

        Returns
        -------
        Stratum
            Its parameters in core units (kPa, kN/m³, m²/yr); KeyError listing the
            names when there is none of that name.
        """
        for s in self.strata:
            if s.name == name:
                return s
        raise KeyError(f"no stratum {name!r}; strata are {[s.name for s in self.strata]}")

    def with_footing(self, fid: str, **changes) -> Site:
        """A copy of the site with footing ``fid`` changed: for a what-if re-analysis.

        The site itself is not changed (it is frozen); re-run
        :func:`sitesettle.analyse` on the copy.

        Parameters
        ----------
        fid : str
            Id of the footing to change.
        **changes
            New values of :class:`Footing` fields, in core units: ``width``, ``length``
            [m] (B and L of a rectangle; ``width`` is the diameter of a circle),
            ``rotation`` [deg from east], ``x``, ``y`` [m] (moves the footing),
            ``depth`` [m], ``dead_load``, ``live_load`` [kN],
            ``sustained_live_fraction`` [-], ``rigid``, ``fill_unit_weight`` [kN/m³],
            ``kind`` (``"pad"``, ``"strip"``, ``"raft"``, or ``""`` to infer it from the
            shape). The outline is rebuilt from the new centre, sides and rotation.
            Loads are forces and stay as they are: a wider footing carries the same load
            on a lower pressure. A rectangle given ``width`` > ``length`` is turned so
            that B ≤ L, as a footings CSV row is (its sides keep their directions:
            ``width=3.0`` on a 2.5 m square pad makes it 2.5 m × 3.0 m; give ``length``
            too for a 3.0 m square). A polygon can be moved, or its loads and depth
            changed, but not resized.

        Returns
        -------
        Site
            The new site; every other footing, stratum and setting is the same object.

        Raises
        ------
        InputError
            ``fid`` is not a footing of the site, a name is not a field that can be
            changed, a size is not a positive finite number, or the changed footing
            overlaps another one.

        Examples
        --------
        >>> site = Site("s", (Footing("F1", rectangle_outline(0, 0, 2, 2, 0), "rectangle",
        ...     0.0, 0.0, 2.0, 2.0, 0.0, 1.0, 500.0),), (), ())
        >>> wider = site.with_footing("F1", width=3.0, length=3.0)
        >>> wider.footing("F1").area, site.footing("F1").area
        (9.0, 4.0)
        """
        where = f"with_footing({fid!r})"
        index, footing = self._changed_footing(fid, changes)
        footings = self.footings[:index] + (footing,) + self.footings[index + 1 :]
        if {"x", "y", "width", "length", "rotation"} & set(changes):
            for i, j, common in find_overlaps([f.outline for f in footings]):
                if index in (i, j):
                    other = footings[j if i == index else i].id
                    raise InputError(
                        where,
                        f"the changed footing overlaps footing {other!r} by {common:.3g} m²",
                        "footings that do not overlap (merge a combined footing into one)",
                    )
        return dataclasses.replace(self, footings=footings)

    def _changed_footing(self, fid: str, changes: dict) -> tuple[int, Footing]:
        """The index of footing ``fid`` and the footing with ``changes`` made (checked,
        outline rebuilt; no overlap check: :meth:`with_footing` makes it)."""
        where = f"with_footing({fid!r})"
        try:
            index = [f.id for f in self.footings].index(fid)
        except ValueError:
            ids = [f.id for f in self.footings]
            raise InputError(
                where,
                f"no footing {fid!r}",
                f"the id of a footing of the site, such as {', '.join(ids[:8])}",
            ) from None
        old = self.footings[index]
        unknown = sorted(set(changes) - _FOOTING_CHANGES)
        if unknown:
            raise InputError(
                where,
                f"{', '.join(unknown)} cannot be changed",
                f"some of {', '.join(sorted(_FOOTING_CHANGES))}",
            )
        for key, value in changes.items():
            if key == "kind":
                if value not in ("", "pad", "strip", "raft"):
                    raise InputError(where, f"kind = {value!r}", '"pad", "strip", "raft" or ""')
                continue
            if key == "rigid":
                continue
            if not isinstance(value, int | float) or not math.isfinite(value):
                raise InputError(where, f"{key} = {value!r} is not a finite number", "a number")
            if key in ("width", "length") and not value > 0:
                raise InputError(where, f"{key} = {value!r} is not positive", f"a {key} > 0 m")
            if key in ("depth", "dead_load", "live_load", "fill_unit_weight") and value < 0:
                raise InputError(where, f"{key} = {value!r} is negative", f"a {key} ≥ 0")
        if "sustained_live_fraction" in changes and not (
            0.0 <= changes["sustained_live_fraction"] <= 1.0
        ):
            raise InputError(where, "sustained_live_fraction is outside 0–1", "a fraction 0–1")
        geometric = {"width", "length", "rotation"} & set(changes)
        x, y = float(changes.get("x", old.x)), float(changes.get("y", old.y))
        new = dict(changes)
        if old.shape == "polygon":
            if geometric:
                raise InputError(
                    where,
                    f"the polygon footing {fid!r} cannot be resized with "
                    f"{', '.join(sorted(geometric))}",
                    "a changed polygon in the footings file (it may be moved with x and y)",
                )
            shift = np.array([x - old.x, y - old.y])
            new["outline"] = np.asarray(old.outline, float) + shift
        elif old.shape == "circle":
            if "length" in changes or "rotation" in changes:
                raise InputError(
                    where, "a circle has no length or rotation", "width (the diameter)"
                )
            d = float(changes.get("width", old.width))
            new.update(width=d, length=d, outline=circle_outline(x, y, d))
        else:
            b, l, rot = normalise_sides(
                float(changes.get("width", old.width)),
                float(changes.get("length", old.length)),
                float(changes.get("rotation", old.rotation)),
            )
            new.update(width=b, length=l, rotation=rot, outline=rectangle_outline(x, y, b, l, rot))
        return index, dataclasses.replace(old, **new)
    def with_stratum(self, name: str, **changes) -> Site:
        """A copy of the site with stratum ``name`` changed: for a what-if re-analysis.

        Parameters
        ----------
        name : str
            Name of the stratum to change.
        **changes
            New values of :class:`Stratum` fields, in core units: for instance
            ``compression_index`` [-], ``consolidation_coefficient`` [m²/yr],
            ``youngs_modulus`` [kPa], ``unit_weight`` [kN/m³], ``drainage``.
            A value measured in a borehole interval (``Interval.overrides``)
            still replaces the stratum's there: a warning names those boreholes.

        Returns
        -------
        Site
            The new site (the site itself is frozen and unchanged).

        Raises
        ------
        InputError
            ``name`` is not a stratum of the site, or a key is not a field of
            :class:`Stratum` (or is its ``name``).

        Examples
        --------
        >>> site = Site("s", (), (Stratum("clay", Behaviour.COHESIVE, compression_index=0.4),), ())
        >>> site.with_stratum("clay", compression_index=0.3).stratum("clay").compression_index
        0.3
        """
        where = f"with_stratum({name!r})"
        names = [s.name for s in self.strata]
        if name not in names:
            raise InputError(where, f"no stratum {name!r}", f"one of {', '.join(names)}")
        fields = {f.name for f in dataclasses.fields(Stratum)} - {"name"}
        unknown = sorted(set(changes) - fields)
        if unknown:
            raise InputError(
                where,
                f"{', '.join(unknown)} is not a stratum parameter",
                f"some of {', '.join(sorted(fields))}",
            )
        measured = sorted(
            {
                b.id
                for b in self.boreholes
                for iv in b.intervals
                if iv.stratum == name and set(iv.overrides) & set(changes)
            }
        )
        if measured:
            warnings.warn(
                f"{where}: boreholes {', '.join(measured)} give their own measured "
                f"{', '.join(sorted(set(changes)))} for {name!r}, which still apply there",
                InputWarning,
                stacklevel=2,
            )
        i = names.index(name)
        stratum = dataclasses.replace(self.strata[i], **changes)
        return dataclasses.replace(self, strata=self.strata[:i] + (stratum,) + self.strata[i + 1 :])

    def footing(self, fid: str) -> Footing:
        """The footing called ``fid``.

        Parameters
        ----------
        fid : str
            The footing's id.

        Returns
        -------
        Footing
            Its geometry [m] and loads [kN]; KeyError listing a few ids when there
            is none of that id.
        """
        for f in self.footings:
            if f.id == fid:
                return f
        raise KeyError(f"no footing {fid!r}; footings include {[f.id for f in self.footings[:8]]}")


#: the footing fields that :meth:`Site.with_footing` may change
_FOOTING_CHANGES = frozenset(
    {
        "width",
        "length",
        "rotation",
        "x",
        "y",
        "depth",
        "dead_load",
        "live_load",
        "sustained_live_fraction",
        "rigid",
        "fill_unit_weight",
        "kind",
    }
)
