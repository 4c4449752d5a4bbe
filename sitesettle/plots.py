"""Figures of the results: plan, contour map, settlement with time, section.

The public functions :func:`plan`, :func:`contours`, :func:`history` and
:func:`section` draw on a given matplotlib ``ax`` (or on a new figure) and return
the Axes they drew on, so a figure can be composed from several of them; the
results folder's PNG files are made by the same calls. ``plan_figure`` and the
other ``*_figure`` functions return the figure instead. None calls ``show()``.
matplotlib is imported inside the functions with the Agg backend, so importing
this module costs nothing and needs no display.

Visual language (our own): settlement runs on the perceptually uniform *cividis*
colour map (dark blue = little, yellow = much, readable in grey and by colour-blind
readers); anything that fails a check is drawn in :data:`FAIL_COLOUR`, a magenta
that cividis never uses, with thick lines; passing pairs are thin grey lines.
Settlement axes point downward, as the ground moves. User text (ids, names) is
escaped so that a ``$`` never starts matplotlib mathtext.
"""

from __future__ import annotations

import math
import textwrap

import numpy as np

from sitesettle.mapping import Section, contour_levels, nice_step, plan_extent
from sitesettle.results import Results

#: colour map of settlement
SETTLEMENT_CMAP = "cividis"
#: failing footings and pairs (not a colour of the settlement map)
FAIL_COLOUR = "#d4148c"
#: passing pairs
PAIR_COLOUR = "#8c8c8c"
#: water table
WATER_COLOUR = "#1f6fd1"
#: stratum fills by behaviour: (face colours to cycle, hatch)
STRATUM_STYLE = {
    "granular": (("#e9d8a6", "#dcc48e", "#f1e6c4"), ".."),
    "cohesive": (("#b7c9b0", "#9fb7a4", "#c9d6c1"), "--"),
    "rigid": (("#9e9e9e", "#8a8a8a"), "xx"),
    "": (("#d9d9d9", "#c6c6c6"), ""),
}
#: the most footings whose ids are written on the plan
MAX_LABELS = 300
#: boreholes and cone soundings on plans and sections: (marker, colour)
BOREHOLE_STYLE = ("o", "#b5121b")
SOUNDING_STYLE = ("^", "#1a7f37")
#: a borehole or sounding is shown on the section when it lies this close to the
#: line, as a fraction of the section's length (at least SECTION_CORRIDOR_MIN m)
SECTION_CORRIDOR = 0.15
SECTION_CORRIDOR_MIN = 5.0
#: how many footings the settlement-time figure shows
TIME_FIGURE_FOOTINGS = 5


def _plt():
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    return plt


#: user text longer than this is cut (with an ellipsis) in figures, so a very long
#: project name or id cannot squeeze the axes away
MAX_LABEL = 60


def _esc(text: object, limit: int = MAX_LABEL) -> str:
    """User text safe for a figure: shortened to ``limit`` characters, ``$`` drawn as a dollar."""
    text = str(text)
    if len(text) > limit:
        text = text[: limit - 1] + "…"
    return text.replace("$", r"\$")


def _settlement_unit(units: str) -> tuple[float, str]:
    """(factor from m, label) of settlement in the figures."""
    return (1000.0 / 25.4, "in") if units == "us" else (1000.0, "mm")


def _length_unit(units: str) -> tuple[float, str]:
    return (1.0 / 0.3048, "ft") if units == "us" else (1.0, "m")


def _new_axes(ax, figsize):
    plt = _plt()
    if ax is not None:
        return ax.figure, ax
    fig, ax = plt.subplots(figsize=figsize, layout="constrained")
    return fig, ax


def _failing(results: Results) -> tuple[np.ndarray, np.ndarray]:
    """(footing failed (n,), pair failed (k,)) as bool arrays."""
    n = len(results.site.footings)
    if results.checks is None:
        return np.zeros(n, bool), np.zeros(0, bool)
    return ~np.asarray(results.checks.footing_passed, bool), ~np.asarray(
        results.checks.pairs.passed, bool
    )


def _design_life_label(results: Results) -> str:
    t = float(results.times[results.design_life_index])
    return f"{t:g} yr"


def _add_north_arrow(ax) -> None:
    ax.annotate(
        "",
        xy=(0.955, 0.95),
        xytext=(0.955, 0.85),
        xycoords="axes fraction",
        arrowprops=dict(arrowstyle="-|>,head_length=0.6,head_width=0.3", lw=1.6, color="black"),
    )
    ax.text(
        0.955,
        0.955,
        "N",
        transform=ax.transAxes,
        ha="center",
        va="bottom",
        fontsize=10,
        fontweight="bold",
    )


def _add_scale_bar(ax, length_label: str) -> None:
    from matplotlib.patches import Rectangle

    x0, x1 = ax.get_xlim()
    y0, y1 = ax.get_ylim()
    span = abs(x1 - x0)
    bar = nice_step(span / 5.0, up=False)
    h = 0.012 * abs(y1 - y0)
    bx, by = min(x0, x1) + 0.04 * span, min(y0, y1) + 0.04 * abs(y1 - y0)
    for k in range(4):
        ax.add_patch(
            Rectangle(
                (bx + k * bar / 4, by),
                bar / 4,
                h,
                facecolor="black" if k % 2 == 0 else "white",
                edgecolor="black",
                lw=0.8,
                zorder=6,
            )
        )
    ax.text(bx, by + 1.6 * h, "0", ha="center", va="bottom", fontsize=7, zorder=6)
    ax.text(
        bx + bar,
        by + 1.6 * h,
        f"{bar:g} {length_label}",
        ha="center",
        va="bottom",
        fontsize=7,
        zorder=6,
    )


def _set_plan_limits(ax, results: Results, L: float, pad_fraction: float = 0.08) -> None:
    xmin, ymin, xmax, ymax = (v * L for v in plan_extent(results.site.footings))
    pad = pad_fraction * max(xmax - xmin, ymax - ymin, 1.0)
    ax.set_xlim(xmin - pad, xmax + pad)
    ax.set_ylim(ymin - 1.6 * pad, ymax + 1.6 * pad)  # room for the scale bar and the north arrow
    ax.set_aspect("equal")


def _footing_patches(results: Results, L: float):
    from matplotlib.patches import Polygon

    return [Polygon(np.asarray(f.outline, float) * L, closed=True) for f in results.site.footings]


def _place_axes(fig) -> None:
    """Put every axes where the next draw will (layout engine, then aspect), without drawing.

    The same steps as ``Figure.draw`` takes before it renders (aspect, the layout
    engine, aspect again), so sizes measured on the axes afterwards are those of the
    saved figure, at the cost of the layout alone rather than a full render.
    """
    renderer = fig.canvas.get_renderer()

    def aspect():
        for a in fig.axes:
            loc = a.get_axes_locator()
            a.apply_aspect(loc(a, renderer) if loc else None)

    aspect()
    engine = fig.get_layout_engine()
    if fig.axes and engine is not None:
        try:
            engine.execute(fig)
        except ValueError:  # as Figure.draw: a layout that cannot be made is skipped
            pass
    aspect()


def _label_footings(ax, results: Results, L: float, *, only=None, fontsize: float = 7.0) -> None:
    """Write footing ids beside the footings where they are legible."""
    import matplotlib.patheffects as pe

    fs = results.site.footings
    if len(fs) > MAX_LABELS and only is None:
        return
    fig = ax.figure
    _place_axes(fig)
    bbox = ax.get_window_extent()
    x0, x1 = ax.get_xlim()
    points_per_unit = bbox.width / abs(x1 - x0) * 72.0 / fig.dpi
    xy = np.array([[f.x, f.y] for f in fs]) * L
    if len(fs) > 1:
        d = np.hypot(*(xy[:, None, :] - xy[None, :, :]).transpose(2, 0, 1))
        np.fill_diagonal(d, np.inf)
        nearest = d.min(axis=1) * points_per_unit
    else:
        nearest = np.array([np.inf])
    for i, f in enumerate(fs):
        if only is not None and not only[i]:
            continue
        if nearest[i] < 2.2 * fontsize and (only is None):
            continue  # too crowded to read
        half = 0.5 * float(np.ptp(np.asarray(f.outline, float)[:, 1])) * L
        ax.text(
            f.x * L,
            f.y * L + half,
            _esc(f.id),
            ha="center",
            va="bottom",
            fontsize=fontsize,
            zorder=7,
            path_effects=[pe.withStroke(linewidth=2.2, foreground="white")],
        )


def _investigation(ax, site, L: float, handles: list) -> None:
    """Boreholes and cone soundings on a plan, marked and named."""
    import matplotlib.patheffects as pe
    from matplotlib.lines import Line2D

    for holes, (marker, colour), label in (
        (site.boreholes, BOREHOLE_STYLE, "borehole"),
        (site.soundings, SOUNDING_STYLE, "cone sounding"),
    ):
        if not holes:
            continue
        xy = np.array([[b.x, b.y] for b in holes], float) * L
        ax.scatter(
            xy[:, 0],
            xy[:, 1],
            marker=marker,
            s=42,
            facecolors="white",
            edgecolors=colour,
            linewidths=1.6,
            zorder=8,
            label=f"_{label}",
        )
        for b, (x, y) in zip(holes, xy):
            ax.annotate(
                _esc(b.id),
                (x, y),
                xytext=(5, -9),
                textcoords="offset points",
                fontsize=7,
                color=colour,
                zorder=9,
                path_effects=[pe.withStroke(linewidth=2.0, foreground="white")],
            )
        handles.append(
            Line2D(
                [],
                [],
                marker=marker,
                lw=0,
                markerfacecolor="white",
                markeredgecolor=colour,
                markeredgewidth=1.6,
                label=label,
            )
        )


def _limit_on_colourbar(cb, results: Results, S: float, su: str) -> None:
    """Mark the total-settlement limit on a colour bar (a line and its value)."""
    if results.checks is None:
        return
    lim = float(results.checks.footing_limit_total) * S
    if not math.isfinite(lim):
        return
    lo, hi = cb.norm.vmin, cb.norm.vmax
    if not (lo <= lim <= hi):
        return
    cb.ax.axhline(lim, color=FAIL_COLOUR, lw=2.2, zorder=5)
    cb.ax.text(
        -0.15,
        lim,
        f"limit {lim:g} {su} ",
        transform=cb.ax.get_yaxis_transform(),
        ha="right",
        va="center",
        fontsize=7,
        color=FAIL_COLOUR,
        fontweight="bold",
    )


def _limit_value(results: Results, S: float) -> float:
    if results.checks is None:
        return math.nan
    return float(results.checks.footing_limit_total) * S


def _values_on_footings(ax, results: Results, L: float, S: float, su: str) -> None:
    """Write each footing's total settlement at its centre where it is legible."""
    import matplotlib.patheffects as pe

    fs = results.site.footings
    if not fs or len(fs) > MAX_LABELS:
        return
    total = results.at_design_life() * S
    fig = ax.figure
    bbox = ax.get_window_extent()
    x0, x1 = ax.get_xlim()
    per_unit = bbox.width / abs(x1 - x0) * 72.0 / fig.dpi  # points per plan unit
    dec = 2 if su == "in" else 1
    for f, v in zip(fs, total):
        if not math.isfinite(v):
            continue
        size = min(f.width, f.length) * L * per_unit
        fontsize = 6.0 if size > 18 else 5.0
        if size < 9 and len(fs) > 60:
            continue
        ax.text(
            f.x * L,
            f.y * L,
            f"{v:.{dec}f}",
            ha="center",
            va="center",
            fontsize=fontsize,
            zorder=7,
            color="black",
            path_effects=[pe.withStroke(linewidth=1.6, foreground="white")],
        )


def plan(results: Results, ax=None, *, units: str = "si"):
    """Plan of the footings to scale, coloured by total settlement at the design life.

    Each footing carries its settlement; boreholes and cone soundings are marked
    and named; the total-settlement limit is marked on the colour bar. Failing
    footings get a thick outline and failing pairs a thick line, both in
    :data:`FAIL_COLOUR`; passing pairs are thin grey lines. A legend, a north
    arrow (plan y axis = north) and a scale bar complete it.

    Parameters
    ----------
    results : Results
        What :func:`sitesettle.analyse` returned.
    ax : matplotlib.axes.Axes, optional
        Where to draw (a new figure when None).
    units : {"si", "us"}, optional
        mm and m, or in and ft.

    Returns
    -------
    matplotlib.axes.Axes
        The axes drawn on.
    """
    return plan_figure(results, ax=ax, units=units, _axes=True)


def plan_figure(results: Results, *, ax=None, units: str = "si", _axes: bool = False):
    """Plan of the footings to scale, coloured by total settlement at the design life.

    Failing footings get a thick outline and failing pairs a thick line, both in
    :data:`FAIL_COLOUR`; passing pairs are thin grey lines. A colour bar, a legend,
    a north arrow (plan y axis = north) and a scale bar complete it.
    """
    from matplotlib.collections import LineCollection, PatchCollection
    from matplotlib.colors import Normalize
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    fig, ax = _new_axes(ax, (9.0, 7.0))
    S, su = _settlement_unit(units)
    L, lu = _length_unit(units)
    total = results.at_design_life() * S
    bad_f, bad_p = _failing(results)
    finite = total[np.isfinite(total)]
    vmax = float(finite.max()) if finite.size else 1.0
    top = 1.0
    if vmax > 0:
        step = nice_step(vmax / 5.0)
        top = math.ceil(vmax / step - 1e-9) * step
    lim = _limit_value(results, S)
    if math.isfinite(lim) and lim > top and lim < 3 * max(top, 1e-12):
        top = lim * 1.05  # the limit stays on the colour bar
    norm = Normalize(vmin=0.0, vmax=top)

    xy = results.member_xy * L
    handles = []
    if results.checks is not None and len(results.checks.pairs.a):
        pc = results.checks.pairs
        segs = np.stack([xy[np.asarray(pc.a, int)], xy[np.asarray(pc.b, int)]], axis=1)
        ax.add_collection(
            LineCollection(segs[~bad_p], colors=PAIR_COLOUR, linewidths=0.8, zorder=1)
        )
        handles.append(Line2D([], [], color=PAIR_COLOUR, lw=0.8, label="checked pair, passes"))
        if bad_p.any():
            ax.add_collection(
                LineCollection(
                    segs[bad_p], colors=FAIL_COLOUR, linewidths=3.2, zorder=4, capstyle="round"
                )
            )
            handles.append(Line2D([], [], color=FAIL_COLOUR, lw=3.2, label="pair fails its limit"))

    for a in results.site.area_loads:  # fills, slabs and excavations, under the footings
        from matplotlib.patches import Polygon as _Poly

        dig = a.pressure < 0
        ax.add_patch(
            _Poly(np.asarray(a.outline, float) * L, closed=True, fill=True, zorder=0,
                  facecolor="#dfe8f0" if dig else "#f3ead7", edgecolor="#8a6d3b", lw=0.8,
                  ls="--", alpha=0.6)
        )
        cx, cy = np.asarray(a.outline, float).mean(axis=0) * L
        ax.text(cx, cy, _esc(a.name), fontsize=7, color="#8a6d3b", ha="center", va="center",
                zorder=0)
    if results.site.area_loads:
        handles.append(Patch(facecolor="#f3ead7", edgecolor="#8a6d3b", ls="--",
                             label="area load (excavation in blue)"))

    patches = PatchCollection(
        _footing_patches(results, L),
        cmap=SETTLEMENT_CMAP,
        norm=norm,
        edgecolor="#222222",
        linewidths=0.6,
        zorder=3,
    )
    patches.set_array(np.ma.masked_invalid(total))
    ax.add_collection(patches)
    if bad_f.any():
        from matplotlib.patches import Polygon

        for f, bad in zip(results.site.footings, bad_f):
            if bad:
                ax.add_patch(
                    Polygon(
                        np.asarray(f.outline, float) * L,
                        closed=True,
                        fill=False,
                        edgecolor=FAIL_COLOUR,
                        linewidth=2.6,
                        zorder=5,
                    )
                )
        handles.append(
            Patch(facecolor="none", edgecolor=FAIL_COLOUR, linewidth=2.6, label="footing fails")
        )
    if results.checks is None:
        handles.append(Patch(facecolor="none", edgecolor="none", label="no checks were run"))
    q = getattr(results, "points", None)
    if q is not None and len(q.ids):
        qxy = np.asarray(q.xy, float) * L
        qs = q.total[:, results.design_life_index]
        ax.scatter(
            qxy[:, 0],
            qxy[:, 1],
            c=qs * S,
            cmap=SETTLEMENT_CMAP,
            norm=norm,
            marker="D",
            s=36,
            edgecolors="#222222",
            linewidths=0.8,
            zorder=6,
        )
        for name, (x, y) in zip(q.ids, qxy):
            ax.annotate(
                _esc(name), (x, y), xytext=(4, 4), textcoords="offset points", fontsize=7, zorder=7
            )
        handles.append(
            Line2D(
                [],
                [],
                marker="D",
                color="#222222",
                lw=0,
                markerfacecolor="none",
                label="query point",
            )
        )

    _investigation(ax, results.site, L, handles)
    _set_plan_limits(ax, results, L)
    cb = fig.colorbar(patches, ax=ax, shrink=0.85, pad=0.02)
    cb.set_label(f"total settlement at {_design_life_label(results)} [{su}]")
    _limit_on_colourbar(cb, results, S, su)
    _label_footings(ax, results, L)
    _values_on_footings(ax, results, L, S, su)
    _add_north_arrow(ax)
    _add_scale_bar(ax, lu)
    ax.set_xlabel(f"x (east) [{lu}]")
    ax.set_ylabel(f"y (north) [{lu}]")
    ax.set_title(f"{_esc(results.site.name)} — plan, total settlement", loc="left", fontsize=11)
    ax.grid(True, color="#e6e6e6", lw=0.5, zorder=0)
    ax.set_axisbelow(True)
    if handles:
        ax.legend(
            handles=handles,
            loc="upper center",
            bbox_to_anchor=(0.5, -0.09),
            ncol=3,
            fontsize=8,
            frameon=False,
        )
    return ax if _axes else fig


def contours(results: Results, ax=None, *, units: str = "si"):
    """Filled contours of the settlement map with labelled lines, the footings, the
    boreholes and soundings, and the total limit on the colour bar.

    Without a map, the footing values are interpolated on their Delaunay triangles
    and the figure says so. Returns the Axes drawn on (a new figure when ``ax`` is None).
    """
    return contour_figure(results, ax=ax, units=units, _axes=True)


def contour_figure(results: Results, *, ax=None, units: str = "si", _axes: bool = False):
    """Filled contours of the settlement map with labelled lines and the footings.

    Without a map, the footing values are interpolated on their Delaunay triangles
    and the figure says so: such contours are not a computed settlement field.
    """
    from matplotlib.collections import PatchCollection

    fig, ax = _new_axes(ax, (9.0, 7.0))
    S, su = _settlement_unit(units)
    L, lu = _length_unit(units)
    m = results.map
    cmap = SETTLEMENT_CMAP
    filled = None
    if m is not None:
        z = np.asarray(m.settlement, float) * S
        levels = contour_levels(z)
        x, y = np.asarray(m.x, float) * L, np.asarray(m.y, float) * L
        if levels.size >= 2:
            step = levels[1] - levels[0]
            fill_levels = np.concatenate(
                [
                    [levels[0] - step] if np.nanmin(z) < levels[0] else [],
                    levels,
                    [levels[-1] + step] if np.nanmax(z) > levels[-1] else [],
                ]
            )
            filled = ax.contourf(
                x, y, np.ma.masked_invalid(z), levels=fill_levels, cmap=cmap, zorder=1
            )
            # the same contour generator (contourpy) as sitesettle.mapping.contour_lines uses for
            # site.gpkg; matplotlib places the labels in gaps along the lines
            cs = ax.contour(
                x,
                y,
                np.ma.masked_invalid(z),
                levels=levels,
                colors="black",
                linewidths=0.7,
                zorder=2,
            )
            ax.clabel(cs, fmt="%g", fontsize=7, inline=True, inline_spacing=3)
        method = f"map: {_esc(m.method, 400)}"
    else:
        method = (
            "no settlement map was computed: contours interpolated between footing values "
            "(not a computed field)"
        )
        xy = np.array([[f.x, f.y] for f in results.site.footings]) * L
        total = results.at_design_life() * S
        levels = contour_levels(total)
        ok = np.isfinite(total)
        if (
            ok.sum() >= 3
            and levels.size >= 2
            and np.linalg.matrix_rank(xy[ok] - xy[ok].mean(axis=0)) == 2
        ):
            import matplotlib.tri as mtri

            tri = mtri.Triangulation(xy[ok, 0], xy[ok, 1])
            step = levels[1] - levels[0]
            filled = ax.tricontourf(
                tri,
                total[ok],
                levels=np.concatenate([[levels[0] - step], levels, [levels[-1] + step]]),
                cmap=cmap,
                zorder=1,
            )
            cs = ax.tricontour(
                tri, total[ok], levels=levels, colors="black", linewidths=0.7, zorder=2
            )
            ax.clabel(cs, fmt="%g", fontsize=7)
    ax.add_collection(
        PatchCollection(
            _footing_patches(results, L),
            facecolor=(1, 1, 1, 0.55),
            edgecolor="black",
            linewidths=0.9,
            zorder=4,
        )
    )
    if m is not None and filled is not None:
        # the map's own extent: no blank band around the computed field
        ax.set_xlim(float(np.min(m.x)) * L, float(np.max(m.x)) * L)
        ax.set_ylim(float(np.min(m.y)) * L, float(np.max(m.y)) * L)
        ax.set_aspect("equal")
    else:
        _set_plan_limits(ax, results, L, pad_fraction=0.1)
    handles: list = []
    _investigation(ax, results.site, L, handles)
    if m is not None and filled is not None:  # the investigation may lie outside the map
        ax.set_xlim(float(np.min(m.x)) * L, float(np.max(m.x)) * L)
        ax.set_ylim(float(np.min(m.y)) * L, float(np.max(m.y)) * L)
    if handles:
        ax.legend(
            handles=handles,
            loc="upper center",
            bbox_to_anchor=(0.5, -0.09),
            ncol=2,
            fontsize=8,
            frameon=False,
        )
    if filled is not None:
        cb = fig.colorbar(filled, ax=ax, shrink=0.85, pad=0.02)
        cb.set_label(f"settlement at {_design_life_label(results)} [{su}]")
        _limit_on_colourbar(cb, results, S, su)
    _label_footings(ax, results, L)
    _add_north_arrow(ax)
    _add_scale_bar(ax, lu)
    ax.text(
        0.99,
        0.015,
        textwrap.fill(method, 60),
        transform=ax.transAxes,
        fontsize=8,
        ha="right",
        va="bottom",
        zorder=8,
        bbox=dict(boxstyle="round,pad=0.3", facecolor="white", edgecolor="#999999", alpha=0.95),
    )
    ax.set_xlabel(f"x (east) [{lu}]")
    ax.set_ylabel(f"y (north) [{lu}]")
    ax.set_title(f"{_esc(results.site.name)} — settlement contours", loc="left", fontsize=11)
    return ax if _axes else fig


def _worst_pair(results: Results) -> int | None:
    if results.checks is None or len(results.checks.pairs.a) == 0:
        return None
    pc = results.checks.pairs
    key = np.asarray(pc.utilisation, float)
    if not np.isfinite(key).any():
        key = np.asarray(pc.angular_distortion, float)
    return int(np.nanargmax(key)) if np.isfinite(key).any() else None


def _at_time(times: np.ndarray, values: np.ndarray, t: float) -> float:
    """``values`` at time ``t``, linear in log time between the computed times (0 at t = 0)."""
    if t <= 0:
        return 0.0
    lt = np.log(np.asarray(times, float))
    return float(np.interp(math.log(t), lt, np.asarray(values, float)))


def _downward(ax) -> None:
    """Settlement axis from 0 at the top, growing downward (as the ground moves)."""
    lo, hi = ax.get_ylim()
    ax.set_ylim(max(lo, hi, 0.0) * 1.05 or 1.0, 0.0)


def _stage_marks(results: Results) -> list[tuple[str, float]]:
    """(name, start) of each load stage that starts after time 0 (the default history:
    the live load just after checked_after)."""
    site = results.site
    if site.stages:
        return [(g.name, g.start) for g in site.stages if g.start > 0]
    for b in results.basis:
        if b.startswith("load history:") and "live load just after" in b:
            after = float(results.checks.checked_after) if results.checks is not None else 0.0
            if after > 0:
                return [("live load", after)]
    return []


def history(results: Results, ax=None, *, units: str = "si", pair_ax=None):
    """Settlement against log time of the worst footings, with the total limit.

    With ``pair_ax``, the worst pair's differential (on the checked basis) is drawn
    there too. Returns the Axes of the footings (a new figure when ``ax`` is None).
    """
    if ax is None:
        plt = _plt()
        _, ax = plt.subplots(figsize=(7.0, 4.6), layout="constrained")
    time_figure(results, ax=ax, units=units, pair_ax=pair_ax)
    return ax


def history_axes():
    """A new figure with the two panels of settlement_time.png: (footings, worst pair)."""
    plt = _plt()
    _, (ax1, ax2) = plt.subplots(1, 2, figsize=(11.0, 4.6), layout="constrained")
    return ax1, ax2


def time_figure(results: Results, *, ax=None, units: str = "si", pair_ax=None):
    """Settlement against log time for the worst footings, and the worst pair's differential.

    With ``ax`` given, the footings panel is drawn on it (and the pair panel on
    ``pair_ax`` when given). Returns the figure.
    """
    plt = _plt()
    S, su = _settlement_unit(units)
    times = np.asarray(results.times, float)
    total = results.total * S
    life = float(times[results.design_life_index])
    if ax is None:
        fig, (ax1, ax2) = plt.subplots(1, 2, figsize=(11.0, 4.6), layout="constrained")
    else:
        fig, ax1, ax2 = ax.figure, ax, pair_ax
    order = np.argsort(
        -np.nan_to_num(total[:, results.design_life_index], nan=-np.inf), kind="stable"
    )
    bad_f, _ = _failing(results)
    colours = plt.get_cmap("tab10")
    for k, i in enumerate(order[:TIME_FIGURE_FOOTINGS]):
        style = dict(lw=2.4 if bad_f[i] else 1.5, ls="-" if bad_f[i] else "--")
        ax1.plot(
            times,
            total[i],
            marker="o",
            ms=3.5,
            color=colours(k % 10),
            label=_esc(results.ids[i]) + (" (fails)" if bad_f[i] else ""),
            **style,
        )
    if results.checks is not None:
        lim = results.checks.footing_limit_total * S
        if math.isfinite(lim):
            ax1.axhline(lim, color=FAIL_COLOUR, lw=1.2, ls=":", label=f"limit {lim:g} {su}")
    stages = _stage_marks(results)
    for a in (ax1, ax2):
        if a is None:
            continue
        a.set_xscale("log")
        for name, start in stages:  # when each load stage starts (docs/methods.md §4.6)
            a.axvline(start, color="#8a6d3b", lw=0.8, ls="--", zorder=0)
            a.text(start, 0.02, f" {_esc(name)}", transform=a.get_xaxis_transform(),
                   fontsize=6.5, rotation=90, va="bottom", color="#8a6d3b")
        a.axvline(life, color="#555555", lw=0.8, ls="-.")
        a.text(
            life,
            1.0,
            " design life",
            transform=a.get_xaxis_transform(),
            fontsize=7,
            va="top",
            color="#555555",
        )
        a.grid(True, which="both", color="#e6e6e6", lw=0.5)
        a.set_xlabel("time since loading [yr] (log scale)")
    _downward(ax1)
    ax1.set_ylabel(f"total settlement [{su}]")
    ax1.set_title(
        f"worst {min(TIME_FIGURE_FOOTINGS, len(order))} footings", loc="left", fontsize=10
    )
    ax1.legend(fontsize=8, loc="lower left")
    if ax2 is not None:
        p = _worst_pair(results)
        if p is None:
            ax2.text(
                0.5, 0.5, "no pairs were checked", transform=ax2.transAxes, ha="center", va="center"
            )
        else:
            pc = results.checks.pairs
            a, b = int(pc.a[p]), int(pc.b[p])
            after = float(results.checks.checked_after)
            mids = results.member_ids
            label = f"|s({_esc(mids[a])}) − s({_esc(mids[b])})|"
            mt = results.member_total * S
            t_plot, rel = times, mt[a] - mt[b]
            if after > 0:
                # the check looks at the movement after `after` years only
                rel0 = _at_time(times, rel, after)
                keep = times > after
                t_plot = np.concatenate([[after], times[keep]])
                rel = np.concatenate([[rel0], rel[keep]]) - rel0
                label += f" after {after:g} yr"
            ax2.plot(t_plot, np.abs(rel), marker="s", ms=3.5, color="#333333", lw=1.8, label=label)
            measure = pc.limit_measure[p] if len(pc.limit_measure) > p else ""
            allowed = math.nan
            if measure == "angular_distortion":
                allowed = float(pc.limit_value[p]) * float(pc.span[p]) * S
            elif measure == "differential":
                allowed = float(pc.limit_value[p]) * S
            if math.isfinite(allowed):
                ax2.axhline(
                    allowed,
                    color=FAIL_COLOUR,
                    lw=1.2,
                    ls=":",
                    label=f"allowed {allowed:.3g} {su} ({_esc(pc.limit[p])})",
                )
            _downward(ax2)
            ax2.legend(fontsize=8, loc="lower left")
        ax2.set_ylabel(f"differential settlement [{su}]")
        ax2.set_title("worst pair", loc="left", fontsize=10)
    fig.suptitle(
        f"{_esc(results.site.name)} — settlement with time", x=0.01, ha="left", fontsize=11
    )
    return fig


def section(section: Section, ax=None, *, units: str = "si", site=None):
    """A vertical section: strata as bands, the water table, the footings at their true
    widths along the line and (given ``site``) the boreholes and soundings near the line.

    Returns the Axes drawn on (a new figure when ``ax`` is None).
    """
    return section_figure(section, ax=ax, units=units, site=site, _axes=True)


def _near_line(section: Section, holes) -> list[tuple[object, float, float]]:
    """(hole, distance along the line [m], offset from it [m]) of the holes near the line."""
    (x0, y0), (x1, y1) = section.start, section.end
    length = math.hypot(x1 - x0, y1 - y0)
    if length <= 0:
        return []
    ux, uy = (x1 - x0) / length, (y1 - y0) / length
    corridor = max(SECTION_CORRIDOR * length, SECTION_CORRIDOR_MIN)
    out = []
    for h in holes:
        along = (h.x - x0) * ux + (h.y - y0) * uy
        off = abs(-(h.x - x0) * uy + (h.y - y0) * ux)
        if -1e-9 <= along <= length + 1e-9 and off <= corridor:
            out.append((h, along, off))
    return out


def _hole_depth(h) -> float:
    if hasattr(h, "intervals"):
        return max((iv.bottom for iv in h.intervals), default=0.0)
    d = np.asarray(getattr(h, "depth", []), float)
    return float(d.max()) if d.size else 0.0


def section_figure(section: Section, *, ax=None, units: str = "si", site=None, _axes: bool = False):
    """A vertical section: strata as bands, the water table and the footings on the line.

    Returns the figure (:func:`section` returns the Axes)."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch, Polygon, Rectangle

    fig, ax = _new_axes(ax, (10.0, 5.0))
    L, lu = _length_unit(units)
    S, su = _settlement_unit(units)
    d = np.asarray(section.distance, float) * L
    bounds = section.boundaries() * L
    handles = []
    used: dict[str, int] = {}
    for i, name in enumerate(section.strata):
        beh = section.behaviours[i] if i < len(section.behaviours) else ""
        colours, hatch = STRATUM_STYLE.get(beh, STRATUM_STYLE[""])
        k = used.get(beh, 0)
        used[beh] = k + 1
        colour = colours[k % len(colours)]
        ax.fill_between(
            d,
            bounds[i],
            bounds[i + 1],
            facecolor=colour,
            edgecolor="#6b6b6b",
            hatch=hatch,
            linewidth=0.0,
            zorder=1,
        )
        ax.plot(d, bounds[i], color="#4d4d4d", lw=0.8, zorder=2)
        label = _esc(name) + (f" ({beh})" if beh else "")
        handles.append(Patch(facecolor=colour, edgecolor="#6b6b6b", hatch=hatch, label=label))
    ax.plot(d, np.zeros_like(d), color="black", lw=1.4, zorder=3)
    w = np.asarray(section.water_depth, float) * L
    if np.isfinite(w).any():
        ax.plot(d, np.where(np.isfinite(w), w, np.nan), color=WATER_COLOUR, lw=1.6, zorder=4)
        j = int(np.flatnonzero(np.isfinite(w))[len(np.flatnonzero(np.isfinite(w))) // 5])
        lift = 0.025 * (float(section.bottom) + 2.2) * L  # the triangle's tip on the water surface
        ax.plot([d[j]], [w[j] - lift], marker="v", color=WATER_COLOUR, ms=9, zorder=5)
        handles.append(Line2D([], [], color=WATER_COLOUR, lw=1.6, marker="v", label="water table"))
    for f in section.footings:
        x0, width, base = f.distance * L, f.width * L, f.depth * L
        thick = min(0.5 * L, 0.45 * base) if base > 0 else 0.3 * L
        ax.add_patch(
            Rectangle(
                (x0 - width / 2, base - thick),
                width,
                thick,
                facecolor="#5a5a5a",
                edgecolor="black",
                zorder=6,
            )
        )
        stub = max(width * 0.18, 0.25 * L)
        ax.add_patch(
            Polygon(
                [
                    [x0 - stub / 2, -0.6 * L],
                    [x0 + stub / 2, -0.6 * L],
                    [x0 + stub / 2, base - thick],
                    [x0 - stub / 2, base - thick],
                ],
                facecolor="#8a8a8a",
                edgecolor="black",
                zorder=6,
            )
        )
        label = _esc(f.id)
        if math.isfinite(f.settlement):
            label += f"\n{f.settlement * S:.1f} {su}"
        ax.text(x0, -0.7 * L, label, ha="center", va="bottom", fontsize=8, zorder=7)
    handles.append(Patch(facecolor="#5a5a5a", edgecolor="black", label="footing"))
    if site is not None:
        for holes, (marker, colour), label in (
            (site.boreholes, BOREHOLE_STYLE, "borehole (projected onto the line)"),
            (site.soundings, SOUNDING_STYLE, "cone sounding (projected onto the line)"),
        ):
            near = _near_line(section, holes)
            for h, along, off in near:
                xh = along * L
                zb = min(_hole_depth(h), float(section.bottom)) * L
                ax.plot([xh, xh], [0.0, zb], color=colour, lw=2.0, zorder=8)
                ax.plot([xh], [0.0], marker=marker, color=colour, ms=7, zorder=9, mfc="white")
                ax.text(
                    xh,
                    zb,
                    f" {_esc(h.id)}\n {off * L:.1f} {lu} off",
                    fontsize=7,
                    color=colour,
                    va="top",
                    ha="left",
                    zorder=9,
                )
            if near:
                handles.append(
                    Line2D([], [], color=colour, lw=2.0, marker=marker, mfc="white", label=label)
                )
    ax.set_xlim(float(d.min()), float(d.max()))
    ax.set_ylim(float(section.bottom) * L, -2.2 * L)
    ax.set_xlabel(f"distance along the section [{lu}]")
    ax.set_ylabel(f"depth below ground [{lu}]")
    title = section.title or "Section"
    (x0, y0), (x1, y1) = section.start, section.end
    ax.set_title(
        f"{_esc(title, 120)} — from ({x0 * L:.1f}, {y0 * L:.1f}) "
        f"to ({x1 * L:.1f}, {y1 * L:.1f}) {lu}",
        loc="left",
        fontsize=10,
    )
    ax.legend(
        handles=handles, loc="center left", bbox_to_anchor=(1.01, 0.5), fontsize=8, frameon=False
    )
    return ax if _axes else fig


#: colour map of a settlement difference, centred at 0: purple where B settles less,
#: orange where it settles more (a diverging map, readable by colour-blind readers)
DIFFERENCE_CMAP = "PuOr_r"
#: a check that B fails and A passed, and one that B passes and A failed
WORSE_COLOUR = FAIL_COLOUR
BETTER_COLOUR = "#0f8a7e"
#: how many of the largest changes are named on the difference map
DIFFERENCE_LABELS = 30


def difference_map(
    footings,
    pairs,
    outlines: dict,
    *,
    settlement: str = "mm",
    length: str = "m",
    ax=None,
):
    """Plan of B's footings coloured by the change of total settlement ΔS = S_B − S_A.

    The colour map (:data:`DIFFERENCE_CMAP`) is diverging and centred at 0, symmetric
    about it. Footings only in B are hatched, footings only in A are drawn as dashed
    outlines; a footing or pair whose check B fails and A passed is drawn in
    :data:`WORSE_COLOUR` with a thick line, one that got better in
    :data:`BETTER_COLOUR` (dashed for pairs); other pairs whose movement changed are
    thin grey lines. The footings with the largest changes are named.

    Parameters
    ----------
    footings, pairs : pandas.DataFrame
        The tables of :func:`sitesettle.compare.compare_footings` and
        :func:`~sitesettle.compare.compare_pairs`.
    outlines : dict
        Footing id → (n, 2) outline [plan units of ``length``].
    settlement : {"mm", "in"}, optional
        The settlement unit of the tables' columns.
    length : {"m", "ft"}, optional
        The length unit of the tables' columns and the outlines.
    ax : matplotlib.axes.Axes, optional
        Where to draw (a new figure when None).

    Returns
    -------
    matplotlib.axes.Axes
        The axes drawn on.
    """
    import matplotlib.patheffects as pe
    from matplotlib.collections import LineCollection, PatchCollection
    from matplotlib.colors import TwoSlopeNorm
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch, Polygon

    fig, ax = _new_axes(ax, (9.0, 7.0))
    S, L = settlement, length
    delta = footings[f"total_delta_{S}"].to_numpy(float)
    finite = np.abs(delta[np.isfinite(delta)])
    top = float(finite.max()) if finite.size and finite.max() > 0 else 1.0
    top = math.ceil(top / nice_step(top / 5.0) - 1e-9) * nice_step(top / 5.0)
    norm = TwoSlopeNorm(vmin=-top, vcenter=0.0, vmax=top)
    ids = [str(i) for i in footings["id"]]
    pres = footings["presence"].to_numpy(object)
    change = footings["change"].to_numpy(object)
    fx, fy = footings[f"x_{L}"].to_numpy(float), footings[f"y_{L}"].to_numpy(float)
    xy = {i: (x, y) for i, x, y in zip(ids, fx, fy)}
    handles = []

    segs, styles = [], []
    for _, r in pairs.iterrows():
        a, b = str(r["a"]), str(r["b"])
        if a not in xy or b not in xy:
            continue  # a query point: not on this plan
        if bool(r["changed"]):
            segs.append([xy[a], xy[b]])
            styles.append(r["change"] if r["change"] in ("worse", "better") else "changed")
    styles = np.array(styles, dtype=object)
    segs = np.array(segs, float).reshape(-1, 2, 2)
    spec = {
        "changed": dict(colors=PAIR_COLOUR, linewidths=0.8, zorder=1),
        "better": dict(colors=BETTER_COLOUR, linewidths=2.6, linestyles="--", zorder=4),
        "worse": dict(colors=WORSE_COLOUR, linewidths=3.2, zorder=4, capstyle="round"),
    }
    labels = {
        "changed": "pair whose movement changed",
        "better": "pair: B passes, A failed",
        "worse": "pair: B fails, A passed",
    }
    for style, kw in spec.items():
        m = styles == style
        if m.any():
            ax.add_collection(LineCollection(segs[m], **kw))
            handles.append(
                Line2D([], [], color=kw["colors"], lw=kw["linewidths"],
                       ls=kw.get("linestyles", "-"), label=labels[style])
            )

    shown = [i for i, p in zip(ids, pres) if p != "removed" and i in outlines]
    patches = PatchCollection(
        [Polygon(outlines[i], closed=True) for i in shown],
        cmap=DIFFERENCE_CMAP,
        norm=norm,
        edgecolor="#222222",
        linewidths=0.6,
        zorder=3,
    )
    values = np.array([d for i, d, p in zip(ids, delta, pres) if p != "removed" and i in outlines])
    patches.set_array(np.ma.masked_invalid(values))
    ax.add_collection(patches)
    for i, p, ch in zip(ids, pres, change):
        if i not in outlines:
            continue
        o = outlines[i]
        if p == "added":
            ax.add_patch(Polygon(o, closed=True, facecolor="white", edgecolor="#222222",
                                 hatch="////", lw=1.2, zorder=4))
        elif p == "removed":
            ax.add_patch(Polygon(o, closed=True, fill=False, edgecolor="#555555", ls="--",
                                 lw=1.2, zorder=4))
        elif ch in ("worse", "better"):
            ax.add_patch(Polygon(o, closed=True, fill=False, lw=2.6, zorder=5,
                                 edgecolor=WORSE_COLOUR if ch == "worse" else BETTER_COLOUR))
    if (pres == "added").any():
        handles.append(Patch(facecolor="white", edgecolor="#222222", hatch="////",
                             label="footing only in B (added)"))
    if (pres == "removed").any():
        handles.append(Patch(facecolor="none", edgecolor="#555555", ls="--",
                             label="footing only in A (removed)"))
    if (change == "worse").any():
        handles.append(Patch(facecolor="none", edgecolor=WORSE_COLOUR, lw=2.6,
                             label="footing: B fails, A passed"))
    if (change == "better").any():
        handles.append(Patch(facecolor="none", edgecolor=BETTER_COLOUR, lw=2.6,
                             label="footing: B passes, A failed"))

    everything = [outlines[i] for i in ids if i in outlines]
    if everything:
        pts = np.concatenate(everything)
        xmin, ymin = pts.min(axis=0)
        xmax, ymax = pts.max(axis=0)
        pad = 0.08 * max(xmax - xmin, ymax - ymin, 1.0)
        ax.set_xlim(xmin - pad, xmax + pad)
        ax.set_ylim(ymin - 1.6 * pad, ymax + 1.6 * pad)
    ax.set_aspect("equal")
    order = np.argsort(-np.where(np.isfinite(delta), np.abs(delta), -1.0), kind="stable")
    named = [ids[k] for k in order[:DIFFERENCE_LABELS] if np.isfinite(delta[k]) and delta[k] != 0]
    named += [i for i, p, ch in zip(ids, pres, change) if p != "both" or ch != "same"]
    for i in dict.fromkeys(named):
        if i in outlines:
            o = outlines[i]
            ax.text(float(o[:, 0].mean()), float(o[:, 1].max()), _esc(i), ha="center",
                    va="bottom", fontsize=7, zorder=7,
                    path_effects=[pe.withStroke(linewidth=2.2, foreground="white")])
    cb = fig.colorbar(patches, ax=ax, shrink=0.85, pad=0.02)
    cb.set_label(f"ΔS = S_B − S_A, total at the design life [{S}]")
    _add_north_arrow(ax)
    _add_scale_bar(ax, L)
    ax.set_xlabel(f"x (east) [{L}]")
    ax.set_ylabel(f"y (north) [{L}]")
    ax.set_title("Difference map: B's footings by change of settlement (B − A)", loc="left",
                 fontsize=11)
    ax.grid(True, color="#e6e6e6", lw=0.5, zorder=0)
    ax.set_axisbelow(True)
    if handles:
        ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.09), ncol=3,
                  fontsize=8, frameon=False)
    return ax
