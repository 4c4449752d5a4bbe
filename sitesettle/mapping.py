"""Plan grids, contour levels, contour lines and sections: pure geometry, no figures.

This module draws nothing and never imports matplotlib. Contour lines are traced
with :mod:`contourpy`, the contouring library that matplotlib itself depends on
(so it is always installed with sitesettle); the lines come back as shapely
LineStrings in site coordinates, ready for the GeoPackage and the figures.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
import shapely

from sitesettle.results import SettlementMap
from sitesettle.site import Footing

#: mantissas of the "round" steps of contour intervals, scale bars and grids
#: (1, 2, 2.5, 5 × 10^k: common drafting practice)
NICE_STEPS: tuple[float, ...] = (1.0, 2.0, 2.5, 5.0)
#: the automatic map spacing is about this fraction of the larger plan extent
GRID_EXTENT_FRACTION = 1.0 / 60.0
#: the automatic map spacing is never finer than this [m]
GRID_MIN_SPACING = 0.5
#: at most this many grid lines along each axis: a wider map gets a coarser spacing
#: (a design choice bounding the map's cost at 250 × 250 points)
GRID_MAX_LINES = 250


def nice_step(value: float, *, up: bool = True) -> float:
    """A round number (1, 2, 2.5 or 5 × 10^k) near ``value``.

    Parameters
    ----------
    value : float
        A positive number.
    up : bool, optional
        True: the smallest round number ≥ ``value``; False: the nearest one
        (on a log scale).

    Examples
    --------
    >>> nice_step(3.2)
    5.0
    >>> nice_step(0.021)
    0.025
    >>> nice_step(3.2, up=False)
    2.5
    """
    if not (value > 0.0 and math.isfinite(value)):
        raise ValueError(f"a round step needs a positive finite value, not {value!r}")
    exponent = math.floor(math.log10(value))
    candidates = [m * 10.0**e for e in (exponent - 1, exponent, exponent + 1) for m in NICE_STEPS]
    candidates = [_tidy(c) for c in candidates]
    if up:
        return min(c for c in candidates if c >= value * (1.0 - 1e-12))
    return min(candidates, key=lambda c: abs(math.log(c / value)))


def _tidy(x: float) -> float:
    """Remove binary noise from a decimal number (0.30000000000000004 → 0.3)."""
    return float(f"{x:.12g}")


def contour_levels(values: np.ndarray | Sequence[float], *, max_levels: int = 12) -> np.ndarray:
    """Round contour levels spanning ``values`` (settlements in mm).

    The interval is the smallest of 1, 2, 2.5, 5 × 10^k that gives at most
    ``max_levels`` levels inside [min, max] of the finite values; the levels are
    its multiples inside that range.

    Parameters
    ----------
    values : array_like
        Settlements [mm] (any shape; NaN ignored).
    max_levels : int, optional
        The most levels returned (at least 1).

    Returns
    -------
    numpy.ndarray
        Increasing levels [mm]; empty when the finite values have no spread.

    Examples
    --------
    >>> contour_levels([3.2, 41.7]).tolist()
    [5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0]
    >>> contour_levels([0.0, 0.9], max_levels=5).tolist()
    [0.0, 0.2, 0.4, 0.6, 0.8]
    """
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    if v.size == 0 or max_levels < 1:
        return np.array([], dtype=float)
    lo, hi = float(v.min()), float(v.max())
    if not hi > lo:
        return np.array([], dtype=float)
    # any step below spread / (max_levels + 1) gives too many levels: start there, go up
    step = nice_step((hi - lo) / (max_levels + 1))
    # a level within 1e-9 (relative to the values, at least 1e-9 mm) of the range
    # counts as inside it: binary noise, not a level beyond the data
    slack_lo, slack_hi = 1e-9 * max(1.0, abs(lo)), 1e-9 * max(1.0, abs(hi))
    while True:
        k = np.arange(math.ceil((lo - slack_lo) / step), math.floor((hi + slack_hi) / step) + 1)
        if k.size <= max_levels:
            break
        step = nice_step(step * 1.0001)
    return np.array([_tidy(float(i) * step) for i in k], dtype=float)


def contour_lines(
    settlement_map: SettlementMap, levels: np.ndarray | Sequence[float]
) -> list[tuple[float, shapely.LineString]]:
    """Contour lines of a settlement map at the given levels.

    Parameters
    ----------
    settlement_map : SettlementMap
        Grid lines ``x`` (nx,), ``y`` (ny,) [m] and ``settlement`` (ny, nx) [m].
    levels : array_like
        Levels [mm] (see :func:`contour_levels`).

    Returns
    -------
    list of (float, shapely.LineString)
        One entry per connected line: its level [mm] and its plan geometry [m],
        in order of level. NaN cells are left out of the contouring.
    """
    import contourpy

    z = np.asarray(settlement_map.settlement, dtype=float) * 1000.0
    x = np.asarray(settlement_map.x, dtype=float)
    y = np.asarray(settlement_map.y, dtype=float)
    if z.shape != (y.size, x.size):
        raise ValueError(f"settlement map shape {z.shape} is not (ny, nx) = {(y.size, x.size)}")
    if z.size == 0 or not np.isfinite(z).any() or x.size < 2 or y.size < 2:
        return []
    gen = contourpy.contour_generator(
        x, y, np.ma.masked_invalid(z), name="serial", line_type=contourpy.LineType.Separate
    )
    out: list[tuple[float, shapely.LineString]] = []
    for level in levels:
        for segment in gen.lines(float(level)):
            if len(segment) >= 2:
                out.append((float(level), shapely.LineString(np.asarray(segment, dtype=float))))
    return out


def plan_extent(footings: Sequence[Footing]) -> tuple[float, float, float, float]:
    """(xmin, ymin, xmax, ymax) [m] of all footing outlines."""
    if not footings:
        raise ValueError("no footings: the plan has no extent")
    xy = np.concatenate([np.asarray(f.outline, dtype=float).reshape(-1, 2) for f in footings])
    return (
        float(xy[:, 0].min()),
        float(xy[:, 1].min()),
        float(xy[:, 0].max()),
        float(xy[:, 1].max()),
    )


def default_grid(
    footings: Sequence[Footing], spacing: float = 0.0, margin: float = 5.0
) -> tuple[np.ndarray, np.ndarray]:
    """Grid lines of a settlement map covering the plan and a margin.

    Parameters
    ----------
    footings : sequence of Footing
        The plan.
    spacing : float, optional
        Grid spacing [m]; 0 (or less) chooses it: about 1/60 of the larger plan
        extent, rounded to a round number (1, 2, 2.5, 5 × 10^k), at least 0.5 m.
    margin : float, optional
        Distance beyond the outermost footing edges [m].

    A spacing that would give more than :data:`GRID_MAX_LINES` lines along an
    axis is coarsened to the next round number that does not.

    Returns
    -------
    x, y : numpy.ndarray
        Increasing grid lines [m], multiples of the spacing.

    Examples
    --------
    >>> import numpy as np
    >>> from sitesettle.site import Footing
    >>> sq = np.array([[0.0, 0.0], [30.0, 0.0], [30.0, 12.0], [0.0, 12.0]])
    >>> f = Footing("F1", sq, "rectangle", 15.0, 6.0, 12.0, 30.0, 0.0, 1.0, 100.0)
    >>> x, y = default_grid([f], 0.0, 2.0)
    >>> float(x[1] - x[0]), float(x[0]), float(x[-1]), float(y[0]), float(y[-1])
    (0.5, -2.0, 32.0, -2.0, 14.0)
    """
    xmin, ymin, xmax, ymax = plan_extent(footings)
    if not spacing > 0.0:
        extent = max(xmax - xmin, ymax - ymin, 1e-9)
        spacing = max(nice_step(extent * GRID_EXTENT_FRACTION, up=False), GRID_MIN_SPACING)
    margin = max(float(margin), 0.0)
    widest = max(xmax - xmin, ymax - ymin) + 2.0 * margin
    if widest / spacing + 2 > GRID_MAX_LINES:
        spacing = nice_step(widest / (GRID_MAX_LINES - 3), up=True)

    def lines(lo: float, hi: float) -> np.ndarray:
        i0 = math.floor((lo - margin) / spacing + 1e-9)
        i1 = math.ceil((hi + margin) / spacing - 1e-9)
        return np.array([_tidy(i * spacing) for i in range(i0, i1 + 1)], dtype=float)

    return lines(xmin, xmax), lines(ymin, ymax)


@dataclass(frozen=True)
class SectionFooting:
    """A footing cut by a section: centre distance and width along the line, base depth [m]."""

    id: str
    distance: float
    width: float
    depth: float
    #: settlement at the design life [m], drawn when finite
    settlement: float = math.nan


@dataclass(frozen=True)
class Section:
    """A vertical section through the stratigraphy along a straight plan line.

    The analysis fills it; :func:`sitesettle.plots.section_figure` draws it.

    Attributes
    ----------
    start, end : tuple[float, float]
        Plan ends of the line [m].
    distance : numpy.ndarray
        (n,) distances along the line from ``start`` [m], increasing.
    strata : tuple[str, ...]
        Stratum names, top-down (the site's order).
    tops : numpy.ndarray
        (n_strata, n) depth of each stratum's top at each distance [m]; a stratum
        that is absent has zero thickness there (its top equals the next one's)
        or NaN. The bottom of the last stratum is ``bottom``.
    bottom : float
        Depth of the bottom of the section [m].
    water_depth : numpy.ndarray
        (n,) water-table depth [m]; inf where there is none.
    footings : tuple[SectionFooting, ...]
        Footings on the line (usually the two of a pair).
    behaviours : tuple[str, ...]
        ``"granular"``, ``"cohesive"`` or ``"rigid"`` per stratum (optional; the
        figure uses it for the fill pattern).
    title : str
        What the section is (``"Section A–B through C3 and C4"``).
    """

    start: tuple[float, float]
    end: tuple[float, float]
    distance: np.ndarray
    strata: tuple[str, ...]
    tops: np.ndarray
    bottom: float
    water_depth: np.ndarray
    footings: tuple[SectionFooting, ...] = ()
    behaviours: tuple[str, ...] = field(default_factory=tuple)
    title: str = ""

    def boundaries(self) -> np.ndarray:
        """(n_strata + 1, n) top depths with NaN filled and the bottom appended [m].

        Depths are made non-decreasing downward so that every band has a
        thickness ≥ 0.
        """
        tops = np.asarray(self.tops, dtype=float).reshape(len(self.strata), -1)
        n = tops.shape[1]
        out = np.vstack([tops, np.full((1, n), float(self.bottom))])
        for i in range(out.shape[0] - 2, -1, -1):
            out[i] = np.where(np.isfinite(out[i]), out[i], out[i + 1])
        out = np.maximum.accumulate(np.clip(out, 0.0, None), axis=0)
        return np.minimum(out, float(self.bottom))
