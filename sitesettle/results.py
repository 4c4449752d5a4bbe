"""Results as plain data: what :func:`sitesettle.analyse` returns.

Arrays are in core units (m, kPa, years, radians). Settlement is positive downward.
Index ``i`` of every per-footing array is ``site.footings[i]``; index ``k`` of every
per-time array is ``times[k]``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from sitesettle.site import Site


@dataclass(frozen=True)
class Trace:
    """Layer-by-layer calculation of one footing at one evaluation point.

    One row per sublayer (arrays of equal length), at the design life. The
    settlements of the sublayers add up to the footing's settlement at that point.

    Attributes
    ----------
    point : tuple[float, float]
        Plan position of the evaluation point [m] (centre, or a characteristic point).
    top, bottom : ndarray
        Sublayer top and bottom depth below ground [m].
    stratum : tuple[str, ...]
        Stratum of each sublayer.
    method : tuple[str, ...]
        Method used for the footing's own load in each sublayer.
    sigma_v0 : ndarray
        In-situ vertical effective stress at mid-sublayer [kPa].
    own_stress, neighbour_stress : ndarray
        Δσz at mid-sublayer from the footing's own load and from all the others [kPa]
        (sustained load for cohesive strata, full service load for granular).
    strain : ndarray
        Vertical strain of the sublayer (own + neighbours), dimensionless.
    own_settlement, neighbour_settlement : ndarray
        Settlement of the sublayer [m] from the footing's own load and from the
        others' (for consolidation: total minus own alone, see the method notes).
    influence : ndarray
        Schmertmann strain-influence factor Iz where that method applies, else NaN.
    modulus : ndarray or None
        Young's modulus used for the sublayer [kPa] (granular strata; the
        equivalent modulus for Burland & Burbidge; undrained E of clay), else NaN.
    details : dict[str, ndarray]
        Further per-sublayer columns a checker needs, keyed by a plain heading
        with its unit ("σ'p (kPa)", "U(t)", "creep (mm)", …); values at the design life.
    notes : tuple[str, ...]
        Per-point lines: the own-load method's parameters (Δp, C1, Izp, σ'vp…), how
        each clay drains, and where and why the integration stopped.
    """

    point: tuple[float, float]
    top: np.ndarray
    bottom: np.ndarray
    stratum: tuple[str, ...]
    method: tuple[str, ...]
    sigma_v0: np.ndarray
    own_stress: np.ndarray
    neighbour_stress: np.ndarray
    strain: np.ndarray
    own_settlement: np.ndarray
    neighbour_settlement: np.ndarray
    influence: np.ndarray
    modulus: np.ndarray | None = None
    details: dict[str, np.ndarray] = field(default_factory=dict)
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class SettlementMap:
    """Settlement at the design life on a regular plan grid.

    ``x`` (nx,) and ``y`` (ny,) are the grid lines [m]; ``settlement`` (ny, nx) [m];
    ``method`` says how it was computed (shown on the figure).
    """

    x: np.ndarray
    y: np.ndarray
    settlement: np.ndarray
    method: str


@dataclass(frozen=True)
class QueryResults:
    """Settlement of the query points over time (arrays (n_points, n_times) [m]).

    ``total = immediate + creep + consolidation + secondary``; ``xy`` (n, 2) and
    ``depth`` (n,) [m] say where; ``depth_reached`` [m] where the integration stopped.
    """

    ids: tuple[str, ...]
    xy: np.ndarray
    depth: np.ndarray
    immediate: np.ndarray
    creep: np.ndarray
    consolidation: np.ndarray
    secondary: np.ndarray
    depth_reached: np.ndarray

    @property
    def total(self) -> np.ndarray:
        """Total settlement (n_points, n_times) [m]."""
        return self.immediate + self.creep + self.consolidation + self.secondary


@dataclass(frozen=True)
class PairChecks:
    """Every checked pair of footings (arrays of length n_pairs).

    ``a`` and ``b`` are footing indices (``a < b`` for automatic pairs);
    ``differential`` [m] and ``angular_distortion`` are of the checked movement
    (after ``checked_after`` when set); ``limit`` is a readable statement of the
    governing limit (``"angular distortion ≤ 1/500"``), ``limit_value`` its number
    in core units, ``limit_measure`` its measure, ``limit_source`` its source;
    ``utilisation`` = value ÷ limit of the governing (largest) utilisation.
    """

    a: np.ndarray
    b: np.ndarray
    span: np.ndarray
    differential: np.ndarray
    angular_distortion: np.ndarray
    limit: tuple[str, ...]
    limit_value: np.ndarray
    limit_measure: tuple[str, ...]
    limit_source: tuple[str, ...]
    utilisation: np.ndarray
    passed: np.ndarray
    origin: tuple[str, ...] = ()  # "auto", "listed" or "line"
    #: β with the building's rigid-body tilt kept and removed; ``angular_distortion``
    #: is the one checked (the larger of the two by default), ``beta_basis`` says which
    angular_distortion_tilt_kept: np.ndarray | None = None
    angular_distortion_tilt_removed: np.ndarray | None = None
    beta_basis: tuple[str, ...] = ()  # "tilt kept" or "tilt removed"


@dataclass(frozen=True)
class LineChecks:
    """Relative deflection along each structure line and along each strip.

    A strip's line has its own id only; ``angular_distortion`` is then the largest
    relative rotation between its stations (segment slope less the chord's), NaN
    for user lines (whose consecutive footings are checked as pairs).

    A line is split into sagging and hogging zones at its inflections (Burland &
    Wroth 1974); each zone's Δ/L is measured from its own chord over its own length.
    ``relative_deflection`` and ``deflection_ratio`` are of the governing zone
    (``zone``: its kind and ends; ``zone_length`` its length), ``sagging_ratio`` the
    largest sagging Δ/L and ``hogging_ratio`` the largest hogging one (negative; NaN
    when the line has no zone of that kind); ``angular_strain`` the largest angular
    strain α (EN 1997-1:2004 Fig. H.1; + sagging).
    """

    ids: tuple[tuple[str, ...], ...]
    length: np.ndarray  # [m]
    relative_deflection: np.ndarray  # Δ [m], + sagging, − hogging
    deflection_ratio: np.ndarray  # Δ/L
    limit: tuple[str, ...]
    limit_value: np.ndarray
    limit_source: tuple[str, ...]
    utilisation: np.ndarray
    passed: np.ndarray
    angular_distortion: np.ndarray | None = None
    zone: tuple[str, ...] = ()
    zone_length: np.ndarray | None = None
    sagging_ratio: np.ndarray | None = None
    hogging_ratio: np.ndarray | None = None
    angular_strain: np.ndarray | None = None


@dataclass(frozen=True)
class Checks:
    """Outcome of the movement checks.

    ``footing_passed`` (n_f,) and ``footing_reasons`` (n_f,) say, per footing, whether
    its total settlement and tilt pass and why not; ``building_tilt`` [rad] and
    ``building_tilt_direction`` [deg from east, direction of steepest descent]
    come from the least-squares plane through the footing settlements.
    ``criteria`` names the set; ``sources`` lists every source cited.
    """

    criteria: str
    sources: tuple[str, ...]
    pairs: PairChecks
    lines: LineChecks | None
    footing_passed: np.ndarray
    footing_reasons: tuple[str, ...]
    footing_limit_total: float
    footing_limit_source: str
    building_tilt: float
    building_tilt_direction: float
    checked_after: float = 0.0
    #: per footing: "pass", "fail", or "beyond_range" (settlement on loading over
    #: 0.1 B: outside the methods' range, bearing failure likely)
    footing_status: tuple[str, ...] = ()
    #: per footing: "pad", "strip" or "raft" (:func:`sitesettle.site.foundation_kind`)
    footing_kind: tuple[str, ...] = ()
    #: per footing: its total-settlement limit [m] (NaN: none for its kind)
    footing_limit: np.ndarray | None = None
    #: the set's limit on the building's tilt [rad] (NaN: none), its source, the outcome
    building_tilt_limit: float = float("nan")
    building_tilt_source: str = ""
    building_tilt_passed: bool = True
    #: how the building's rigid-body tilt entered β ("both", "kept", "removed")
    rigid_tilt: str = "kept"

    @property
    def beyond_range(self) -> tuple[int, ...]:
        """Indices of footings outside the methods' range (bearing failure likely)."""
        return tuple(i for i, st in enumerate(self.footing_status) if st == "beyond_range")

    @property
    def all_passed(self) -> bool:
        """True when every footing, pair, structure line and the building's tilt pass."""
        ok = bool(np.all(self.footing_passed)) and bool(np.all(self.pairs.passed))
        ok = ok and bool(self.building_tilt_passed)
        if self.lines is not None:
            ok = ok and bool(np.all(self.lines.passed))
        return ok


@dataclass(frozen=True)
class Results:
    """Per-footing settlements over time, traces, the map and the checks.

    Settlement arrays are (n_footings, n_times) [m] at the footing level (mean of
    the characteristic points for rigid footings, centre for flexible ones; for a
    strip, its station that settles most at the design life).
    ``total = immediate + creep + consolidation + secondary = own + neighbours``:
    ``immediate`` is the settlement on loading (granular strata and undrained clay),
    ``creep`` the granular time-dependent part (Schmertmann's C2, Burland &
    Burbidge's ft, beyond 1).
    ``point_total`` (n_footings, n_points, n_times) keeps each evaluation point;
    ``station_xy`` (n_footings, n_stations, 2) and ``station_total`` the stations
    (one per pad: its centre and its value; along a strip, one per segment).
    ``influence_depth`` is where the integration stopped (the deepest of the
    footing's points), ``significant_depth`` the deepest point where Δσz ≥
    ``influence_fraction``·σ'v0 (reported, never used to drop ground by default).
    """

    site: Site
    times: np.ndarray
    design_life_index: int
    immediate: np.ndarray
    consolidation: np.ndarray
    secondary: np.ndarray
    own: np.ndarray
    neighbours: np.ndarray
    point_xy: np.ndarray  # (n_f, n_points, 2)
    point_total: np.ndarray  # (n_f, n_points, n_times)
    tilt: np.ndarray  # (n_f,) [rad] at the design life
    tilt_direction: np.ndarray  # (n_f,) [deg from east] direction of steepest descent
    net_pressure: np.ndarray  # (n_f,) full service [kPa]
    sustained_net_pressure: np.ndarray  # (n_f,) [kPa]
    influence_depth: np.ndarray  # (n_f,) depth below ground where integration stopped [m]
    methods: tuple[str, ...]  # per footing, e.g. "schmertmann + consolidation"
    outside_hull: np.ndarray  # (n_f,) bool: footing centre outside the boreholes' hull
    traces: dict[str, tuple[Trace, ...]]
    map: SettlementMap | None = None
    checks: Checks | None = None
    warnings: tuple[str, ...] = field(default_factory=tuple)
    creep: np.ndarray | None = None
    significant_depth: np.ndarray | None = None
    station_xy: np.ndarray | None = None
    station_total: np.ndarray | None = None
    points: QueryResults | None = None
    #: what the numbers are: load, time and method basis (one line each)
    basis: tuple[str, ...] = ()

    @property
    def total(self) -> np.ndarray:
        """Total settlement (n_footings, n_times) [m]."""
        out = self.immediate + self.consolidation + self.secondary
        return out if self.creep is None else out + self.creep

    @property
    def ids(self) -> tuple[str, ...]:
        """Footing ids in order."""
        return tuple(f.id for f in self.site.footings)

    @property
    def member_ids(self) -> tuple[str, ...]:
        """Ids of everything a pair may join: the footings, then the query points."""
        return self.ids + (self.points.ids if self.points is not None else ())

    @property
    def member_total(self) -> np.ndarray:
        """(n, n_times) total settlement of every member [m]: footings, then query points."""
        if self.points is None:
            return self.total
        return np.concatenate([self.total, self.points.total])

    @property
    def member_xy(self) -> np.ndarray:
        """(n, 2) plan position of every member [m]: footing centroids, then query points."""
        xy = np.array([[f.x, f.y] for f in self.site.footings], dtype=float).reshape(-1, 2)
        if self.points is not None:
            xy = np.concatenate([xy, np.asarray(self.points.xy, float).reshape(-1, 2)])
        return xy

    def at_design_life(self, name: str = "total") -> np.ndarray:
        """One settlement array (``"total"``, ``"own"``…) at the design life [m]."""
        return getattr(self, name)[:, self.design_life_index]
